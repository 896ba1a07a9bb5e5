//! `summary.json`: averages of a finished run with their standard errors.

use crate::analysis::{Diffusion, Estimate, SpeedHistogram, block_average, detect_equilibration};
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
    /// σ²/τ; present when the run sampled its dynamics (`dynamics_every`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub self_diffusion: Option<SelfDiffusion>,
    /// Present when the run took speed histograms (`speeds_every`).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub speeds: Vec<SpeedsSummary>,
    pub caution: &'static str,
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
            self_diffusion: None,
            speeds: Vec::new(),
            caution: MODEL_CAUTION,
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
