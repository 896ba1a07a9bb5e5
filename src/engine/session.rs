//! A session: one simulation with its setup, sampling schedule and watchdog. The engine thread
//! and the headless runner both drive a session, so they step and sample identically.

use super::watchdog::{Alarm, Watchdog, non_finite};
use crate::io::checkpoint::Checkpoint;
use crate::io::setup::{Duration, Ensemble, Length, Setup, SetupError, Start, Temperature};
use crate::io::start_file;
use crate::physics::{Observables, PotentialMode, Simulation, SimulationState, SpecError, UnitSystem};
use std::path::Path;

/// One simulation and what it was set up from.
pub struct Session {
    setup: Setup,
    sim: Simulation,
    watchdog: Watchdog,
    /// Whether the state the session started from (or was restored to) has been checked.
    start_checked: bool,
}

/// What one step produced.
#[derive(Clone, Debug, Default)]
pub struct StepOutcome {
    /// The sample, at sample steps.
    pub sample: Option<Observables>,
    /// Set when the watchdog fired.
    pub alarm: Option<Alarm>,
}

impl Session {
    /// Validates the setup and builds its start configuration.
    pub fn new(setup: Setup) -> Result<Session, SetupError> {
        let spec = setup.resolve_for_this_machine()?;
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
        Ok(Session {
            setup,
            watchdog: Watchdog::new(&mut sim),
            sim,
            start_checked: false,
        })
    }

    /// Continues from a checkpoint.
    pub fn from_checkpoint(c: Checkpoint) -> Result<Session, SetupError> {
        // Setup, spec and state checked as strictly as a setup file; the spec carries live changes.
        c.check()?;
        c.setup.check_memory_available()?;
        let mut sim = Simulation::from_state(c.spec, c.state)?;
        Ok(Session {
            setup: c.setup,
            watchdog: Watchdog::new(&mut sim),
            sim,
            start_checked: false,
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

    /// Goes back to `state` (a rewind): the spec in force stays, the watchdog starts afresh.
    pub fn restore(&mut self, state: SimulationState) -> Result<(), SpecError> {
        let spec = self.sim.spec().clone();
        let mut sim = Simulation::from_state(spec, state)?;
        sim.set_move_bound(self.watchdog.bounds.max_move);
        self.sim = sim;
        self.watchdog.forget();
        self.start_checked = true;
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
        }
    }

    /// The sample of the present state.
    pub fn observe(&self) -> Observables {
        self.sim.observe()
    }

    /// Takes one step, checks it with the watchdog and samples at multiples of `sample_every`.
    ///
    /// The first call after the start (or after [`Session::simulation_mut`]) checks the state
    /// it finds before stepping: a start configuration with overlapping atoms is stopped at its
    /// own step, with no step taken, before the forces fling the atoms apart.
    pub fn step(&mut self) -> StepOutcome {
        if !self.start_checked {
            self.start_checked = true;
            if let Some(a) = self.watchdog.check(&self.sim) {
                return StepOutcome {
                    sample: None,
                    alarm: Some(a),
                };
            }
        }
        let stepped = self.sim.step();
        let mut out = StepOutcome {
            alarm: self.watchdog.check(&self.sim),
            sample: None,
        };
        if stepped.is_err() && out.alarm.is_none() {
            out.alarm = Some(non_finite(&self.sim));
        }
        let lost = out.alarm.as_ref().is_some_and(|a| a.kind.is_blow_up());
        if !lost && self.sim.step_count().is_multiple_of(self.setup.sample_every) {
            out.sample = Some(self.sim.observe());
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
        self.watchdog.forget();
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
