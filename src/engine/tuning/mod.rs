//! Timestep and cutoff tuning: short scans from one equilibrated state that show how well each
//! timestep conserves energy and how far each cutoff is from converged energy and pressure.
//! [`request`] builds and checks what to try; [`scan`] runs the trials.

pub mod request;
pub mod scan;

pub use request::{
    DEFAULT_CUTOFFS_SIGMA, DEFAULT_TIMESTEP_FACTORS, DEFAULT_TRIAL_PS, DEFAULT_TRIAL_TAU, TUNE_MAX_DURATION,
    TUNE_MAX_STEPS, TUNE_MAX_VALUES, TuneError, TuneInput, TuneRequest, TuneUnits,
};
pub use scan::{
    COST_STEPS, CUTOFF_TOLERANCES, CutoffChoice, CutoffRow, CutoffTolerances, FLUCTUATION_LIMIT,
    TUNE_CONFIGURATIONS, TUNE_STEPS_APART, TimestepRow, TuningReport, cutoff_scan, equilibrate_and_scan,
    full_scan, recommended_cutoff, recommended_timestep, timestep_scan,
};
