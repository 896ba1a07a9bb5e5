//! The `precision_targets` field of a setup: standard errors at which a run stops by itself.
//!
//! ```text
//! precision_targets: [
//!     (quantity: Pressure, stderr: Reduced(0.005)),
//!     (quantity: PotentialEnergy, stderr: KiloJoulesPerMole(0.01)),
//! ]
//! ```

use super::setup_error::SetupError;
use crate::analysis::{PrecisionTarget, Quantity};
use crate::io::numbers::format_number;
use crate::physics::UnitSystem;
use serde::{Deserialize, Serialize};

/// A standard error, in reduced units or a unit that fits its quantity.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub enum StandardError {
    /// Reduced units of the quantity (kT/ε, Pσ³/ε, E/ε per atom).
    Reduced(f64),
    /// Temperature only.
    Kelvin(f64),
    /// Pressure only.
    Bar(f64),
    /// Pressure only.
    Megapascal(f64),
    /// Energies per atom only.
    KiloJoulesPerMole(f64),
}

impl StandardError {
    /// The number, in whatever unit the variant says.
    pub fn value(self) -> f64 {
        match self {
            StandardError::Reduced(v)
            | StandardError::Kelvin(v)
            | StandardError::Bar(v)
            | StandardError::Megapascal(v)
            | StandardError::KiloJoulesPerMole(v) => v,
        }
    }
}

/// One entry of `precision_targets`.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PrecisionSetting {
    pub quantity: Quantity,
    pub stderr: StandardError,
}

/// Most targets a setup may name (one per quantity).
pub const MAX_PRECISION_TARGETS: usize = 5;
/// Smallest reduced standard error a target may ask for: below it the last digits of a double
/// mean over ~10⁸ samples are noise (common practice).
pub const SMALLEST_TARGET_REDUCED: f64 = 1e-9;

/// The targets in reduced units of `u`, validated: each quantity at most once, a positive
/// finite value, a unit that fits the quantity, real units only for real species.
pub fn reduce(targets: &[PrecisionSetting], u: UnitSystem) -> Result<Vec<PrecisionTarget>, SetupError> {
    {
        if targets.len() > MAX_PRECISION_TARGETS {
            return Err(SetupError::Field {
                field: "precision_targets".into(),
                value: format!("{} entries", targets.len()),
                allowed: format!("at most {MAX_PRECISION_TARGETS}, one per quantity"),
            });
        }
        let mut out = Vec::new();
        for (i, t) in targets.iter().enumerate() {
            let field = format!("precision_targets[{i}].stderr");
            let bad = |allowed: String| SetupError::Field {
                field: field.clone(),
                value: format!("{:?}", t.stderr),
                allowed,
            };
            if targets[..i].iter().any(|o| o.quantity == t.quantity) {
                return Err(SetupError::Field {
                    field: format!("precision_targets[{i}].quantity"),
                    value: format!("{:?} (listed twice)", t.quantity),
                    allowed: "each quantity at most once".into(),
                });
            }
            let real = u.has_real_units();
            let energy = matches!(
                t.quantity,
                Quantity::PotentialEnergy | Quantity::TotalEnergy | Quantity::ConservedEnergy
            );
            let units_allowed = match (t.quantity, real) {
                (_, false) => "Reduced(…) for the reduced Lennard-Jones fluid",
                (Quantity::Temperature, true) => "Reduced(…) or Kelvin(…) for a temperature",
                (Quantity::Pressure, true) => "Reduced(…), Bar(…) or Megapascal(…) for a pressure",
                _ => "Reduced(…) or KiloJoulesPerMole(…) for an energy per atom",
            };
            let reduced = match t.stderr {
                StandardError::Reduced(v) => v,
                StandardError::Kelvin(v) if real && t.quantity == Quantity::Temperature => {
                    v / u.temperature_kelvin()
                }
                StandardError::Bar(v) if real && t.quantity == Quantity::Pressure => v / u.pressure_bar(),
                StandardError::Megapascal(v) if real && t.quantity == Quantity::Pressure => {
                    v * 10.0 / u.pressure_bar()
                }
                StandardError::KiloJoulesPerMole(v) if real && energy => v / u.energy_kj_mol(),
                _ => return Err(bad(units_allowed.into())),
            };
            if !(reduced.is_finite() && reduced >= SMALLEST_TARGET_REDUCED) || t.stderr.value() <= 0.0 {
                return Err(bad(format!(
                    "a standard error above zero, at least {} in reduced units",
                    format_number(SMALLEST_TARGET_REDUCED)
                )));
            }
            out.push(PrecisionTarget {
                quantity: t.quantity,
                stderr: reduced,
            });
        }
        Ok(out)
    }
}
