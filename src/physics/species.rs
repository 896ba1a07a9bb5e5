//! The noble-gas species and their Lennard-Jones parameters.

use serde::{Deserialize, Serialize};

/// A kind of atom a setup can contain.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub enum Species {
    Helium,
    Neon,
    Argon,
    Krypton,
    Xenon,
    /// The reduced Lennard-Jones fluid: ε = σ = m = 1, no real-unit meaning.
    ReducedLJ,
}

/// Lennard-Jones well depth, size and molar mass of one species.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SpeciesParams {
    /// Well depth ε / k_B in kelvin.
    pub epsilon_kelvin: f64,
    /// Size parameter σ in ångström.
    pub sigma_angstrom: f64,
    /// Molar mass in g/mol.
    pub molar_mass: f64,
}

impl Species {
    /// Every species, in the order the setup form lists them.
    pub const ALL: [Species; 6] = [
        Species::Helium,
        Species::Neon,
        Species::Argon,
        Species::Krypton,
        Species::Xenon,
        Species::ReducedLJ,
    ];

    /// Lennard-Jones parameters and mass.
    ///
    /// ε/k_B and σ: second-virial-coefficient fits as tabulated by Hirschfelder, Curtiss & Bird,
    /// *Molecular Theory of Gases and Liquids* (Wiley, 1954). These are commonly quoted values,
    /// written here from memory and not re-checked against the printed table: verify before
    /// relying on them for anything beyond the model itself.
    ///
    /// Molar masses: IUPAC standard atomic weights (CIAAW, 2021 table); for argon the
    /// conventional value 39.948 is used in place of the interval [39.792, 39.963].
    pub fn params(self) -> SpeciesParams {
        let (epsilon_kelvin, sigma_angstrom, molar_mass) = match self {
            Species::Helium => (10.22, 2.556, 4.002_602),
            Species::Neon => (35.6, 2.749, 20.1797),
            Species::Argon => (119.8, 3.405, 39.948),
            Species::Krypton => (171.0, 3.60, 83.798),
            Species::Xenon => (221.0, 4.10, 131.293),
            // Unit values; conversions to real units are refused for this species.
            Species::ReducedLJ => (1.0, 1.0, 1.0),
        };
        SpeciesParams {
            epsilon_kelvin,
            sigma_angstrom,
            molar_mass,
        }
    }

    /// Whether quantities of this species have a meaning in kelvin, ångström and so on.
    pub fn is_real(self) -> bool {
        self != Species::ReducedLJ
    }

    /// Name for people: "argon", "reduced LJ".
    pub fn label(self) -> &'static str {
        match self {
            Species::Helium => "helium",
            Species::Neon => "neon",
            Species::Argon => "argon",
            Species::Krypton => "krypton",
            Species::Xenon => "xenon",
            Species::ReducedLJ => "reduced LJ",
        }
    }

    /// Element symbol for XYZ files; the reduced fluid is written as `LJ`.
    pub fn symbol(self) -> &'static str {
        match self {
            Species::Helium => "He",
            Species::Neon => "Ne",
            Species::Argon => "Ar",
            Species::Krypton => "Kr",
            Species::Xenon => "Xe",
            Species::ReducedLJ => "LJ",
        }
    }

    /// Below this temperature (kelvin) classical dynamics misses important quantum effects.
    ///
    /// Common practice: quantum corrections matter when the thermal de Broglie wavelength is a
    /// sizeable fraction of σ. For helium that is the whole liquid range and well above it;
    /// for neon the liquid and dense gas below about 50 K. The thresholds are rules of thumb.
    pub fn quantum_warning_below_kelvin(self) -> Option<f64> {
        match self {
            Species::Helium => Some(100.0),
            Species::Neon => Some(50.0),
            _ => None,
        }
    }
}
