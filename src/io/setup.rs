//! Setup files (RON): the schema a user writes, its validation, and its reduction to a
//! [`SimulationSpec`] in reduced units.

use crate::io::numbers::{format_limit, format_number};
use crate::io::precision_setting::PrecisionSetting;
use crate::physics::lattice::whole_counts;
use crate::physics::{PotentialMode, SimulationSpec, Species, Thermostat, UnitSystem};
use serde::{Deserialize, Serialize};
use std::path::Path;

/// One species of the mixture and its share of the atoms.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SpeciesShare {
    pub kind: Species,
    /// Fraction of the atoms, 0 < share ≤ 1; shares add up to 1.
    pub share: f64,
}

/// Number or mass density of the box.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub enum Density {
    GramsPerCubicCentimetre(f64),
    KilogramsPerCubicMetre(f64),
    PerCubicNanometre(f64),
    /// ρσ³ of the reference species.
    Reduced(f64),
}

/// A temperature.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub enum Temperature {
    Kelvin(f64),
    /// k_B T / ε of the reference species.
    Reduced(f64),
}

/// A time span.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub enum Duration {
    Femtoseconds(f64),
    Picoseconds(f64),
    /// In τ = σ √(m/ε) of the reference species.
    Reduced(f64),
}

impl Duration {
    /// The number, in whatever unit the variant says.
    pub fn value(self) -> f64 {
        match self {
            Duration::Femtoseconds(v) | Duration::Picoseconds(v) | Duration::Reduced(v) => v,
        }
    }

    /// The same unit with another number.
    pub fn with_value(self, v: f64) -> Duration {
        match self {
            Duration::Femtoseconds(_) => Duration::Femtoseconds(v),
            Duration::Picoseconds(_) => Duration::Picoseconds(v),
            Duration::Reduced(_) => Duration::Reduced(v),
        }
    }

    /// Unit symbol for plain-text output.
    pub fn symbol(self) -> &'static str {
        match self {
            Duration::Femtoseconds(_) => "fs",
            Duration::Picoseconds(_) => "ps",
            Duration::Reduced(_) => "tau",
        }
    }
}

/// A length.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub enum Length {
    /// In σ of the reference species.
    Sigma(f64),
    Angstrom(f64),
}

impl Length {
    /// The same unit with another number.
    pub fn with_value(self, v: f64) -> Length {
        match self {
            Length::Sigma(_) => Length::Sigma(v),
            Length::Angstrom(_) => Length::Angstrom(v),
        }
    }
}

/// A rate (Langevin friction).
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub enum Rate {
    PerPicosecond(f64),
    /// In 1/τ.
    Reduced(f64),
}

/// Temperature control.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub enum ThermostatChoice {
    /// Stochastic velocity rescaling with the given relaxation time.
    StochasticRescale { relaxation: Duration },
    /// Langevin dynamics (BAOAB) with the given friction.
    Langevin { friction: Rate },
}

/// A bath target that changes linearly with the step: from the setup's `temperature` at step 0
/// to `to` at step `steps`, and `to` after that.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TemperatureRamp {
    pub to: Temperature,
    pub steps: u64,
}

/// How far g(r) reaches.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
pub enum RdfReach {
    /// Out to the cutoff, from the neighbour list (cheap).
    #[default]
    Cutoff,
    /// Out to half the box edge, over every pair of atoms (its cost grows as N²).
    HalfBox,
}

/// Most atoms for `rdf_reach: HalfBox`: every pair is visited, 2 × 10⁸ pairs a configuration
/// at this size.
pub const MAX_ATOMS_HALF_BOX_RDF: u64 = 20_000;

/// Ensemble of the run.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub enum Ensemble {
    /// Constant energy.
    Nve,
    /// Constant temperature at the setup's temperature.
    Nvt { thermostat: ThermostatChoice },
}

/// Where the atoms start.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub enum Start {
    /// On an fcc lattice filling the box (atoms of each species at random sites).
    #[default]
    Lattice,
    /// At the positions of an XYZ file ([`crate::io::start_file`]); a relative path is taken
    /// relative to the setup file.
    File { path: String },
}

/// One run, as written in a setup file.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Setup {
    #[serde(default)]
    pub title: String,
    /// Species and shares; the first listed is the reference for reduced units.
    pub species: Vec<SpeciesShare>,
    pub atoms: u64,
    pub density: Density,
    pub temperature: Temperature,
    pub timestep: Duration,
    pub cutoff: Length,
    #[serde(default = "default_skin")]
    pub skin: Length,
    #[serde(default)]
    pub potential: PotentialMode,
    #[serde(default)]
    pub tail_correction: bool,
    pub ensemble: Ensemble,
    #[serde(default)]
    pub seed: u64,
    pub steps: u64,
    /// Samples before this step are left out of averages.
    #[serde(default)]
    pub equilibration_steps: u64,
    #[serde(default = "default_sample_every")]
    pub sample_every: u64,
    /// Write an XYZ frame every this many steps.
    #[serde(default)]
    pub trajectory_every: Option<u64>,
    /// Add the configuration to the radial distribution function (rdf.csv) every this many
    /// steps, from `equilibration_steps` on; g(r) reaches out to the cutoff or, with
    /// `rdf_reach: HalfBox`, to half the box edge.
    #[serde(default)]
    pub rdf_every: Option<u64>,
    /// How far g(r) reaches: the cutoff (default) or half the box edge.
    #[serde(default, skip_serializing_if = "is_cutoff_reach")]
    pub rdf_reach: RdfReach,
    /// Add positions and velocities to the mean squared displacement and velocity
    /// autocorrelation (msd.csv, vacf.csv, both self-diffusion estimates) every this many
    /// steps, from `equilibration_steps` on.
    #[serde(default)]
    pub dynamics_every: Option<u64>,
    /// Add the atoms' speeds to the speed histograms (speeds.csv) every this many steps, from
    /// `equilibration_steps` on.
    #[serde(default)]
    pub speeds_every: Option<u64>,
    /// Lag window `(from, to)` of both self-diffusion estimates; None: from 0.1 to 0.4 of the
    /// span sampled.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub diffusion_window: Option<(Duration, Duration)>,
    /// Under a thermostat: move the bath target linearly from `temperature` to `to` over the
    /// first `steps` steps (heating a crystal through melting, cooling a liquid).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub temperature_ramp: Option<TemperatureRamp>,
    /// Stop once these standard errors are reached after the detected equilibration start
    /// (`steps` stays the upper limit); see [`crate::io::precision_setting`].
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub precision_targets: Vec<PrecisionSetting>,
    /// Headless runs recover from watchdog alarms (as `run --recover`): back to the last
    /// healthy snapshot with half the timestep, at most three times.
    #[serde(default)]
    pub recover: bool,
    /// Where the atoms start: `Lattice` (the default) or `File(path: "start.xyz")`; velocities
    /// are drawn from the temperature either way.
    #[serde(default)]
    pub start: Start,
}

fn is_cutoff_reach(r: &RdfReach) -> bool {
    *r == RdfReach::Cutoff
}

fn default_skin() -> Length {
    Length::Sigma(0.3)
}

fn default_sample_every() -> u64 {
    10
}

pub use super::ron_text::MAX_SETUP_BYTES;
/// Largest atom count a setup may ask for.
pub const MAX_ATOMS: u64 = 1_000_000;
/// Reduced density ρσ³ a setup may ask for: (smallest, largest).
pub const DENSITY_RANGE_REDUCED: (f64, f64) = (1e-6, 1.5);
/// Reduced temperature kT/ε a setup may ask for: (lowest, highest).
pub const TEMPERATURE_RANGE_REDUCED: (f64, f64) = (1e-3, 100.0);
/// Timestep a setup (and a tuning scan) may ask for, τ: (smallest, largest).
pub const TIMESTEP_RANGE_TAU: (f64, f64) = (1e-5, 0.05);
/// Cutoff a setup (and a tuning scan) may ask for before the box limit, σ: (shortest, longest).
pub const CUTOFF_RANGE_SIGMA: (f64, f64) = (1.0, 10.0);
/// Neighbour-list skin a setup may ask for, σ: (smallest, largest).
pub const SKIN_RANGE_SIGMA: (f64, f64) = (0.0, 2.0);
/// Largest number of species in one mixture.
pub const MAX_SPECIES: usize = 6;
/// Well depth ε/k_B a custom species may have, K: (smallest, largest). Helium's 10.22 K and
/// xenon's 221 K lie well inside; the bounds keep reduced temperatures and timesteps of a
/// mixture within what the other ranges can express.
pub const CUSTOM_EPSILON_RANGE_KELVIN: (f64, f64) = (1.0, 2000.0);
/// Size σ a custom species may have, Å: (smallest, largest).
pub const CUSTOM_SIGMA_RANGE_ANGSTROM: (f64, f64) = (1.0, 10.0);
/// Mass a custom species may have, Da: (lightest, heaviest).
pub const CUSTOM_MASS_RANGE_DALTON: (f64, f64) = (1.0, 1000.0);
/// Bytes per atom the engine needs besides the neighbour list's pairs: positions, velocities,
/// forces and types (73), the list's per-atom arrays (at most 48 at any density, see
/// `physics::neighbours`), a checkpoint being written (a copy of the state and its encoding,
/// 2 × 61) and the window's rewind buffer (up to 8 snapshots of 73, `engine::rewind`), rounded
/// up. Measured peak of a headless run without the rewind buffer: 234 bytes an atom at
/// ρ* = 1e-6 to 1e-2, 373 at 0.8442 (`/usr/bin/time -v`, 100,000 atoms, r_c = 2.5 σ).
pub const BYTES_PER_ATOM_ESTIMATE: u64 = 850;

/// Bytes per atom of a run at reduced density `density` with r_c + skin = `reach` (σ):
/// [`BYTES_PER_ATOM_ESTIMATE`] plus the neighbour list's pairs, 4 bytes each with up to 1/12
/// slack, (2/3)π ρ reach³ of them an atom in a uniform fluid, counted a tenth more for the
/// shells of a liquid or solid (measured at ρ* = 0.8442, r_c + skin = 2.8 σ: 37.7 pairs an atom,
/// 38.8 uniform). At ρ* = 1.5 and r_c + skin = 12 σ the pairs alone take about 26 kB an atom.
pub fn bytes_per_atom_estimate(density: f64, reach: f64) -> u64 {
    let pairs = 2.0 / 3.0 * std::f64::consts::PI * density * reach.powi(3);
    BYTES_PER_ATOM_ESTIMATE + (1.1 * pairs * 4.0 * 13.0 / 12.0).ceil() as u64
}

pub use super::setup_error::SetupError;

impl Setup {
    /// The precision targets in reduced units, validated (see
    /// [`super::precision_setting::reduce`]).
    pub fn precision_targets_reduced(&self) -> Result<Vec<crate::analysis::PrecisionTarget>, SetupError> {
        super::precision_setting::reduce(&self.precision_targets, self.units())
    }

    /// Parses setup text; `file` names it in error messages.
    pub fn parse(text: &str, file: &str) -> Result<Setup, SetupError> {
        super::ron_text::parse(text, file, ron::Options::default())
    }

    /// Reads and parses a setup file (not yet validated; see [`Setup::resolve`]).
    ///
    /// At most [`MAX_SETUP_BYTES`] are read (see [`super::ron_text::read_text`]); a longer file
    /// is an error naming its size.
    pub fn load(path: &Path) -> Result<Setup, SetupError> {
        let file = path.display().to_string();
        let text = super::ron_text::read_text(path, "a setup is a few hundred")?;
        let mut setup = Setup::parse(&text, &file)?;
        if let (Start::File { path: start }, Some(dir)) = (&mut setup.start, path.parent())
            && Path::new(start.as_str()).is_relative()
        {
            *start = dir.join(start.as_str()).display().to_string();
        }
        Ok(setup)
    }

    /// The setup as RON text, in the same layout users write.
    pub fn to_ron(&self) -> String {
        let cfg = ron::ser::PrettyConfig::new().struct_names(true).depth_limit(3);
        ron::ser::to_string_pretty(self, cfg).expect("a setup always serialises")
    }

    /// Reference species (first listed); `ReducedLJ` when the list is empty.
    pub fn reference(&self) -> Species {
        self.species.first().map(|s| s.kind).unwrap_or(Species::ReducedLJ)
    }

    /// Unit system of this setup.
    pub fn units(&self) -> UnitSystem {
        UnitSystem::new(self.reference())
    }

    /// Mean molar mass of the mixture relative to the reference species.
    fn mean_mass_ratio(&self) -> f64 {
        let m0 = self.reference().params().molar_mass;
        let total: f64 = self.species.iter().map(|s| s.share).sum();
        self.species
            .iter()
            .map(|s| s.share / total * s.kind.params().molar_mass / m0)
            .sum()
    }

    /// Reduced number density of a density value.
    pub fn reduced_density(&self, d: Density) -> Result<f64, SetupError> {
        let u = self.units();
        let real = |v: f64| -> Result<f64, SetupError> {
            if !u.has_real_units() {
                return Err(SetupError::field(
                    "density",
                    format!("{d:?}"),
                    "Reduced(…) for the reduced Lennard-Jones fluid",
                ));
            }
            Ok(v)
        };
        Ok(match d {
            Density::Reduced(x) => x,
            Density::PerCubicNanometre(x) => real(x)? / u.number_density_per_nm3(),
            Density::GramsPerCubicCentimetre(x) => {
                real(x)? / (u.mass_density_g_cm3() * self.mean_mass_ratio())
            }
            Density::KilogramsPerCubicMetre(x) => {
                real(x)? * 1e-3 / (u.mass_density_g_cm3() * self.mean_mass_ratio())
            }
        })
    }

    /// Reduced value of a temperature.
    pub fn reduced_temperature(&self, field: &str, t: Temperature) -> Result<f64, SetupError> {
        let u = self.units();
        Ok(match t {
            Temperature::Reduced(x) => x,
            Temperature::Kelvin(x) => {
                if !u.has_real_units() {
                    return Err(SetupError::field(
                        field,
                        format!("{t:?}"),
                        "Reduced(…) for the reduced Lennard-Jones fluid",
                    ));
                }
                x / u.temperature_kelvin()
            }
        })
    }

    /// Reduced value of a time span.
    pub fn reduced_duration(&self, field: &str, t: Duration) -> Result<f64, SetupError> {
        let u = self.units();
        let need_real = || {
            SetupError::field(
                field,
                format!("{t:?}"),
                "Reduced(…) for the reduced Lennard-Jones fluid",
            )
        };
        Ok(match t {
            Duration::Reduced(x) => x,
            Duration::Femtoseconds(x) if u.has_real_units() => x / u.tau_fs(),
            Duration::Picoseconds(x) if u.has_real_units() => x / u.tau_ps(),
            _ => return Err(need_real()),
        })
    }

    /// Reduced value of a length.
    pub fn reduced_length(&self, field: &str, l: Length) -> Result<f64, SetupError> {
        let u = self.units();
        Ok(match l {
            Length::Sigma(x) => x,
            Length::Angstrom(x) if u.has_real_units() => x / u.sigma_angstrom(),
            Length::Angstrom(_) => {
                return Err(SetupError::field(
                    field,
                    format!("{l:?}"),
                    "Sigma(…) for the reduced Lennard-Jones fluid",
                ));
            }
        })
    }

    /// Reduced value of a rate.
    pub fn reduced_rate(&self, field: &str, r: Rate) -> Result<f64, SetupError> {
        let u = self.units();
        Ok(match r {
            Rate::Reduced(x) => x,
            Rate::PerPicosecond(x) if u.has_real_units() => x * u.tau_ps(),
            Rate::PerPicosecond(_) => {
                return Err(SetupError::field(
                    field,
                    format!("{r:?}"),
                    "Reduced(…) for the reduced Lennard-Jones fluid",
                ));
            }
        })
    }

    /// Validates every field and reduces the setup to a spec in reduced units.
    ///
    /// Errors name the field, the value given and the allowed range. Pure: it reads nothing
    /// of the machine, so it may run every frame; whatever starts a simulation calls
    /// [`Setup::resolve_for_this_machine`] instead.
    pub fn resolve(&self) -> Result<SimulationSpec, SetupError> {
        self.check_species()?;
        if let Start::File { path } = &self.start
            && path.trim().is_empty()
        {
            return Err(SetupError::field("start.path", "\"\"", "the path of an XYZ file"));
        }
        if !(2..=MAX_ATOMS).contains(&self.atoms) {
            return Err(SetupError::field(
                "atoms",
                self.atoms,
                format!("2 to {MAX_ATOMS}"),
            ));
        }
        let density = self.reduced_density(self.density)?;
        in_range(
            "density",
            format!("{:?} = {} reduced", self.density, format_limit(density)),
            density,
            DENSITY_RANGE_REDUCED.0,
            DENSITY_RANGE_REDUCED.1,
            &format!(
                "reduced density ρσ³ from {} to {}",
                limit(DENSITY_RANGE_REDUCED.0),
                limit(DENSITY_RANGE_REDUCED.1)
            ),
        )?;
        let temperature = self.reduced_temperature("temperature", self.temperature)?;
        in_range(
            "temperature",
            format!("{:?} = {} reduced", self.temperature, format_limit(temperature)),
            temperature,
            TEMPERATURE_RANGE_REDUCED.0,
            TEMPERATURE_RANGE_REDUCED.1,
            &format!(
                "reduced temperature kT/ε from {} to {}",
                limit(TEMPERATURE_RANGE_REDUCED.0),
                limit(TEMPERATURE_RANGE_REDUCED.1)
            ),
        )?;
        let dt = self.reduced_duration("timestep", self.timestep)?;
        in_range(
            "timestep",
            format!("{:?} = {} τ", self.timestep, format_limit(dt)),
            dt,
            TIMESTEP_RANGE_TAU.0,
            TIMESTEP_RANGE_TAU.1,
            &format!(
                "{} τ to {} τ",
                limit(TIMESTEP_RANGE_TAU.0),
                limit(TIMESTEP_RANGE_TAU.1)
            ),
        )?;
        let cutoff = self.reduced_length("cutoff", self.cutoff)?;
        in_range(
            "cutoff",
            format!("{:?} = {} σ", self.cutoff, format_limit(cutoff)),
            cutoff,
            CUTOFF_RANGE_SIGMA.0,
            CUTOFF_RANGE_SIGMA.1,
            &format!(
                "{} σ to {} σ",
                limit(CUTOFF_RANGE_SIGMA.0),
                limit(CUTOFF_RANGE_SIGMA.1)
            ),
        )?;
        let skin = self.reduced_length("skin", self.skin)?;
        in_range(
            "skin",
            format!("{:?} = {} σ", self.skin, format_limit(skin)),
            skin,
            SKIN_RANGE_SIGMA.0,
            SKIN_RANGE_SIGMA.1,
            &format!(
                "{} σ to {} σ",
                limit(SKIN_RANGE_SIGMA.0),
                limit(SKIN_RANGE_SIGMA.1)
            ),
        )?;
        let thermostat = match self.ensemble {
            Ensemble::Nve => Thermostat::None,
            Ensemble::Nvt {
                thermostat: ThermostatChoice::StochasticRescale { relaxation },
            } => {
                let tau = self.reduced_duration("ensemble.relaxation", relaxation)?;
                in_range(
                    "ensemble.relaxation",
                    format!("{relaxation:?} = {} τ", format_limit(tau)),
                    tau,
                    dt,
                    1e4,
                    &format!("one timestep ({dt:.5} τ) to 10000 τ"),
                )?;
                Thermostat::StochasticRescale {
                    target: temperature,
                    tau,
                }
            }
            Ensemble::Nvt {
                thermostat: ThermostatChoice::Langevin { friction },
            } => {
                let gamma = self.reduced_rate("ensemble.friction", friction)?;
                in_range(
                    "ensemble.friction",
                    format!("{friction:?} = {} /τ", format_limit(gamma)),
                    gamma,
                    1e-4,
                    1.0 / dt,
                    &format!("1e-4 /τ to one per timestep ({:.1} /τ)", 1.0 / dt),
                )?;
                Thermostat::Langevin {
                    target: temperature,
                    gamma,
                }
            }
        };
        if self.steps == 0 || self.steps > 10_000_000_000 {
            return Err(SetupError::field("steps", self.steps, "1 to 10000000000"));
        }
        if self.sample_every == 0 || self.sample_every > self.steps {
            return Err(SetupError::field(
                "sample_every",
                self.sample_every,
                format!("1 to steps ({})", self.steps),
            ));
        }
        if self.equilibration_steps >= self.steps {
            return Err(SetupError::field(
                "equilibration_steps",
                self.equilibration_steps,
                format!("0 to steps − 1 ({})", self.steps - 1),
            ));
        }
        for (name, every) in [
            ("trajectory_every", self.trajectory_every),
            ("rdf_every", self.rdf_every),
        ] {
            if every == Some(0) {
                return Err(SetupError::field(name, "Some(0)", "None or Some(n) with n ≥ 1"));
            }
        }
        if self.rdf_reach == RdfReach::HalfBox && self.atoms > MAX_ATOMS_HALF_BOX_RDF {
            return Err(SetupError::field(
                "rdf_reach",
                format!("HalfBox with {} atoms", self.atoms),
                format!("HalfBox up to {MAX_ATOMS_HALF_BOX_RDF} atoms (every pair is visited), or Cutoff"),
            ));
        }
        for (name, every) in [
            ("dynamics_every", self.dynamics_every),
            ("speeds_every", self.speeds_every),
        ] {
            if let Some(n) = every
                && (n == 0 || n > self.steps)
            {
                return Err(SetupError::field(
                    name,
                    format!("Some({n})"),
                    format!("None or Some(n) with 1 ≤ n ≤ steps ({})", self.steps),
                ));
            }
        }
        if let Some(r) = self.temperature_ramp {
            self.ramp_end(r)?;
        }
        self.diffusion_window_tau()?;
        self.precision_targets_reduced()?;
        let shares: Vec<f64> = self.species.iter().map(|s| s.share).collect();
        let spec = SimulationSpec {
            kinds: self.species.iter().map(|s| s.kind).collect(),
            counts: whole_counts(&shares, self.atoms as usize),
            density,
            temperature,
            timestep: dt,
            cutoff,
            skin,
            potential: self.potential,
            tail_correction: self.tail_correction,
            thermostat,
            seed: self.seed,
        };
        if let Some(i) = spec.counts.iter().position(|&c| c == 0) {
            let n = self.atoms;
            let one = format!("{:.2e}", 1.0 / n as f64)
                .parse::<f64>()
                .unwrap_or(1.0 / n as f64);
            return Err(SetupError::field(
                &format!("species[{i}].share"),
                format!("{:?} (gives 0 of {n} atoms)", self.species[i].share),
                format!("at least 1/{n} ≈ {one:?} so that the species has one atom, or more atoms"),
            ));
        }
        spec.check()?;
        Ok(spec)
    }

    /// The diffusion fit window in τ, validated: both ends convert, 0 ≤ from < to.
    pub fn diffusion_window_tau(&self) -> Result<Option<[f64; 2]>, SetupError> {
        let Some((a, b)) = self.diffusion_window else {
            return Ok(None);
        };
        let from = self.reduced_duration("diffusion_window", a)?;
        let to = self.reduced_duration("diffusion_window", b)?;
        if !(from >= 0.0 && to > from && to.is_finite()) {
            return Err(SetupError::field(
                "diffusion_window",
                format!(
                    "({a:?}, {b:?}) = {} τ to {} τ",
                    format_limit(from),
                    format_limit(to)
                ),
                "(from, to) with 0 ≤ from < to",
            ));
        }
        Ok(Some([from, to]))
    }

    /// The reduced end temperature of a ramp, validated: a thermostat must run, the end
    /// temperature lies in the range the start temperature may have, and the ramp lasts
    /// 1 to `steps` steps.
    fn ramp_end(&self, r: TemperatureRamp) -> Result<f64, SetupError> {
        if self.ensemble == Ensemble::Nve {
            return Err(SetupError::field(
                "temperature_ramp",
                format!("{r:?} with ensemble Nve"),
                "None under Nve; a ramp moves the target of a thermostat (Nvt)",
            ));
        }
        let to = self.reduced_temperature("temperature_ramp.to", r.to)?;
        in_range(
            "temperature_ramp.to",
            format!("{:?} = {} reduced", r.to, format_limit(to)),
            to,
            TEMPERATURE_RANGE_REDUCED.0,
            TEMPERATURE_RANGE_REDUCED.1,
            &format!(
                "reduced temperature kT/ε from {} to {}",
                limit(TEMPERATURE_RANGE_REDUCED.0),
                limit(TEMPERATURE_RANGE_REDUCED.1)
            ),
        )?;
        if r.steps == 0 || r.steps > self.steps {
            return Err(SetupError::field(
                "temperature_ramp.steps",
                r.steps,
                format!("1 to steps ({})", self.steps),
            ));
        }
        Ok(to)
    }

    /// The bath target (reduced) at `step` under the setup's ramp, or None without a valid
    /// ramp: linear from `temperature` at step 0 to the ramp's end at its last step.
    pub fn ramp_target(&self, step: u64) -> Option<f64> {
        let r = self.temperature_ramp?;
        let to = self.ramp_end(r).ok()?;
        let from = self.reduced_temperature("temperature", self.temperature).ok()?;
        let f = (step as f64 / r.steps as f64).min(1.0);
        Some(from + (to - from) * f)
    }

    /// [`Setup::resolve`], then [`Setup::check_memory_available`]: for every place that starts
    /// a simulation.
    pub fn resolve_for_this_machine(&self) -> Result<SimulationSpec, SetupError> {
        let spec = self.resolve()?;
        check_memory(
            self.atoms,
            bytes_per_atom_estimate(spec.density, spec.cutoff + spec.skin),
        )?;
        Ok(spec)
    }

    /// Refuses an atom count whose arrays would not fit in the memory the machine has free now
    /// (reads /proc/meminfo; passes where there is none), counting the neighbour list at the
    /// setup's density and reach ([`bytes_per_atom_estimate`]). The error names the `atoms`
    /// field; a setup that does not validate gives its validation error.
    pub fn check_memory_available(&self) -> Result<(), SetupError> {
        self.resolve_for_this_machine().map(|_| ())
    }

    fn check_species(&self) -> Result<(), SetupError> {
        let n = self.species.len();
        if n == 0 || n > MAX_SPECIES {
            return Err(SetupError::field(
                "species",
                format!("{n} entries"),
                format!("1 to {MAX_SPECIES} species"),
            ));
        }
        for (i, s) in self.species.iter().enumerate() {
            if !(s.share > 0.0 && s.share <= 1.0) {
                return Err(SetupError::field(
                    &format!("species[{i}].share"),
                    s.share,
                    "0 < share ≤ 1",
                ));
            }
            if self.species[..i].iter().any(|o| o.kind == s.kind) {
                return Err(SetupError::field(
                    &format!("species[{i}].kind"),
                    format!("{:?} (listed twice)", s.kind),
                    "each species at most once",
                ));
            }
            if let Species::Custom {
                name,
                epsilon,
                sigma,
                mass,
            } = s.kind
            {
                let field = |f: &str| format!("species[{i}].kind.{f}");
                let bytes = name.given_len();
                if !name.fits()
                    || name.as_str().trim().is_empty()
                    || name.as_str().chars().any(char::is_control)
                {
                    return Err(SetupError::field(
                        &field("name"),
                        format!("{name:?} ({bytes} bytes)"),
                        format!(
                            "1 to {} bytes of text without control characters",
                            crate::physics::species::SpeciesName::CAPACITY
                        ),
                    ));
                }
                let (lo, hi) = CUSTOM_EPSILON_RANGE_KELVIN;
                let kj = |k: f64| format_limit(k * crate::physics::units::GAS_CONSTANT * 1e-3);
                in_range(
                    &field("epsilon"),
                    format!("{epsilon:?} = {} K", format_limit(epsilon.kelvin())),
                    epsilon.kelvin(),
                    lo,
                    hi,
                    &format!(
                        "ε/k_B from {} K to {} K ({} to {} kJ/mol)",
                        limit(lo),
                        limit(hi),
                        kj(lo),
                        kj(hi)
                    ),
                )?;
                let (lo, hi) = CUSTOM_SIGMA_RANGE_ANGSTROM;
                in_range(
                    &field("sigma"),
                    format!("{sigma:?} = {} Å", format_limit(sigma.angstrom())),
                    sigma.angstrom(),
                    lo,
                    hi,
                    &format!(
                        "{} Å to {} Å ({} nm to {} nm)",
                        limit(lo),
                        limit(hi),
                        limit(lo / 10.0),
                        limit(hi / 10.0)
                    ),
                )?;
                let (lo, hi) = CUSTOM_MASS_RANGE_DALTON;
                in_range(
                    &field("mass"),
                    format!("{mass:?}"),
                    mass.grams_per_mole(),
                    lo,
                    hi,
                    &format!("{} Da to {} Da", limit(lo), limit(hi)),
                )?;
                if self.species[..i].iter().any(|o| o.kind.label() == name.as_str()) {
                    return Err(SetupError::field(
                        &field("name"),
                        format!("{name:?} (named twice)"),
                        "a name no other species of the setup has",
                    ));
                }
            }
            if n > 1 && s.kind == Species::ReducedLJ {
                return Err(SetupError::field(
                    &format!("species[{i}].kind"),
                    "ReducedLJ in a mixture",
                    "ReducedLJ only on its own",
                ));
            }
        }
        let sum: f64 = self.species.iter().map(|s| s.share).sum();
        if (sum - 1.0).abs() > 1e-6 {
            return Err(SetupError::field(
                "species",
                format!("shares adding up to {sum}"),
                "shares adding up to 1 (within 1e-6)",
            ));
        }
        Ok(())
    }

    /// Notes for the user that are not errors (e.g. quantum effects at low temperature).
    pub fn cautions(&self) -> Vec<String> {
        let mut notes = Vec::new();
        let Ok(t) = self.reduced_temperature("temperature", self.temperature) else {
            return notes;
        };
        let t_ref_k = self.units().temperature_kelvin();
        for s in &self.species {
            if let Some(limit) = s.kind.quantum_warning_below_kelvin() {
                let kelvin = t * t_ref_k;
                if kelvin < limit {
                    // The temperature as the user gave it (0.0102 K, not "0 K").
                    let given = match self.temperature {
                        Temperature::Kelvin(k) => format!("{} K", format_number(k)),
                        Temperature::Reduced(r) => {
                            format!("kT/ε = {} (about {} K)", format_number(r), format_number(kelvin))
                        }
                    };
                    notes.push(format!(
                        "{} at {given}: classical dynamics misses quantum effects (zero-point motion, exchange) that are large here; treat results as qualitative.",
                        s.kind.label()
                    ));
                }
            }
        }
        notes
    }
}

/// A limit as written in the allowed range of an error: shortest round-trip form without a
/// trailing ".0" (1e-5, 0.05, 10).
fn limit(v: f64) -> String {
    let t = format!("{v:?}");
    t.strip_suffix(".0").map(str::to_string).unwrap_or(t)
}

fn in_range(field: &str, shown: String, v: f64, lo: f64, hi: f64, allowed: &str) -> Result<(), SetupError> {
    if v.is_finite() && v >= lo && v <= hi {
        Ok(())
    } else {
        Err(SetupError::field(field, shown, allowed))
    }
}

/// Refuses atom counts whose arrays would not fit in the memory the machine has free.
fn check_memory(atoms: u64, per_atom: u64) -> Result<(), SetupError> {
    let need = atoms.saturating_mul(per_atom);
    if let Some(available) = available_memory_bytes()
        && need > available
    {
        return Err(SetupError::field(
            "atoms",
            format!("{atoms} (needs about {} MB)", need / 1_000_000),
            format!(
                "at most {} atoms with the {} MB of memory available now",
                available / per_atom,
                available / 1_000_000
            ),
        ));
    }
    Ok(())
}

/// MemAvailable from /proc/meminfo, where there is one.
pub fn available_memory_bytes() -> Option<u64> {
    let text = std::fs::read_to_string("/proc/meminfo").ok()?;
    let line = text.lines().find(|l| l.starts_with("MemAvailable:"))?;
    let kb: u64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kb * 1024)
}
