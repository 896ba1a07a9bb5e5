//! A session: one simulation with its setup, sampling schedule and watchdog. The engine thread
//! and the headless runner both drive a session, so they step and sample identically.

use super::watchdog::{Alarm, Watchdog, non_finite};
use crate::analysis::eos_reference::RunState;
use crate::analysis::precision::{self, PrecisionTarget, TargetProgress};
use crate::analysis::{Evidence, SampleStore, StartChoice, analyse};
use crate::io::checkpoint::Checkpoint;
use crate::io::setup::{Duration, Ensemble, Length, Setup, SetupError, Start, Temperature};
use crate::io::start_file;
use crate::physics::{
    Observables, PotentialMode, Simulation, SimulationState, SpecError, Thermostat, UnitSystem,
};
use std::path::Path;

/// One simulation and what it was set up from.
pub struct Session {
    setup: Setup,
    sim: Simulation,
    watchdog: Watchdog,
    /// Every sample of the run so far (bounded), including those before a checkpoint.
    samples: SampleStore,
    /// The setup's precision targets in reduced units.
    targets: Vec<PrecisionTarget>,
    /// Whether the state the session started from (or was restored to) has been checked.
    start_checked: bool,
    /// Where the precision targets are judged from: the detected start, or one the user set.
    precision_start: StartChoice,
}

/// What one step produced.
#[derive(Clone, Debug, Default)]
pub struct StepOutcome {
    /// The sample, at sample steps.
    pub sample: Option<Observables>,
    /// Set when the watchdog fired.
    pub alarm: Option<Alarm>,
    /// Set at the sample where every precision target was found met (see
    /// [`precision::is_check_point`] for when they are checked).
    pub precision_met: Option<Vec<TargetProgress>>,
}

impl Session {
    /// Validates the setup and builds its start configuration.
    pub fn new(setup: Setup) -> Result<Session, SetupError> {
        let spec = setup.resolve_for_this_machine()?;
        let targets = setup.precision_targets_reduced()?;
        let mut sim = match &setup.start {
            Start::Lattice => Simulation::new(spec)?,
            Start::File { path } => {
                let units = setup.units();
                let angstrom = if units.has_real_units() {
                    units.sigma_angstrom()
                } else {
                    1.0
                };
                let (l, kinds, counts) = (spec.box_length(), spec.kinds.clone(), spec.counts.clone());
                let c = start_file::read(Path::new(path), &kinds, &counts, l, angstrom)?;
                Simulation::with_positions(spec, c.positions, c.types)?
            }
        };
        let mut samples = SampleStore::default();
        samples.push(&sim.observe());
        Ok(Session {
            setup,
            watchdog: Watchdog::new(&mut sim),
            sim,
            samples,
            targets,
            start_checked: false,
            precision_start: StartChoice::Automatic,
        })
    }

    /// Continues from a checkpoint.
    pub fn from_checkpoint(c: Checkpoint) -> Result<Session, SetupError> {
        // Setup, spec and state checked as strictly as a setup file; the spec carries live changes.
        c.check()?;
        c.setup.check_memory_available()?;
        let targets = c.setup.precision_targets_reduced()?;
        let mut sim = Simulation::from_state(c.spec, c.state)?;
        // A version 2 checkpoint has no samples: the statistics start at its step.
        let samples = c.samples.unwrap_or_else(|| {
            let mut s = SampleStore::default();
            s.push(&sim.observe());
            s
        });
        Ok(Session {
            setup: c.setup,
            watchdog: Watchdog::new(&mut sim),
            sim,
            samples,
            targets,
            start_checked: false,
            precision_start: StartChoice::Automatic,
        })
    }

    /// The setup, including live changes.
    pub fn setup(&self) -> &Setup {
        &self.setup
    }

    /// The simulation.
    pub fn simulation(&self) -> &Simulation {
        &self.sim
    }

    /// Mutable simulation (tests). The next [`Session::step`] checks the state it finds first.
    pub fn simulation_mut(&mut self) -> &mut Simulation {
        self.start_checked = false;
        self.watchdog.forget();
        &mut self.sim
    }

    /// Goes back to `state` (a rewind): the spec in force stays, the watchdog starts afresh,
    /// and the samples after the state's step are forgotten.
    pub fn restore(&mut self, state: SimulationState) -> Result<(), SpecError> {
        let spec = self.sim.spec().clone();
        let step = state.step;
        let mut sim = Simulation::from_state(spec, state)?;
        sim.set_move_bound(self.watchdog.bounds.max_move);
        self.sim = sim;
        self.watchdog.forget();
        self.start_checked = true;
        self.samples.truncate_after(step);
        Ok(())
    }

    /// The watchdog (its bounds).
    pub fn watchdog(&self) -> &Watchdog {
        &self.watchdog
    }

    /// Units of the reference species.
    pub fn units(&self) -> UnitSystem {
        self.setup.units()
    }

    /// A checkpoint of the present state.
    pub fn checkpoint(&self) -> Checkpoint {
        Checkpoint {
            // A run taken past `steps` (`--steps`) records how far it went.
            setup: Setup {
                steps: self.setup.steps.max(self.sim.step_count()),
                ..self.setup.clone()
            },
            spec: self.sim.spec().clone(),
            state: self.sim.state(),
            samples: Some(self.samples.clone()),
        }
    }

    /// Every sample so far (bounded; see [`SampleStore`]).
    pub fn samples(&self) -> &SampleStore {
        &self.samples
    }

    /// Judges the precision targets from `start` (the window's start set by hand; headless runs
    /// keep the detected start).
    pub fn set_precision_start(&mut self, start: StartChoice) {
        self.precision_start = start;
    }

    /// The precision targets in force, reduced units.
    pub fn precision_targets(&self) -> &[PrecisionTarget] {
        &self.targets
    }

    /// Replaces the precision targets (the setup records them too); validated as in a setup.
    pub fn set_precision_targets(
        &mut self,
        targets: Vec<crate::io::precision_setting::PrecisionSetting>,
    ) -> Result<(), SetupError> {
        let mut setup = self.setup.clone();
        setup.precision_targets = targets;
        self.targets = setup.precision_targets_reduced()?;
        self.setup = setup;
        Ok(())
    }

    /// True when a bath holds the temperature.
    pub fn thermostatted(&self) -> bool {
        !matches!(self.setup.ensemble, Ensemble::Nve)
    }

    /// The equilibration evidence of the run so far.
    pub fn evidence(&self, choice: StartChoice) -> Evidence {
        analyse(&self.samples, choice, self.thermostatted())
    }

    /// What the equation-of-state comparison needs to know of the run; `None` for mixtures,
    /// which the equation does not describe.
    pub fn eos_run_state(&self) -> Option<RunState> {
        let spec = self.sim.spec();
        (spec.kinds.len() == 1).then(|| RunState {
            density: self.sim.system().density(),
            bath_temperature: self.thermostatted().then_some(spec.temperature),
            single_species: true,
            shifted_force: spec.potential == PotentialMode::ShiftedForce,
        })
    }

    /// The sample of the present state.
    pub fn observe(&self) -> Observables {
        self.sim.observe()
    }

    /// Takes one step, checks it with the watchdog and samples at multiples of `sample_every`.
    /// Under a `temperature_ramp` the bath target is first set for the step about to be taken.
    ///
    /// The first call after the start (or after [`Session::simulation_mut`]) checks the state
    /// it finds before stepping: a start configuration with overlapping atoms is stopped at its
    /// own step, with no step taken, before the forces fling the atoms apart.
    pub fn step(&mut self) -> StepOutcome {
        if !self.start_checked {
            self.start_checked = true;
            if let Some(a) = self.watchdog.check(&self.sim) {
                return StepOutcome {
                    alarm: Some(a),
                    ..Default::default()
                };
            }
        }
        self.follow_ramp();
        let stepped = self.sim.step();
        let mut out = StepOutcome {
            alarm: self.watchdog.check(&self.sim),
            ..Default::default()
        };
        if stepped.is_err() && out.alarm.is_none() {
            out.alarm = Some(non_finite(&self.sim));
        }
        let lost = out.alarm.as_ref().is_some_and(|a| a.kind.is_blow_up());
        if !lost && self.sim.step_count().is_multiple_of(self.setup.sample_every) {
            let o = self.sim.observe();
            self.samples.push(&o);
            out.sample = Some(o);
            if out.alarm.is_none()
                && !self.targets.is_empty()
                && precision::is_check_point(self.samples.raw_samples())
            {
                let evidence = self.evidence(self.precision_start);
                let progress = precision::progress(&evidence, &self.targets);
                if precision::all_met(&evidence, &progress) {
                    out.precision_met = Some(progress);
                }
            }
        }
        out
    }

    /// Sets the thermostat's target to the ramp's value at the present step (while the ramp
    /// lasts; afterwards the target stays at its end).
    fn follow_ramp(&mut self) {
        let Some(r) = self.setup.temperature_ramp else {
            return;
        };
        let step = self.sim.step_count();
        if step > r.steps {
            return;
        }
        let Some(target) = self.setup.ramp_target(step) else {
            return;
        };
        let thermostat = match self.sim.spec().thermostat {
            Thermostat::StochasticRescale { tau, .. } => Thermostat::StochasticRescale { target, tau },
            Thermostat::Langevin { gamma, .. } => Thermostat::Langevin { target, gamma },
            Thermostat::None => return,
        };
        // The target is in range (the setup validated both ends), so this cannot fail.
        let _ = self.sim.set_thermostat(thermostat);
    }

    /// Changes the timestep; the setup records the new value in the unit given.
    pub fn set_timestep(&mut self, dt: Duration) -> Result<(), SetupError> {
        let mut setup = self.setup.clone();
        setup.timestep = dt;
        let spec = setup.resolve()?;
        self.sim.set_timestep(spec.timestep)?;
        self.setup = setup;
        Ok(())
    }

    /// Changes cutoff, skin, potential mode and tail correction.
    pub fn set_interaction(
        &mut self,
        cutoff: Length,
        skin: Length,
        potential: PotentialMode,
        tail_correction: bool,
    ) -> Result<(), SetupError> {
        let mut setup = self.setup.clone();
        setup.cutoff = cutoff;
        setup.skin = skin;
        setup.potential = potential;
        setup.tail_correction = tail_correction;
        let spec = setup.resolve()?;
        self.sim
            .set_interaction(spec.cutoff, spec.skin, spec.potential, spec.tail_correction)?;
        self.watchdog.forget();
        self.setup = setup;
        Ok(())
    }

    /// Changes the ensemble and the thermostat target.
    pub fn set_thermostat(&mut self, ensemble: Ensemble, temperature: Temperature) -> Result<(), SetupError> {
        let mut setup = self.setup.clone();
        setup.ensemble = ensemble;
        setup.temperature = temperature;
        if ensemble == Ensemble::Nve {
            // Constant energy has no bath target to move.
            setup.temperature_ramp = None;
        }
        let spec = setup.resolve()?;
        self.sim.set_thermostat(spec.thermostat)?;
        self.setup = setup;
        Ok(())
    }
}
