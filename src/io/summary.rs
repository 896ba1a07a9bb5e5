//! `summary.json`: averages of a finished run with their standard errors.

use crate::analysis::eos_reference::{EosComparison, TemperatureSource};
use crate::analysis::{
    Diffusion, Estimate, Evidence, Quantity, SampleStore, SpeedHistogram, TargetProgress, block_average,
};
use crate::physics::UnitSystem;
use crate::physics::lj_eos::Region;
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
    /// cm²/s, fit window in ps; present when the run sampled its dynamics.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub self_diffusion: Option<SelfDiffusion>,
    pub units: SiUnits,
}

/// The self-diffusion coefficient of all atoms followed, two ways (see
/// `analysis::diffusion`): reduced units σ²/τ with the window in τ, or under `si` cm²/s with
/// the window in ps.
#[derive(Clone, Copy, Debug, Serialize)]
pub struct SelfDiffusion {
    pub einstein: Estimate,
    pub green_kubo: Estimate,
    /// Lags of the Einstein fit and of the Green–Kubo plateau: [from, to].
    pub fit_window: [f64; 2],
    /// Blocks of time origins behind the standard errors.
    pub blocks: usize,
    /// False when the two estimates differ by more than twice their combined error: too short
    /// a run, too coarse `dynamics_every`, or a thermostat disturbing the dynamics (Langevin
    /// friction and fast stochastic rescaling change D; measure it in NVE).
    pub estimates_agree: bool,
}

/// The speed histogram of one species against Maxwell–Boltzmann.
#[derive(Clone, Debug, Serialize)]
pub struct SpeedsSummary {
    pub species: String,
    /// Mean kinetic temperature of the configurations, reduced.
    pub temperature: f64,
    /// Largest distance between measured and Maxwell–Boltzmann cumulative distributions.
    pub ks_distance: f64,
    /// Its 1 % critical value for one configuration's atoms, were they independent.
    pub ks_critical_one_frame: f64,
    pub speeds_counted: u64,
}

/// Unit labels of [`SiSummary`].
#[derive(Clone, Debug, Serialize)]
pub struct SiUnits {
    pub potential_energy_per_atom: &'static str,
    pub pressure: &'static str,
    pub temperature: &'static str,
    pub density: &'static str,
    pub self_diffusion: &'static str,
}

/// Equilibration detected on the run's samples.
#[derive(Clone, Debug, Serialize)]
pub struct EquilibrationSummary {
    /// First step that automated detection (Chodera 2016) counts as equilibrated: the latest of
    /// the starts detected on temperature, pressure, potential energy (and total energy with a
    /// bath), on at most 100 candidate starts after the first 1 % of samples.
    pub detected_start_step: u64,
    /// The setup's `equilibration_steps`, for comparison.
    pub configured_start_step: u64,
    /// Of the potential energy from the detected start, in samples.
    pub statistical_inefficiency: f64,
    pub effective_samples: f64,
    /// True when the detected start lies after the configured one: averages may include drift.
    pub configured_start_too_early: bool,
    /// True when every deciding quantity is equilibrated.
    pub equilibrated: bool,
    /// The overall verdict in words.
    pub verdict: String,
}

/// Statistics of one quantity from the detected equilibration start.
#[derive(Clone, Copy, Debug, Serialize)]
pub struct QuantitySummary {
    pub mean: f64,
    /// √(σ² g / n).
    pub stderr: f64,
    /// g, in samples (`sample_every` steps each).
    pub statistical_inefficiency: f64,
    pub effective_samples: f64,
    pub start_step: u64,
    /// The means of the first and last thirds after the start differ by more than 3 combined
    /// standard errors.
    pub drifting: bool,
    /// "equilibrated", "drifting" or "not yet".
    pub verdict: &'static str,
    /// The plateau of the block-averaging curve (Flyvbjerg & Petersen 1989), beside `stderr`.
    pub block_stderr: f64,
}

/// [`QuantitySummary`] of each followed quantity (reduced units, energies per atom).
#[derive(Clone, Copy, Debug, Serialize)]
pub struct QuantitiesSummary {
    pub temperature: QuantitySummary,
    pub pressure: QuantitySummary,
    pub potential_energy_per_atom: QuantitySummary,
    pub total_energy_per_atom: QuantitySummary,
    pub conserved_energy_per_atom: QuantitySummary,
}

/// Why a run stopped.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum StopReason {
    /// It ran its steps.
    Steps,
    /// Every precision target was met.
    Precision,
    /// The watchdog stopped it.
    Alarm,
    /// The user stopped it (Ctrl-C).
    Interrupted,
}

/// One precision target at the end of the run.
#[derive(Clone, Debug, Serialize)]
pub struct PrecisionSummary {
    pub quantity: &'static str,
    /// The target, reduced units.
    pub target_stderr: f64,
    pub stderr: f64,
    pub met: bool,
}

/// The published equation of state at the run's state (single-species runs).
#[derive(Clone, Debug, Serialize)]
pub struct EquationOfStateSummary {
    /// Pressure and residual energy per atom of Thol et al. (2016); null when not shown.
    pub pressure: Option<f64>,
    pub residual_energy: Option<f64>,
    /// "vapour", "liquid", "supercritical", "two-phase" or "outside the validated range".
    pub region: &'static str,
    /// Why the values are null, if they are.
    pub not_shown_because: Option<&'static str>,
    pub temperature: f64,
    /// "bath" or "running mean".
    pub temperature_from: &'static str,
    pub density: f64,
    /// The run's full-potential estimates (shift added back, tail corrections), to compare.
    pub run_full_potential_pressure: Estimate,
    pub run_full_potential_residual_energy: Estimate,
}

/// Everything in `summary.json`; values in reduced units of the reference species.
#[derive(Clone, Debug, Serialize)]
pub struct Summary {
    pub title: String,
    pub reference_species: String,
    pub atoms: usize,
    pub steps: u64,
    /// Samples at or after `equilibration_steps` (the averages just below).
    pub samples_used: u64,
    pub density: f64,
    /// Averages from the setup's `equilibration_steps` on (block averaging); see `quantities`
    /// for the averages from the detected start.
    pub potential_energy_per_atom: Estimate,
    pub pressure: Estimate,
    pub temperature: Estimate,
    pub relative_energy_drift: f64,
    pub neighbour_list_builds: u64,
    pub atom_steps_per_second: f64,
    pub wall_seconds: f64,
    pub threads: usize,
    pub equilibration: EquilibrationSummary,
    pub quantities: QuantitiesSummary,
    pub stopped_because: StopReason,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub precision_targets: Vec<PrecisionSummary>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub equation_of_state: Option<EquationOfStateSummary>,
    pub si: Option<SiSummary>,
    /// σ²/τ; present when the run sampled its dynamics (`dynamics_every`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub self_diffusion: Option<SelfDiffusion>,
    /// Present when the run took speed histograms (`speeds_every`).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub speeds: Vec<SpeedsSummary>,
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
    /// Relative drift of the conserved energy at the last sample.
    pub relative_energy_drift: f64,
    pub stopped_because: StopReason,
    pub precision: Vec<TargetProgress>,
    /// For single-species runs.
    pub equation_of_state: Option<EosComparison>,
}

fn quantity_summary(e: &Evidence, q: Quantity) -> QuantitySummary {
    let r = e.row(q);
    QuantitySummary {
        mean: r.stats.mean,
        stderr: r.stats.stderr,
        statistical_inefficiency: r.inefficiency_in_samples(e.width),
        effective_samples: r.stats.effective_samples,
        start_step: e.start_step,
        drifting: r.drifting(),
        verdict: r.verdict.short(),
        block_stderr: r.stats.block_plateau,
    }
}

impl Summary {
    /// The summary of a run from its samples and their evidence (automatic start).
    pub fn new(store: &SampleStore, evidence: &Evidence, units: UnitSystem, facts: RunFacts) -> Summary {
        let first = store.steps().partition_point(|&s| s < facts.equilibration_steps);
        let est = |q: Quantity| block_average(&store.values(q)[first..]);
        let pe = est(Quantity::PotentialEnergy);
        let p = est(Quantity::Pressure);
        let t = est(Quantity::Temperature);
        let scale = |e: Estimate, k: f64| Estimate {
            mean: e.mean * k,
            stderr: e.stderr * k,
        };
        let si = units.has_real_units().then(|| SiSummary {
            potential_energy_per_atom: scale(pe, units.energy_kj_mol()),
            pressure: scale(p, units.pressure_bar()),
            temperature: scale(t, units.temperature_kelvin()),
            density: facts.mass_density_g_cm3.unwrap_or(f64::NAN),
            self_diffusion: None,
            units: SiUnits {
                potential_energy_per_atom: "kJ/mol",
                pressure: "bar",
                temperature: "K",
                density: "g/cm^3",
                self_diffusion: "cm^2/s",
            },
        });
        let wall = facts.wall_seconds.max(1e-9);
        let pe_row = evidence.row(Quantity::PotentialEnergy);
        let detected = evidence.start_step;
        let time_text = |t: f64| format!("{} τ", crate::io::numbers::significant(t, 4));
        Summary {
            title: facts.title,
            reference_species: units.reference.label().into(),
            atoms: facts.atoms,
            steps: facts.steps,
            samples_used: (store.len() - first) as u64 * store.width(),
            density: facts.density,
            potential_energy_per_atom: pe,
            pressure: p,
            temperature: t,
            relative_energy_drift: facts.relative_energy_drift,
            neighbour_list_builds: facts.neighbour_list_builds,
            atom_steps_per_second: facts.atoms as f64 * facts.steps_run as f64 / wall,
            wall_seconds: facts.wall_seconds,
            threads: facts.threads,
            equilibration: EquilibrationSummary {
                detected_start_step: detected,
                configured_start_step: facts.equilibration_steps,
                statistical_inefficiency: pe_row.inefficiency_in_samples(evidence.width),
                effective_samples: pe_row.stats.effective_samples,
                configured_start_too_early: detected > facts.equilibration_steps,
                equilibrated: evidence.overall.is_equilibrated(),
                verdict: evidence.overall.words(time_text),
            },
            quantities: QuantitiesSummary {
                temperature: quantity_summary(evidence, Quantity::Temperature),
                pressure: quantity_summary(evidence, Quantity::Pressure),
                potential_energy_per_atom: quantity_summary(evidence, Quantity::PotentialEnergy),
                total_energy_per_atom: quantity_summary(evidence, Quantity::TotalEnergy),
                conserved_energy_per_atom: quantity_summary(evidence, Quantity::ConservedEnergy),
            },
            stopped_because: facts.stopped_because,
            precision_targets: facts
                .precision
                .iter()
                .map(|p| PrecisionSummary {
                    quantity: p.target.quantity.key(),
                    target_stderr: p.target.stderr,
                    stderr: p.stderr,
                    met: p.met,
                })
                .collect(),
            equation_of_state: facts.equation_of_state.map(|c| EquationOfStateSummary {
                pressure: c.pressure,
                residual_energy: c.residual_energy,
                region: c
                    .region
                    .map(|r| r.word())
                    .unwrap_or(Region::OutsideValidatedRange.word()),
                not_shown_because: c.hidden.map(|h| h.words()),
                temperature: c.temperature,
                temperature_from: match c.temperature_source {
                    TemperatureSource::Bath => "bath",
                    TemperatureSource::RunningMean => "running mean",
                },
                density: c.density,
                run_full_potential_pressure: c.run_pressure,
                run_full_potential_residual_energy: c.run_residual_energy,
            }),
            si,
            self_diffusion: None,
            speeds: Vec::new(),
            caution: MODEL_CAUTION,
            alarm: None,
            recoveries: None,
        }
    }

    /// Adds the self-diffusion estimates and the speed fits (species named by `labels`).
    pub fn add_motion(
        &mut self,
        diffusion: Option<Diffusion>,
        speeds: Option<&SpeedHistogram>,
        labels: &[String],
        units: UnitSystem,
    ) {
        let scaled = |d: &Diffusion, k: f64, t: f64| SelfDiffusion {
            einstein: Estimate {
                mean: d.einstein.mean * k,
                stderr: d.einstein.stderr * k,
            },
            green_kubo: Estimate {
                mean: d.green_kubo.mean * k,
                stderr: d.green_kubo.stderr * k,
            },
            fit_window: [d.window.from * t, d.window.to * t],
            blocks: d.blocks,
            estimates_agree: d.estimates_agree(),
        };
        if let Some(d) = diffusion {
            self.self_diffusion = Some(scaled(&d, 1.0, 1.0));
            if let Some(si) = self.si.as_mut() {
                si.self_diffusion = Some(scaled(&d, units.diffusion_cm2_s(), units.tau_ps()));
            }
        }
        if let Some(h) = speeds {
            self.speeds = labels
                .iter()
                .enumerate()
                .filter_map(|(t, l)| {
                    h.fit(t).map(|f| SpeedsSummary {
                        species: l.clone(),
                        temperature: f.temperature,
                        ks_distance: f.ks_distance,
                        ks_critical_one_frame: f.ks_critical_one_frame,
                        speeds_counted: f.speeds,
                    })
                })
                .collect();
        }
    }

    /// Pretty JSON text. Non-finite numbers (e.g. the error of a single sample) become null.
    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).expect("summary serialises")
    }
}
