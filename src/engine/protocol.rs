//! Messages between the window and the engine thread.

use super::tuning::{CutoffRow, TimestepRow};
use crate::io::setup::{Duration, Ensemble, Length, Setup, Temperature};
use crate::physics::{Observables, PotentialMode, SimulationSpec, Species};
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
    /// Scan timesteps (τ) and cutoffs (σ) from the present state, each trial `duration` τ long,
    /// on copies: the user's simulation is not advanced. The scan runs beside the engine loop
    /// and answers with [`Event::Tuned`]; one scan at a time.
    Tune {
        timesteps: Vec<f64>,
        cutoffs: Vec<f64>,
        duration: f64,
    },
    /// Stop the running tuning scan (within 1/200 of a trial); answered with
    /// [`Event::TuneCancelled`], or refused if no scan runs.
    CancelTune,
    /// End the engine thread.
    Shutdown,
}

/// Why the watchdog stopped a run.
#[derive(Clone, Debug, PartialEq)]
pub enum Alarm {
    /// Energy or forces became non-finite.
    NonFinite { step: u64, atoms: Vec<usize> },
    /// Some atom feels a force beyond the limit: atoms overlap, the run is about to explode.
    HugeForce {
        step: u64,
        force: f64,
        atoms: Vec<usize>,
    },
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
            Alarm::NonFinite { step, atoms } => format!(
                "step {step}: energy is no longer finite (atoms {atoms:?}); the run blew up. Rewind and lower the timestep."
            ),
            Alarm::HugeForce { step, force, atoms } => format!(
                "step {step}: force {force:.3e} ε/σ on atoms {atoms:?}: atoms overlap. Rewind and lower the timestep."
            ),
            Alarm::Drift { step, drift, limit } => format!(
                "step {step}: conserved energy drifted by {:.3}% (limit {:.3}%). Lower the timestep or use ShiftedForce.",
                drift * 100.0,
                limit * 100.0
            ),
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
    /// A tuning scan finished.
    Tuned(TuningReport),
    /// The running tuning scan was stopped on request; no results will come.
    TuneCancelled,
}

/// What a tuning scan found, all in reduced units of `reference`.
#[derive(Clone, Debug, PartialEq)]
pub struct TuningReport {
    /// Step of the user's simulation the scan started from.
    pub from_step: u64,
    /// Unit reference species of the scanned simulation.
    pub reference: Species,
    /// Potential mode the cutoff rows are reported in.
    pub potential: PotentialMode,
    /// Simulated time of each timestep trial, τ.
    pub duration: f64,
    /// Configurations the cutoff rows average over.
    pub configurations: usize,
    /// One row per timestep, in the order asked.
    pub timesteps: Vec<TimestepRow>,
    /// One row per cutoff, in the order asked.
    pub cutoffs: Vec<CutoffRow>,
    /// Largest timestep that did not blow up and kept the fluctuation ratio under the limit (τ).
    pub recommended: Option<f64>,
}

/// Smallest and largest timestep a scan accepts, τ (as a setup does).
pub const TUNE_TIMESTEP_RANGE: (f64, f64) = (1e-5, 0.05);
/// Shortest cutoff a scan accepts and the longest one before the box limit, σ.
pub const TUNE_CUTOFF_RANGE: (f64, f64) = (1.0, 10.0);
/// Longest trial, τ.
pub const TUNE_MAX_DURATION: f64 = 1000.0;
/// Most entries in each list of a scan.
pub const TUNE_MAX_VALUES: usize = 12;
/// Most steps one timestep trial may take.
pub const TUNE_MAX_STEPS: f64 = 1.0e6;

/// How the values of a tuning request are shown in messages: factor from reduced units and
/// symbol, for timesteps, trial duration and cutoffs.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct TuneUnits {
    pub timestep: (f64, &'static str),
    pub duration: (f64, &'static str),
    pub length: (f64, &'static str),
}

impl TuneUnits {
    /// Reduced units throughout.
    pub const REDUCED: TuneUnits = TuneUnits {
        timestep: (1.0, "τ"),
        duration: (1.0, "τ"),
        length: (1.0, "σ"),
    };
}

/// Checks a tuning request (reduced values) against `spec`: every timestep positive, finite and
/// within [`TUNE_TIMESTEP_RANGE`], every cutoff within [`TUNE_CUTOFF_RANGE`] with cutoff + skin
/// at most half the box, a duration in (0, [`TUNE_MAX_DURATION`]]. The error names the field,
/// the value and the allowed range, in `units`.
pub fn check_tune_request(
    spec: &SimulationSpec,
    timesteps: &[f64],
    cutoffs: &[f64],
    duration: f64,
    units: TuneUnits,
) -> Result<(), String> {
    let fmt = |v: f64, (f, u): (f64, &str)| format!("{} {u}", short_number(v * f));
    let count = |field: &str, n: usize| {
        if n == 0 || n > TUNE_MAX_VALUES {
            Err(format!(
                "{field}: {n} values is out of range; allowed: 1 to {TUNE_MAX_VALUES} values"
            ))
        } else {
            Ok(())
        }
    };
    count("timesteps", timesteps.len())?;
    count("cutoffs", cutoffs.len())?;
    if !(duration > 0.0 && duration.is_finite() && duration <= TUNE_MAX_DURATION) {
        return Err(format!(
            "duration: {} is out of range; allowed: more than 0 and at most {}",
            fmt(duration, units.duration),
            fmt(TUNE_MAX_DURATION, units.duration)
        ));
    }
    let (lo, hi) = TUNE_TIMESTEP_RANGE;
    for &dt in timesteps {
        if !(dt.is_finite() && (lo..=hi).contains(&dt)) {
            return Err(format!(
                "timesteps: {} is out of range; allowed: {} to {}",
                fmt(dt, units.timestep),
                fmt(lo, units.timestep),
                fmt(hi, units.timestep)
            ));
        }
        let steps = duration / dt;
        if steps > TUNE_MAX_STEPS {
            return Err(format!(
                "duration: {} at timestep {} is {steps:.0} steps, out of range; allowed: at most {TUNE_MAX_STEPS:.0} steps per timestep (shorten the duration or drop the smallest timestep)",
                fmt(duration, units.duration),
                fmt(dt, units.timestep)
            ));
        }
    }
    let (clo, chi) = TUNE_CUTOFF_RANGE;
    let half = 0.5 * spec.box_length();
    let top = chi.min(half - spec.skin);
    for &rc in cutoffs {
        if top < clo {
            return Err(format!(
                "cutoffs: {} is out of range; no cutoff fits this box: cutoff + skin ({}) must be at most half the box ({}) and the cutoff at least {} (use more atoms or a smaller skin)",
                fmt(rc, units.length),
                fmt(spec.skin, units.length),
                fmt(half, units.length),
                fmt(clo, units.length)
            ));
        }
        if !(rc.is_finite() && rc >= clo && rc <= top) {
            return Err(format!(
                "cutoffs: {} is out of range; allowed: {} to {} (at most {}, and cutoff + skin ({}) at most half the box ({}))",
                fmt(rc, units.length),
                fmt(clo, units.length),
                fmt(top, units.length),
                fmt(chi, units.length),
                fmt(spec.skin, units.length),
                fmt(half, units.length)
            ));
        }
    }
    Ok(())
}

/// A number rounded to five significant digits, without trailing zeros.
fn short_number(v: f64) -> String {
    if !v.is_finite() {
        return format!("{v}");
    }
    let r: f64 = format!("{v:.4e}").parse().unwrap_or(v);
    format!("{r}")
}
