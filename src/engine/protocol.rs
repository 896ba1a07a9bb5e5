//! Messages between the window and the engine thread.

use crate::io::setup::{Duration, Ensemble, Length, Setup, Temperature};
use crate::physics::{Observables, PotentialMode};
use std::path::PathBuf;

/// What the window asks of the engine.
#[derive(Clone, Debug, PartialEq)]
pub enum Command {
    /// Start or continue stepping.
    Run,
    /// Stop stepping (state is kept).
    Pause,
    /// Take one step (the engine pauses first).
    StepOnce,
    /// Validate a setup and, if valid, replace the simulation with a fresh start of it.
    /// A setup that fails validation leaves the running simulation untouched.
    Apply(Box<Setup>),
    /// Restart the present setup from step 0.
    Reset,
    /// Change the timestep of the running simulation.
    SetTimestep(Duration),
    /// Change cutoff, skin, potential mode and tail correction of the running simulation.
    SetInteraction { cutoff: Length, skin: Length, potential: PotentialMode, tail_correction: bool },
    /// Change the ensemble and thermostat target of the running simulation.
    SetThermostat { ensemble: Ensemble, temperature: Temperature },
    /// Write a checkpoint of the present state.
    SaveCheckpoint(PathBuf),
    /// Replace the simulation with one continued from a checkpoint.
    LoadCheckpoint(PathBuf),
    /// Go back to the newest safe snapshot before the last alarm.
    Rewind,
    /// End the engine thread.
    Shutdown,
}

/// Why the watchdog stopped a run.
#[derive(Clone, Debug, PartialEq)]
pub enum Alarm {
    /// Energy or forces became non-finite.
    NonFinite { step: u64, atoms: Vec<usize> },
    /// Some atom feels a force beyond the limit: atoms overlap, the run is about to explode.
    HugeForce { step: u64, force: f64, atoms: Vec<usize> },
    /// The conserved energy drifted beyond the limit since the start.
    Drift { step: u64, drift: f64, limit: f64 },
}

impl Alarm {
    /// Step at which the alarm fired.
    pub fn step(&self) -> u64 {
        match *self {
            Alarm::NonFinite { step, .. } | Alarm::HugeForce { step, .. } | Alarm::Drift { step, .. } => step,
        }
    }

    /// One sentence for people.
    pub fn describe(&self) -> String {
        match self {
            Alarm::NonFinite { step, atoms } => format!("step {step}: energy is no longer finite (atoms {atoms:?}); the run blew up. Rewind and lower the timestep."),
            Alarm::HugeForce { step, force, atoms } => format!("step {step}: force {force:.3e} ε/σ on atoms {atoms:?}: atoms overlap. Rewind and lower the timestep."),
            Alarm::Drift { step, drift, limit } => format!("step {step}: conserved energy drifted by {:.3}% (limit {:.3}%). Lower the timestep or use ShiftedForce.", drift * 100.0, limit * 100.0),
        }
    }
}

/// Engine state reported a few times a second.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Status {
    pub running: bool,
    pub step: u64,
    /// Simulated time in τ.
    pub time: f64,
    pub atoms: usize,
    pub steps_per_second: f64,
    pub atom_steps_per_second: f64,
    pub list_builds: u64,
    /// Snapshots the rewind buffer holds.
    pub snapshots: usize,
}

/// What the engine tells the window.
#[derive(Clone, Debug, PartialEq)]
pub enum Event {
    /// One sample of observables; every sample is sent, none dropped.
    Sample(Observables),
    /// Periodic status.
    Status(Status),
    /// A new simulation was started from this setup (plots should be cleared).
    Started { setup: Box<Setup>, atoms: usize },
    /// A live change took effect; the setup now reads like this.
    SetupChanged(Box<Setup>),
    /// A command was refused; the simulation is unchanged.
    Rejected { command: String, reason: String },
    /// The watchdog paused the run.
    Alarm(Alarm),
    /// State went back to this step and simulated time (τ); later samples no longer hold.
    Rewound { step: u64, time: f64 },
    /// A checkpoint was written.
    Saved(PathBuf),
}
