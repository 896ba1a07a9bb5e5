//! Messages between the window and the engine thread: the engine's contract. Read this first.
//!
//! Values crossing this boundary carry their unit in their name (`time_tau`, `duration_tau`)
//! or in their type (the setup's [`Duration`] and [`Length`]). This file holds data types only.

use super::tuning::{TuneRequest, TuningReport};
use super::watchdog::Alarm;
use crate::analysis::eos_reference::EosComparison;
use crate::analysis::{Evidence, StartChoice, TargetProgress};
use crate::io::setup::{Duration, Ensemble, Length, Setup, Temperature};
use crate::physics::{Observables, PotentialMode, UnitSystem};
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
    SetInteraction {
        cutoff: Length,
        skin: Length,
        potential: PotentialMode,
        tail_correction: bool,
    },
    /// Change the ensemble and thermostat target of the running simulation.
    SetThermostat {
        ensemble: Ensemble,
        temperature: Temperature,
    },
    /// Write a checkpoint of the present state.
    SaveCheckpoint(PathBuf),
    /// Replace the simulation with one continued from a checkpoint.
    LoadCheckpoint(PathBuf),
    /// Go back to the newest safe snapshot before the last alarm.
    Rewind,
    /// Scan the request's timesteps (τ) and cutoffs (σ) from the present state, each trial
    /// `duration_tau` long, on copies: the user's simulation is not advanced. The scan runs
    /// beside the engine loop and answers with [`Event::Tuned`]; one scan at a time.
    Tune(TuneRequest),
    /// Stop the running tuning scan (within 1/200 of a trial); answered with
    /// [`Event::TuneCancelled`], or refused if no scan runs.
    CancelTune,
    /// Take averages from this start (the detected one, or a time in τ the user set); answered
    /// at once with [`Event::Evidence`].
    SetAverageStart(StartChoice),
    /// End the engine thread.
    Shutdown,
}

/// Engine state reported a few times a second.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Status {
    pub running: bool,
    pub step: u64,
    /// Simulated time in τ.
    pub time_tau: f64,
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
    /// A command (or the engine's start) was refused; the simulation is unchanged. `reason`
    /// is the refusal's message, naming the field, the value and the allowed range where
    /// there is one.
    Rejected { command: CommandKind, reason: String },
    /// The watchdog paused the run.
    Alarm(Alarm),
    /// State went back to this step and simulated time (τ); later samples no longer hold.
    Rewound { step: u64, time_tau: f64 },
    /// A checkpoint was written.
    Saved(PathBuf),
    /// A tuning scan finished.
    Tuned(TuningReport),
    /// The running tuning scan was stopped on request; no results will come.
    TuneCancelled,
    /// The run reached the setup's `steps` and paused there; a further [`Command::Run`] goes on
    /// past them without stopping again.
    ReachedSteps {
        /// The setup's `steps`.
        steps: u64,
    },
    /// The equilibration evidence of the run so far: about once a second while running, and
    /// at once after [`Command::SetAverageStart`], a start, a rewind or a pause.
    Evidence(Box<EvidenceReport>),
    /// Every precision target of the setup was met after the equilibration start and the run
    /// paused there; a further [`Command::Run`] goes on without stopping for them again.
    PrecisionReached(Vec<TargetProgress>),
}

/// The equilibration evidence with what the window needs to show it.
#[derive(Clone, Debug, PartialEq)]
pub struct EvidenceReport {
    /// Statistics, verdicts and the start they were taken from (reduced units, times in τ).
    pub evidence: Evidence,
    /// Each precision target of the setup against the evidence.
    pub precision: Vec<TargetProgress>,
    /// The equation of state beside the run's full-potential estimates; `None` for mixtures.
    pub eos: Option<EosComparison>,
    /// Units of the run's reference species, for showing values in the setup's units.
    pub units: UnitSystem,
    /// Steps between samples (raw samples needed × this = steps needed).
    pub sample_every: u64,
    /// The step the evidence reaches.
    pub step: u64,
    /// Wall time the analysis took, seconds.
    pub analysis_seconds: f64,
}

/// Which command an event answers: [`Command::kind`], and [`CommandKind::Start`] for the
/// engine's own start. Its text (`Display`) is the command's name, as messages show it.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum CommandKind {
    /// The engine starting on its first setup (not a command).
    Start,
    /// [`Command::Run`].
    Run,
    /// [`Command::Pause`].
    Pause,
    /// [`Command::StepOnce`].
    StepOnce,
    /// [`Command::Apply`].
    Apply,
    /// [`Command::Reset`].
    Reset,
    /// [`Command::SetTimestep`].
    SetTimestep,
    /// [`Command::SetInteraction`].
    SetInteraction,
    /// [`Command::SetThermostat`].
    SetThermostat,
    /// [`Command::SaveCheckpoint`].
    SaveCheckpoint,
    /// [`Command::LoadCheckpoint`].
    LoadCheckpoint,
    /// [`Command::Rewind`].
    Rewind,
    /// [`Command::Tune`].
    Tune,
    /// [`Command::CancelTune`].
    CancelTune,
    /// [`Command::SetAverageStart`].
    SetAverageStart,
    /// [`Command::Shutdown`].
    Shutdown,
}

impl CommandKind {
    /// The name messages show: the command's name, "start" for the engine's start.
    pub fn label(self) -> &'static str {
        match self {
            CommandKind::Start => "start",
            CommandKind::Run => "Run",
            CommandKind::Pause => "Pause",
            CommandKind::StepOnce => "StepOnce",
            CommandKind::Apply => "Apply",
            CommandKind::Reset => "Reset",
            CommandKind::SetTimestep => "SetTimestep",
            CommandKind::SetInteraction => "SetInteraction",
            CommandKind::SetThermostat => "SetThermostat",
            CommandKind::SaveCheckpoint => "SaveCheckpoint",
            CommandKind::LoadCheckpoint => "LoadCheckpoint",
            CommandKind::Rewind => "Rewind",
            CommandKind::Tune => "Tune",
            CommandKind::CancelTune => "CancelTune",
            CommandKind::SetAverageStart => "SetAverageStart",
            CommandKind::Shutdown => "Shutdown",
        }
    }

    /// Whether a successful command of this kind changed the running setup live.
    pub fn is_live_change(self) -> bool {
        matches!(
            self,
            CommandKind::SetTimestep | CommandKind::SetInteraction | CommandKind::SetThermostat
        )
    }
}

impl std::fmt::Display for CommandKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.label())
    }
}

impl Command {
    /// Which command this is.
    pub fn kind(&self) -> CommandKind {
        match self {
            Command::Run => CommandKind::Run,
            Command::Pause => CommandKind::Pause,
            Command::StepOnce => CommandKind::StepOnce,
            Command::Apply(_) => CommandKind::Apply,
            Command::Reset => CommandKind::Reset,
            Command::SetTimestep(_) => CommandKind::SetTimestep,
            Command::SetInteraction { .. } => CommandKind::SetInteraction,
            Command::SetThermostat { .. } => CommandKind::SetThermostat,
            Command::SaveCheckpoint(_) => CommandKind::SaveCheckpoint,
            Command::LoadCheckpoint(_) => CommandKind::LoadCheckpoint,
            Command::Rewind => CommandKind::Rewind,
            Command::Tune(_) => CommandKind::Tune,
            Command::CancelTune => CommandKind::CancelTune,
            Command::SetAverageStart(_) => CommandKind::SetAverageStart,
            Command::Shutdown => CommandKind::Shutdown,
        }
    }
}
