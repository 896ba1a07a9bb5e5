//! Messages between the window and the engine thread: the engine's contract. Read this first.
//!
//! Values crossing this boundary carry their unit in their name (`time_tau`, `duration_tau`)
//! or in their type (the setup's [`Duration`] and [`Length`]). This file holds data types only.

use super::flight_recorder::FlightRecord;
use super::tuning::{TuneRequest, TuningReport};
use super::watchdog::Alarm;
use crate::analysis::Estimate;
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
    /// Go back to the held snapshot of this step (one of [`Event::Snapshots`]); its kind is
    /// [`CommandKind::Rewind`].
    RewindTo(u64),
    /// Scan the request's timesteps (τ) and cutoffs (σ) from the present state, each trial
    /// `duration_tau` long, on copies: the user's simulation is not advanced. The scan runs
    /// beside the engine loop and answers with [`Event::Tuned`]; one scan at a time.
    Tune(TuneRequest),
    /// Stop the running tuning scan (within 1/200 of a trial); answered with
    /// [`Event::TuneCancelled`], or refused if no scan runs.
    CancelTune,
    /// Start (true) or stop (false) the structure and motion analyses of the running
    /// simulation; while on, the engine sends [`Event::Analyses`] about twice a second.
    WatchAnalyses(bool),
    /// Forget what the analyses gathered and start them again at the present step.
    ResetAnalyses,
    /// Lag window of the diffusion fits, τ (`[from, to]`); None for the default.
    SetFitWindow(Option<[f64; 2]>),
    /// Write one analysis as CSV (the same text as the headless run's file).
    SaveAnalysis { file: AnalysisFile, path: PathBuf },
    /// Take averages from this start (the detected one, or a time in τ the user set); answered
    /// at once with [`Event::Evidence`].
    SetAverageStart(StartChoice),
    /// End the engine thread.
    Shutdown,
}

/// One of the analysis files.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum AnalysisFile {
    Rdf,
    Msd,
    Vacf,
    Speeds,
}

impl AnalysisFile {
    /// The file's name in a headless run's folder (and the default name of an export).
    pub fn file_name(self) -> &'static str {
        match self {
            AnalysisFile::Rdf => "rdf.csv",
            AnalysisFile::Msd => "msd.csv",
            AnalysisFile::Vacf => "vacf.csv",
            AnalysisFile::Speeds => "speeds.csv",
        }
    }
}

/// A labelled curve of (x, y) points in reduced units.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Curve {
    pub label: String,
    pub points: Vec<[f64; 2]>,
}

/// One species' speed histogram against Maxwell–Boltzmann, reduced units (σ/τ, τ/σ).
#[derive(Clone, Debug, Default, PartialEq)]
pub struct SpeedCurves {
    pub label: String,
    pub measured: Vec<[f64; 2]>,
    pub maxwell_boltzmann: Vec<[f64; 2]>,
    /// Kinetic temperature of the Maxwell–Boltzmann curve, ε/k_B.
    pub temperature: f64,
    /// Kolmogorov–Smirnov distance between the two distributions, and its 1 % critical value
    /// for one configuration (see `analysis::speeds`).
    pub ks_distance: f64,
    pub ks_critical: f64,
}

/// Both self-diffusion estimates, σ²/τ, and the fit window, τ.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DiffusionFigures {
    pub einstein: Estimate,
    pub green_kubo: Estimate,
    pub window: [f64; 2],
    /// Blocks of time origins behind the errors.
    pub blocks: usize,
    /// Whether the two agree within twice their combined error.
    pub agree: bool,
}

/// What the structure and motion analyses show now, in reduced units.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct AnalysesReport {
    /// Step of the simulation when the report was made.
    pub step: u64,
    /// First step the analyses took in.
    pub from_step: u64,
    /// Configurations in g(r), samples in the MSD and VACF, configurations in the speeds.
    pub rdf_frames: u64,
    pub dynamics_samples: u64,
    pub speed_frames: u64,
    /// Steps between configurations of each analysis.
    pub rdf_every: u64,
    pub dynamics_every: u64,
    pub speeds_every: u64,
    /// g(r): the total, then every species pair of a mixture.
    pub rdf: Vec<Curve>,
    /// Running coordination numbers, in the order of `rdf`.
    pub coordination: Vec<Curve>,
    /// MSD (σ² against τ): all atoms followed, then each species of a mixture.
    pub msd: Vec<Curve>,
    /// Normalised VACF against τ, in the order of `msd`.
    pub vacf: Vec<Curve>,
    pub diffusion: Option<DiffusionFigures>,
    pub speeds: Vec<SpeedCurves>,
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

/// One snapshot the rewind buffer holds: every one was taken after a step the watchdog passed.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SnapshotMark {
    pub step: u64,
    /// Simulated time, τ.
    pub time_tau: f64,
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
    /// The flight recorder's frames up to the alarm just sent (the last is the alarm's state).
    FlightRecord(Box<FlightRecord>),
    /// A setup with `recover: true` met `alarm`: the engine went back to the snapshot of
    /// `resumed_from_step`, halved the timestep to `timestep` and runs on (at most
    /// [`crate::engine::recovery::MAX_RECOVERIES`] times per start).
    Recovered {
        alarm: Box<Alarm>,
        resumed_from_step: u64,
        timestep: Duration,
    },
    /// The snapshots the rewind buffer holds now, oldest first, and the memory they take.
    Snapshots { marks: Vec<SnapshotMark>, bytes: usize },
    /// State went back to this step and simulated time (τ); later samples no longer hold.
    Rewound { step: u64, time_tau: f64 },
    /// A checkpoint was written.
    Saved(PathBuf),
    /// A tuning scan finished.
    Tuned(TuningReport),
    /// The running tuning scan was stopped on request; no results will come.
    TuneCancelled,
    /// What the structure and motion analyses show now (while they are on).
    Analyses(Box<AnalysesReport>),
    /// An analysis was written as CSV.
    AnalysisSaved(PathBuf),
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
    /// [`Command::WatchAnalyses`].
    WatchAnalyses,
    /// [`Command::ResetAnalyses`].
    ResetAnalyses,
    /// [`Command::SetFitWindow`].
    SetFitWindow,
    /// [`Command::SaveAnalysis`].
    SaveAnalysis,
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
            CommandKind::WatchAnalyses => "WatchAnalyses",
            CommandKind::ResetAnalyses => "ResetAnalyses",
            CommandKind::SetFitWindow => "SetFitWindow",
            CommandKind::SaveAnalysis => "SaveAnalysis",
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
            Command::Rewind | Command::RewindTo(_) => CommandKind::Rewind,
            Command::Tune(_) => CommandKind::Tune,
            Command::CancelTune => CommandKind::CancelTune,
            Command::WatchAnalyses(_) => CommandKind::WatchAnalyses,
            Command::ResetAnalyses => CommandKind::ResetAnalyses,
            Command::SetFitWindow(_) => CommandKind::SetFitWindow,
            Command::SaveAnalysis { .. } => CommandKind::SaveAnalysis,
            Command::SetAverageStart(_) => CommandKind::SetAverageStart,
            Command::Shutdown => CommandKind::Shutdown,
        }
    }
}
