//! What a tuning scan is asked to try, built and checked in one place for the command line and
//! the window: typed numbers with their units go in ([`TuneInput`]), reduced numbers checked
//! against the setup come out ([`TuneRequest`]), and a refusal names the field, the value and
//! the allowed range in the units the numbers were typed in ([`TuneError`]).

use crate::io::numbers::format_limit;
use crate::io::setup::{CUTOFF_RANGE_SIGMA, Duration, Length, Setup, SetupError, TIMESTEP_RANGE_TAU};
use crate::physics::{SimulationSpec, SpecError, UnitSystem};

/// Longest trial, τ.
pub const TUNE_MAX_DURATION: f64 = 1000.0;
/// Most entries in each list of a scan.
pub const TUNE_MAX_VALUES: usize = 12;
/// Most steps one timestep trial may take.
pub const TUNE_MAX_STEPS: f64 = 1.0e6;
/// Cutoffs tried by default, σ, as far as the box allows.
pub const DEFAULT_CUTOFFS_SIGMA: [f64; 6] = [2.0, 2.5, 3.0, 3.5, 4.0, 5.0];
/// Timesteps tried by default, as multiples of the setup's timestep.
pub const DEFAULT_TIMESTEP_FACTORS: [f64; 5] = [0.5, 1.0, 1.5, 2.0, 3.0];
/// Default trial length for the reduced fluid, τ.
pub const DEFAULT_TRIAL_TAU: f64 = 5.0;
/// Default trial length for real species, ps.
pub const DEFAULT_TRIAL_PS: f64 = 10.0;

/// A tuning request in reduced units, checked against the setup it was built for.
#[derive(Clone, Debug, PartialEq)]
pub struct TuneRequest {
    /// Timesteps to try, τ, in the order asked.
    pub timesteps_tau: Vec<f64>,
    /// Cutoffs to try, σ, in the order asked.
    pub cutoffs_sigma: Vec<f64>,
    /// Simulated time of each timestep trial, τ.
    pub duration_tau: f64,
}

/// A tuning request as typed: numbers with their units (each list in one unit).
#[derive(Clone, Debug, PartialEq)]
pub struct TuneInput {
    /// Timesteps to try.
    pub timesteps: Vec<Duration>,
    /// Cutoffs to try.
    pub cutoffs: Vec<Length>,
    /// Simulated time of each timestep trial.
    pub duration: Duration,
}

/// Why a tuning request was refused or a scan failed.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum TuneError {
    /// A list is empty or too long, or a value is outside its allowed range.
    #[error("{field}: {value} is out of range; allowed: {allowed}")]
    OutOfRange {
        field: &'static str,
        value: String,
        allowed: String,
    },
    /// One timestep trial would take more than [`TUNE_MAX_STEPS`] steps.
    #[error(
        "duration: {duration} at timestep {timestep} is {steps:.0} steps, out of range; allowed: at most {TUNE_MAX_STEPS:.0} steps per timestep (shorten the duration or drop the smallest timestep)"
    )]
    TooManySteps {
        duration: String,
        timestep: String,
        steps: f64,
    },
    /// The box is too small for any cutoff.
    #[error(
        "cutoffs: {cutoff} is out of range; no cutoff fits this box: cutoff + skin ({skin}) must be at most half the box ({half_box}) and the cutoff at least {shortest} (use more atoms or a smaller skin)"
    )]
    NoCutoffFits {
        cutoff: String,
        skin: String,
        half_box: String,
        shortest: String,
    },
    /// A typed value is in a unit the setup's species cannot convert (e.g. fs for the reduced fluid).
    #[error(transparent)]
    Unit(SetupError),
    /// The setup the request is for does not resolve.
    #[error("the running setup is invalid: {0}")]
    InvalidSetup(SetupError),
    /// A cutoff of the request gave no row (cutoff + skin beyond half the box).
    #[error(
        "cutoffs: {cutoff_sigma} σ could not be evaluated; allowed: cutoff + skin ({skin_sigma} σ) at most half the box ({half_box_sigma:.4} σ)"
    )]
    NotEvaluated {
        cutoff_sigma: f64,
        skin_sigma: f64,
        half_box_sigma: f64,
    },
    /// The scan was stopped before it finished.
    #[error("the engine stopped")]
    Stopped,
    /// The state could not be simulated.
    #[error(transparent)]
    Simulation(#[from] SpecError),
    /// Equilibration before the scan blew up; the message is the watchdog's.
    #[error("{0}")]
    Equilibration(String),
}

impl TuneError {
    /// The request field the error is about ("timesteps", "cutoffs" or "duration"), if any.
    pub fn field(&self) -> Option<&'static str> {
        match self {
            TuneError::OutOfRange { field, .. } => Some(field),
            TuneError::TooManySteps { .. } => Some("duration"),
            TuneError::NoCutoffFits { .. } | TuneError::NotEvaluated { .. } => Some("cutoffs"),
            _ => None,
        }
    }
}

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

    /// The units `input` was typed in (of each list's first entry), under `units`.
    pub fn of(input: &TuneInput, units: &UnitSystem) -> TuneUnits {
        let length = match input.cutoffs.first() {
            Some(Length::Angstrom(_)) => (units.sigma_angstrom(), "Å"),
            _ => (1.0, "σ"),
        };
        TuneUnits {
            timestep: input
                .timesteps
                .first()
                .map_or((1.0, "τ"), |&d| time_unit(d, units)),
            duration: time_unit(input.duration, units),
            length,
        }
    }
}

/// Factor from τ and symbol of the unit of `d`.
fn time_unit(d: Duration, units: &UnitSystem) -> (f64, &'static str) {
    match d {
        Duration::Femtoseconds(_) => (units.tau_fs(), "fs"),
        Duration::Picoseconds(_) => (units.tau_ps(), "ps"),
        Duration::Reduced(_) => (1.0, "τ"),
    }
}

impl TuneInput {
    /// The default input for `setup`: half to three times its timestep (in its unit), the
    /// cutoffs of [`DEFAULT_CUTOFFS_SIGMA`] that fit the box (in the unit of its cutoff; its own
    /// cutoff if none fits or the setup does not resolve), and a trial of
    /// [`DEFAULT_TRIAL_PS`] ps (real species) or [`DEFAULT_TRIAL_TAU`] τ.
    pub fn defaults(setup: &Setup) -> TuneInput {
        let units = setup.units();
        let timesteps = DEFAULT_TIMESTEP_FACTORS
            .iter()
            .map(|f| setup.timestep.with_value(f * setup.timestep.value()))
            .collect();
        let per_sigma = match setup.cutoff {
            Length::Angstrom(_) => units.sigma_angstrom(),
            Length::Sigma(_) => 1.0,
        };
        let fits: Vec<Length> = match setup.resolve() {
            Ok(spec) => DEFAULT_CUTOFFS_SIGMA
                .into_iter()
                .filter(|rc| rc + spec.skin <= 0.5 * spec.box_length())
                .map(|rc| setup.cutoff.with_value(rc * per_sigma))
                .collect(),
            Err(_) => Vec::new(),
        };
        TuneInput {
            timesteps,
            cutoffs: if fits.is_empty() { vec![setup.cutoff] } else { fits },
            duration: if units.has_real_units() {
                Duration::Picoseconds(DEFAULT_TRIAL_PS)
            } else {
                Duration::Reduced(DEFAULT_TRIAL_TAU)
            },
        }
    }

    /// What the command line typed: timesteps in the unit of the setup's `timestep` and
    /// cutoffs in the unit of its `cutoff` (an empty list takes the defaults), the trial in τ.
    pub fn from_command_line(setup: &Setup, timesteps: &[f64], cutoffs: &[f64], time_tau: f64) -> TuneInput {
        let defaults = TuneInput::defaults(setup);
        TuneInput {
            timesteps: if timesteps.is_empty() {
                defaults.timesteps
            } else {
                timesteps.iter().map(|&v| setup.timestep.with_value(v)).collect()
            },
            cutoffs: if cutoffs.is_empty() {
                defaults.cutoffs
            } else {
                cutoffs.iter().map(|&v| setup.cutoff.with_value(v)).collect()
            },
            duration: Duration::Reduced(time_tau),
        }
    }
}

impl TuneRequest {
    /// Reduces `input` with the units of `setup`'s species and checks it against the
    /// resolved setup ([`TuneRequest::check`]); errors quote values in the units typed.
    pub fn from_setup(setup: &Setup, input: &TuneInput) -> Result<TuneRequest, TuneError> {
        let spec = setup.resolve().map_err(TuneError::InvalidSetup)?;
        let request = TuneRequest {
            timesteps_tau: input
                .timesteps
                .iter()
                .map(|&d| setup.reduced_duration("timesteps", d))
                .collect::<Result<_, _>>()
                .map_err(TuneError::Unit)?,
            cutoffs_sigma: input
                .cutoffs
                .iter()
                .map(|&l| setup.reduced_length("cutoffs", l))
                .collect::<Result<_, _>>()
                .map_err(TuneError::Unit)?,
            duration_tau: setup
                .reduced_duration("duration", input.duration)
                .map_err(TuneError::Unit)?,
        };
        request.check(&spec, TuneUnits::of(input, &setup.units()))?;
        Ok(request)
    }

    /// The default request for `setup` ([`TuneInput::defaults`]).
    pub fn defaults(setup: &Setup) -> Result<TuneRequest, TuneError> {
        TuneRequest::from_setup(setup, &TuneInput::defaults(setup))
    }

    /// Checks the request against `spec`: 1 to [`TUNE_MAX_VALUES`] entries in each list, every
    /// timestep finite and within [`TIMESTEP_RANGE_TAU`] with at most [`TUNE_MAX_STEPS`] steps
    /// per trial, every cutoff within [`CUTOFF_RANGE_SIGMA`] with cutoff + skin at most half
    /// the box, a duration in (0, [`TUNE_MAX_DURATION`]]. The error names the field, the value
    /// and the allowed range, in `units`.
    pub fn check(&self, spec: &SimulationSpec, units: TuneUnits) -> Result<(), TuneError> {
        let fmt = |v: f64, (f, u): (f64, &str)| format!("{} {u}", format_limit(v * f));
        let count = |field: &'static str, n: usize| {
            if n == 0 || n > TUNE_MAX_VALUES {
                Err(TuneError::OutOfRange {
                    field,
                    value: format!("{n} values"),
                    allowed: format!("1 to {TUNE_MAX_VALUES} values"),
                })
            } else {
                Ok(())
            }
        };
        count("timesteps", self.timesteps_tau.len())?;
        count("cutoffs", self.cutoffs_sigma.len())?;
        let duration = self.duration_tau;
        if !(duration > 0.0 && duration.is_finite() && duration <= TUNE_MAX_DURATION) {
            return Err(TuneError::OutOfRange {
                field: "duration",
                value: fmt(duration, units.duration),
                allowed: format!(
                    "more than 0 and at most {}",
                    fmt(TUNE_MAX_DURATION, units.duration)
                ),
            });
        }
        let (lo, hi) = TIMESTEP_RANGE_TAU;
        for &dt in &self.timesteps_tau {
            if !(dt.is_finite() && (lo..=hi).contains(&dt)) {
                return Err(TuneError::OutOfRange {
                    field: "timesteps",
                    value: fmt(dt, units.timestep),
                    allowed: format!("{} to {}", fmt(lo, units.timestep), fmt(hi, units.timestep)),
                });
            }
            let steps = duration / dt;
            if steps > TUNE_MAX_STEPS {
                return Err(TuneError::TooManySteps {
                    duration: fmt(duration, units.duration),
                    timestep: fmt(dt, units.timestep),
                    steps,
                });
            }
        }
        let (clo, chi) = CUTOFF_RANGE_SIGMA;
        let half = 0.5 * spec.box_length();
        let top = chi.min(half - spec.skin);
        for &rc in &self.cutoffs_sigma {
            if top < clo {
                return Err(TuneError::NoCutoffFits {
                    cutoff: fmt(rc, units.length),
                    skin: fmt(spec.skin, units.length),
                    half_box: fmt(half, units.length),
                    shortest: fmt(clo, units.length),
                });
            }
            if !(rc.is_finite() && rc >= clo && rc <= top) {
                return Err(TuneError::OutOfRange {
                    field: "cutoffs",
                    value: fmt(rc, units.length),
                    allowed: format!(
                        "{} to {} (at most {}, and cutoff + skin ({}) at most half the box ({}))",
                        fmt(clo, units.length),
                        fmt(top, units.length),
                        fmt(chi, units.length),
                        fmt(spec.skin, units.length),
                        fmt(half, units.length)
                    ),
                });
            }
        }
        Ok(())
    }
}
