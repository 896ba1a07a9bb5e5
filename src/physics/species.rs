//! The noble-gas species and their Lennard-Jones parameters, and species of the user's own.

use super::constants::{AVOGADRO, BOLTZMANN};
use serde::{Deserialize, Deserializer, Serialize, Serializer};

/// A kind of atom a setup can contain.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub enum Species {
    Helium,
    Neon,
    Argon,
    Krypton,
    Xenon,
    /// The reduced Lennard-Jones fluid: ε = σ = m = 1, no real-unit meaning.
    ReducedLJ,
    /// A parameter set of the user's own, e.g. `Custom(name: "argon, 120 K set", epsilon:
    /// Kelvin(120.0), sigma: Angstrom(3.4), mass: Dalton(39.948))`. Its values are checked by
    /// `io::setup` (ranges `CUSTOM_*` there).
    Custom {
        name: SpeciesName,
        epsilon: WellDepth,
        sigma: Size,
        mass: AtomMass,
    },
}

/// Well depth ε of a custom species.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub enum WellDepth {
    /// ε / k_B.
    Kelvin(f64),
    /// ε N_A.
    KiloJoulesPerMole(f64),
}

impl WellDepth {
    /// ε / k_B in kelvin.
    pub fn kelvin(self) -> f64 {
        match self {
            WellDepth::Kelvin(k) => k,
            WellDepth::KiloJoulesPerMole(e) => e * 1e3 / (BOLTZMANN * AVOGADRO),
        }
    }
}

/// Size parameter σ of a custom species.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub enum Size {
    Angstrom(f64),
    Nanometre(f64),
}

impl Size {
    /// σ in ångström.
    pub fn angstrom(self) -> f64 {
        match self {
            Size::Angstrom(a) => a,
            Size::Nanometre(n) => n * 10.0,
        }
    }
}

/// Mass of one atom of a custom species.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub enum AtomMass {
    /// In dalton (unified atomic mass units), numerically the molar mass in g/mol.
    Dalton(f64),
}

impl AtomMass {
    /// Molar mass in g/mol.
    pub fn grams_per_mole(self) -> f64 {
        match self {
            AtomMass::Dalton(d) => d,
        }
    }
}

/// The name of a custom species: up to [`SpeciesName::CAPACITY`] bytes of UTF-8 kept inline,
/// so that [`Species`] stays a plain copyable value. A longer name read from a file keeps its
/// first bytes and remembers its full length, so validation can name it and refuse it.
#[derive(Clone, Copy, PartialEq, Eq)]
pub struct SpeciesName {
    bytes: [u8; SpeciesName::CAPACITY],
    len: u8,
    given_len: usize,
}

impl SpeciesName {
    /// Most bytes a name may have.
    pub const CAPACITY: usize = 40;

    /// The name (cut at [`Self::CAPACITY`] bytes when it was longer).
    pub fn as_str(&self) -> &str {
        std::str::from_utf8(&self.bytes[..self.len as usize]).unwrap_or("")
    }

    /// Length in bytes of the name as given (may exceed [`Self::CAPACITY`]).
    pub fn given_len(&self) -> usize {
        self.given_len
    }

    /// Whether the name as given fits.
    pub fn fits(&self) -> bool {
        self.given_len <= Self::CAPACITY
    }
}

impl From<&str> for SpeciesName {
    fn from(text: &str) -> Self {
        let mut cut = text.len().min(Self::CAPACITY);
        while !text.is_char_boundary(cut) {
            cut -= 1;
        }
        let mut bytes = [0u8; Self::CAPACITY];
        bytes[..cut].copy_from_slice(&text.as_bytes()[..cut]);
        SpeciesName {
            bytes,
            len: cut as u8,
            given_len: text.len(),
        }
    }
}

impl std::fmt::Debug for SpeciesName {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{:?}", self.as_str())
    }
}

impl Serialize for SpeciesName {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(self.as_str())
    }
}

impl<'de> Deserialize<'de> for SpeciesName {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        let text = String::deserialize(d)?;
        Ok(SpeciesName::from(text.as_str()))
    }
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
            Species::Custom {
                epsilon, sigma, mass, ..
            } => (epsilon.kelvin(), sigma.angstrom(), mass.grams_per_mole()),
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

    /// Whether this is a parameter set of the user's own.
    pub fn is_custom(&self) -> bool {
        matches!(self, Species::Custom { .. })
    }

    /// Name for people: "argon", "reduced LJ", a custom species' own name.
    pub fn label(&self) -> &str {
        match self {
            Species::Custom { name, .. } => name.as_str(),
            Species::Helium => "helium",
            Species::Neon => "neon",
            Species::Argon => "argon",
            Species::Krypton => "krypton",
            Species::Xenon => "xenon",
            Species::ReducedLJ => "reduced LJ",
        }
    }

    /// Element symbol for XYZ files and CSV columns; the reduced fluid is written as `LJ`, a
    /// custom species by its name.
    pub fn symbol(&self) -> &str {
        match self {
            Species::Custom { name, .. } => name.as_str(),
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
    /// A custom species gets no warning: the program cannot tell which atom it stands for.
    pub fn quantum_warning_below_kelvin(self) -> Option<f64> {
        match self {
            Species::Helium => Some(100.0),
            Species::Neon => Some(50.0),
            _ => None,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn custom_units_convert_to_kelvin_angstrom_and_grams_per_mole() {
        // 1 kJ/mol = 1000 / R K with R = k_B N_A = 8.314462618 J/(mol K) (SI 2019, exact).
        assert!((WellDepth::KiloJoulesPerMole(1.0).kelvin() - 120.272_36).abs() < 1e-4);
        assert!((Size::Nanometre(0.34).angstrom() - 3.4).abs() < 1e-15);
        let s = Species::Custom {
            name: "argon, 120 K set".into(),
            epsilon: WellDepth::Kelvin(120.0),
            sigma: Size::Angstrom(3.4),
            mass: AtomMass::Dalton(39.948),
        };
        let p = s.params();
        assert_eq!(
            (p.epsilon_kelvin, p.sigma_angstrom, p.molar_mass),
            (120.0, 3.4, 39.948)
        );
        assert_eq!(s.label(), "argon, 120 K set");
        assert!(s.is_real() && s.is_custom());
    }

    #[test]
    fn a_long_name_is_cut_at_a_character_boundary_and_remembers_its_length() {
        let long = "ä".repeat(30); // 60 bytes
        let n = SpeciesName::from(long.as_str());
        assert_eq!(n.as_str(), "ä".repeat(20));
        assert_eq!(n.given_len(), 60);
        assert!(!n.fits());
        assert!(SpeciesName::from("xenon, my set").fits());
    }
}
