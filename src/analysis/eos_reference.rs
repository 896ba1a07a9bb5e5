//! The published equation of state of the Lennard-Jones fluid beside a run: its pressure and
//! residual energy at the run's state, next to the run's full-potential estimates.
//!
//! The equation (Thol et al., J. Phys. Chem. Ref. Data 45, 023101, 2016; `physics::lj_eos`)
//! describes the full, untruncated potential, so it is compared with the run's full-potential
//! estimates ([`Quantity::FullPressure`], [`Quantity::FullPotentialEnergy`]), never with the
//! truncated values the run integrates.

use super::blocking::Estimate;
use super::evidence::Evidence;
use super::quantity::Quantity;
use crate::physics::lj_eos::{Eos, Region};
use serde::{Deserialize, Serialize};

/// Where the temperature of the comparison comes from.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub enum TemperatureSource {
    /// The bath's target (NVT).
    Bath,
    /// The run's mean kinetic temperature after the equilibration start (NVE).
    RunningMean,
}

/// Why the equation's values are not shown beside the run.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub enum Hidden {
    /// A mixture: the equation is for one species.
    Mixture,
    /// The force-shifted potential changes the forces inside the cutoff; the run has no
    /// full-potential estimate to compare.
    ShiftedForce,
    /// The state lies outside the temperatures or pressures the equation was validated for.
    OutsideValidatedRange,
    /// The state lies between the saturated densities: a homogeneous fluid there is not stable.
    TwoPhase,
    /// No temperature yet (no samples after the start).
    NoTemperature,
}

impl Hidden {
    /// The reason in words.
    pub fn words(self) -> &'static str {
        match self {
            Hidden::Mixture => "not shown for mixtures: the equation of state is for one species",
            Hidden::ShiftedForce => {
                "not shown: the force-shifted potential changes forces inside the cutoff, so the run has no full-potential estimate"
            }
            Hidden::OutsideValidatedRange => {
                "not shown: the state lies outside the range the equation of state was validated for"
            }
            Hidden::TwoPhase => {
                "not shown: the state lies inside the vapour–liquid two-phase region, where a homogeneous fluid is not stable"
            }
            Hidden::NoTemperature => "not shown yet: no samples after the equilibration start",
        }
    }
}

/// The equation's values at the run's state, with the run's estimates beside them.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct EosComparison {
    /// T* and ρ* used.
    pub temperature: f64,
    pub temperature_source: TemperatureSource,
    pub density: f64,
    /// `None` when the equation cannot be evaluated at all (a temperature out of its input range).
    pub region: Option<Region>,
    /// p* and u_res* (per atom) of the equation; `None` when hidden.
    pub pressure: Option<f64>,
    pub residual_energy: Option<f64>,
    /// Why the values are hidden, if they are.
    pub hidden: Option<Hidden>,
    /// The run's full-potential estimates (mean ± standard error after the start).
    pub run_pressure: Estimate,
    pub run_residual_energy: Estimate,
}

/// What the comparison needs to know about the run besides its evidence.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RunState {
    /// ρ* of the box.
    pub density: f64,
    /// The bath's T* in NVT, `None` in NVE.
    pub bath_temperature: Option<f64>,
    pub single_species: bool,
    pub shifted_force: bool,
}

/// The comparison for `run` with `evidence`.
pub fn compare(evidence: &Evidence, run: RunState) -> EosComparison {
    let est = |q: Quantity| {
        let s = &evidence.row(q).stats;
        Estimate {
            mean: s.mean,
            stderr: s.stderr,
        }
    };
    let (temperature, temperature_source) = match run.bath_temperature {
        Some(t) => (t, TemperatureSource::Bath),
        None => (
            evidence.row(Quantity::Temperature).stats.mean,
            TemperatureSource::RunningMean,
        ),
    };
    let mut out = EosComparison {
        temperature,
        temperature_source,
        density: run.density,
        region: None,
        pressure: None,
        residual_energy: None,
        hidden: None,
        run_pressure: est(Quantity::FullPressure),
        run_residual_energy: est(Quantity::FullPotentialEnergy),
    };
    let hide = |mut o: EosComparison, why| {
        o.hidden = Some(why);
        o
    };
    if !run.single_species {
        return hide(out, Hidden::Mixture);
    }
    if !temperature.is_finite() {
        return hide(out, Hidden::NoTemperature);
    }
    let (Ok(props), Ok(region)) = (
        Eos::properties(temperature, run.density),
        Eos::region(temperature, run.density),
    ) else {
        return hide(out, Hidden::OutsideValidatedRange);
    };
    out.region = Some(region);
    if run.shifted_force {
        return hide(out, Hidden::ShiftedForce);
    }
    match region {
        Region::OutsideValidatedRange => hide(out, Hidden::OutsideValidatedRange),
        Region::TwoPhase => hide(out, Hidden::TwoPhase),
        _ => {
            out.pressure = Some(props.pressure);
            out.residual_energy = Some(props.residual_energy);
            out
        }
    }
}
