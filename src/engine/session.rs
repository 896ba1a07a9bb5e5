//! A session: one simulation with its setup, sampling schedule and watchdog. The engine thread
//! and the headless runner both drive a session, so they step and sample identically.

use super::watchdog::Alarm;
use super::watchdog::Watchdog;
use crate::analysis::eos_reference::RunState;
use crate::analysis::precision::{self, PrecisionTarget, TargetProgress};
use crate::analysis::{Evidence, SampleStore, StartChoice, analyse};
use crate::io::checkpoint::Checkpoint;
use crate::io::setup::{Duration, Ensemble, Length, Setup, SetupError, Temperature};
use crate::physics::{Observables, PotentialMode, Simulation, UnitSystem};

/// One simulation and what it was set up from.
pub struct Session {
    setup: Setup,
    sim: Simulation,
    watchdog: Watchdog,
    /// Every sample of the run so far (bounded), including those before a checkpoint.
    samples: SampleStore,
    /// The setup's precision targets in reduced units.
    targets: Vec<PrecisionTarget>,
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
        let sim = Simulation::new(spec)?;
        let mut samples = SampleStore::default();
        samples.push(&sim.observe());
        Ok(Session {
            setup,
            sim,
            watchdog: Watchdog::default(),
            samples,
            targets,
        })
    }

    /// Continues from a checkpoint.
    pub fn from_checkpoint(c: Checkpoint) -> Result<Session, SetupError> {
        // Setup, spec and state checked as strictly as a setup file; the spec carries live changes.
        c.check()?;
        c.setup.check_memory_available()?;
        let targets = c.setup.precision_targets_reduced()?;
        let sim = Simulation::from_state(c.spec, c.state)?;
        // A version 2 checkpoint has no samples: the statistics start at its step.
        let samples = c.samples.unwrap_or_else(|| {
            let mut s = SampleStore::default();
            s.push(&sim.observe());
            s
        });
        Ok(Session {
            setup: c.setup,
            sim,
            watchdog: Watchdog::default(),
            samples,
            targets,
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

    /// Mutable simulation (rewind, tests).
    pub fn simulation_mut(&mut self) -> &mut Simulation {
        &mut self.sim
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

    /// Forgets the samples after `step` (after a rewind to it).
    pub fn forget_samples_after(&mut self, step: u64) {
        self.samples.truncate_after(step);
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

    /// Takes one step; samples and checks at multiples of `sample_every`.
    pub fn step(&mut self) -> StepOutcome {
        if let Err(b) = self.sim.step() {
            return StepOutcome {
                sample: None,
                alarm: Some(Watchdog::blowup(&b)),
                precision_met: None,
            };
        }
        let mut out = StepOutcome::default();
        if self.sim.step_count().is_multiple_of(self.setup.sample_every) {
            let o = self.sim.observe();
            out.alarm = self.watchdog.check(&self.sim, &o);
            self.samples.push(&o);
            out.sample = Some(o);
            if out.alarm.is_none()
                && !self.targets.is_empty()
                && precision::is_check_point(self.samples.raw_samples())
            {
                let evidence = self.evidence(StartChoice::Automatic);
                let progress = precision::progress(&evidence, &self.targets);
                if precision::all_met(&evidence, &progress) {
                    out.precision_met = Some(progress);
                }
            }
        }
        out
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
        self.setup = setup;
        Ok(())
    }

    /// Changes the ensemble and the thermostat target.
    pub fn set_thermostat(&mut self, ensemble: Ensemble, temperature: Temperature) -> Result<(), SetupError> {
        let mut setup = self.setup.clone();
        setup.ensemble = ensemble;
        setup.temperature = temperature;
        let spec = setup.resolve()?;
        self.sim.set_thermostat(spec.thermostat)?;
        self.setup = setup;
        Ok(())
    }
}
