//! `summary.json`: averages of a finished run with their standard errors.

use crate::analysis::{Estimate, block_average, detect_equilibration};
use crate::physics::{Observables, UnitSystem};
use serde::Serialize;

/// Said wherever results could be mistaken for engineering data.
pub const MODEL_CAUTION: &str = "Model results from a classical Lennard-Jones model: not measured data. Do not use them to design or rate cryogenic or pressure equipment; use measured property data and the applicable codes and standards.";

/// Averages in real units.
#[derive(Clone, Debug, Serialize)]
pub struct SiSummary {
    /// kJ/mol per atom.
    pub potential_energy_per_atom: Estimate,
    /// bar.
    pub pressure: Estimate,
    /// K.
    pub temperature: Estimate,
    /// g/cm³.
    pub density: f64,
    pub units: SiUnits,
}

/// Unit labels of [`SiSummary`].
#[derive(Clone, Debug, Serialize)]
pub struct SiUnits {
    pub potential_energy_per_atom: &'static str,
    pub pressure: &'static str,
    pub temperature: &'static str,
    pub density: &'static str,
}

/// Equilibration detected on the potential-energy series of the whole run.
#[derive(Clone, Debug, Serialize)]
pub struct EquilibrationSummary {
    /// First step that automated detection (Chodera 2016) counts as equilibrated.
    pub detected_start_step: u64,
    /// The setup's `equilibration_steps`, for comparison.
    pub configured_start_step: u64,
    pub statistical_inefficiency: f64,
    pub effective_samples: f64,
    /// True when the detected start lies after the configured one: averages may include drift.
    pub configured_start_too_early: bool,
}

/// Everything in `summary.json`; values in reduced units of the reference species.
#[derive(Clone, Debug, Serialize)]
pub struct Summary {
    pub title: String,
    pub reference_species: String,
    pub atoms: usize,
    pub steps: u64,
    pub samples_used: usize,
    pub density: f64,
    pub potential_energy_per_atom: Estimate,
    pub pressure: Estimate,
    pub temperature: Estimate,
    pub relative_energy_drift: f64,
    pub neighbour_list_builds: u64,
    pub atom_steps_per_second: f64,
    pub wall_seconds: f64,
    pub threads: usize,
    pub equilibration: EquilibrationSummary,
    pub si: Option<SiSummary>,
    pub caution: &'static str,
    /// Set when the watchdog stopped the run; the averages then cover the run up to the alarm.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub alarm: Option<AlarmSummary>,
    /// With `run --recover`: every recovery, oldest first (absent without `--recover`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub recoveries: Option<Vec<RecoverySummary>>,
}

/// The watchdog's alarm as `summary.json` holds it.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct AlarmSummary {
    /// `non_finite`, `overlap`, `jump`, `energy_jump` or `drift`.
    pub kind: String,
    pub step: u64,
    /// The atoms where the trouble started, ranked, as 0-based indices in the run's atom order.
    pub atoms: Vec<usize>,
    /// What was seen, with the numbers and bounds.
    pub detail: String,
}

/// One recovery of `run --recover`: the alarm, the snapshot the run went back to and the
/// timestep before and after (in the setup's unit).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct RecoverySummary {
    pub alarm: AlarmSummary,
    pub resumed_from_step: u64,
    pub timestep_before: f64,
    pub timestep_after: f64,
    pub timestep_unit: &'static str,
}

/// Inputs of a summary besides the samples.
pub struct RunFacts {
    pub title: String,
    pub atoms: usize,
    pub steps: u64,
    pub equilibration_steps: u64,
    pub density: f64,
    pub mass_density_g_cm3: Option<f64>,
    pub neighbour_list_builds: u64,
    pub steps_run: u64,
    pub wall_seconds: f64,
    pub threads: usize,
}

impl Summary {
    /// Averages the samples at or after `equilibration_steps`.
    pub fn new(samples: &[Observables], units: UnitSystem, facts: RunFacts) -> Summary {
        let used: Vec<&Observables> = samples
            .iter()
            .filter(|o| o.step >= facts.equilibration_steps)
            .collect();
        let est =
            |f: &dyn Fn(&Observables) -> f64| block_average(&used.iter().map(|o| f(o)).collect::<Vec<_>>());
        let pe = est(&|o| o.potential);
        let p = est(&|o| o.pressure);
        let t = est(&|o| o.temperature);
        let pe_all: Vec<f64> = samples.iter().map(|o| o.potential).collect();
        let eq = detect_equilibration(&pe_all, (pe_all.len() / 200).max(1));
        let detected = samples.get(eq.start).map(|o| o.step).unwrap_or(0);
        let scale = |e: Estimate, k: f64| Estimate {
            mean: e.mean * k,
            stderr: e.stderr * k,
        };
        let si = units.has_real_units().then(|| SiSummary {
            potential_energy_per_atom: scale(pe, units.energy_kj_mol()),
            pressure: scale(p, units.pressure_bar()),
            temperature: scale(t, units.temperature_kelvin()),
            density: facts.mass_density_g_cm3.unwrap_or(f64::NAN),
            units: SiUnits {
                potential_energy_per_atom: "kJ/mol",
                pressure: "bar",
                temperature: "K",
                density: "g/cm^3",
            },
        });
        let wall = facts.wall_seconds.max(1e-9);
        Summary {
            title: facts.title,
            reference_species: units.reference.label().into(),
            atoms: facts.atoms,
            steps: facts.steps,
            samples_used: used.len(),
            density: facts.density,
            potential_energy_per_atom: pe,
            pressure: p,
            temperature: t,
            relative_energy_drift: samples.last().map(|o| o.drift).unwrap_or(0.0),
            neighbour_list_builds: facts.neighbour_list_builds,
            atom_steps_per_second: facts.atoms as f64 * facts.steps_run as f64 / wall,
            wall_seconds: facts.wall_seconds,
            threads: facts.threads,
            equilibration: EquilibrationSummary {
                detected_start_step: detected,
                configured_start_step: facts.equilibration_steps,
                statistical_inefficiency: eq.inefficiency,
                effective_samples: eq.effective_samples,
                configured_start_too_early: detected > facts.equilibration_steps,
            },
            si,
            caution: MODEL_CAUTION,
            alarm: None,
            recoveries: None,
        }
    }

    /// Pretty JSON text. Non-finite numbers (e.g. the error of a single sample) become null.
    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).expect("summary serialises")
    }
}
