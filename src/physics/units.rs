//! The conversion between reduced and real units (the constants are in [`super::constants`]).
//!
//! Inside `physics/` every quantity is reduced with the first species of the setup as the
//! reference: σ_ref = ε_ref = m_ref = 1. [`UnitSystem`] converts at the edges.

use super::species::{Species, SpeciesParams};

pub use super::constants::{ANGSTROM, AVOGADRO, BOLTZMANN, GAS_CONSTANT};

/// The scales that turn reduced quantities into real ones for one reference species.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct UnitSystem {
    /// Reference species; `ReducedLJ` has no real units.
    pub reference: Species,
    params: SpeciesParams,
}

impl UnitSystem {
    /// Units built on `reference` (σ, ε, m of that species are 1).
    pub fn new(reference: Species) -> Self {
        UnitSystem {
            reference,
            params: reference.params(),
        }
    }

    /// Whether real-unit conversions are meaningful.
    pub fn has_real_units(&self) -> bool {
        self.reference.is_real()
    }

    /// Length unit σ in ångström.
    pub fn sigma_angstrom(&self) -> f64 {
        self.params.sigma_angstrom
    }

    /// Energy unit ε in joule.
    pub fn epsilon_joule(&self) -> f64 {
        self.params.epsilon_kelvin * BOLTZMANN
    }

    /// Temperature unit ε/k_B in kelvin.
    pub fn temperature_kelvin(&self) -> f64 {
        self.params.epsilon_kelvin
    }

    /// Mass unit in kilogram (one reference atom).
    pub fn mass_kg(&self) -> f64 {
        self.params.molar_mass * 1e-3 / AVOGADRO
    }

    /// Mass unit in g/mol.
    pub fn molar_mass(&self) -> f64 {
        self.params.molar_mass
    }

    /// Time unit τ = σ √(m/ε) in seconds.
    pub fn tau_seconds(&self) -> f64 {
        self.sigma_angstrom() * ANGSTROM * (self.mass_kg() / self.epsilon_joule()).sqrt()
    }

    /// Time unit τ in femtoseconds.
    pub fn tau_fs(&self) -> f64 {
        self.tau_seconds() * 1e15
    }

    /// Time unit τ in picoseconds.
    pub fn tau_ps(&self) -> f64 {
        self.tau_seconds() * 1e12
    }

    /// Pressure unit ε/σ³ in pascal.
    pub fn pressure_pa(&self) -> f64 {
        let s = self.sigma_angstrom() * ANGSTROM;
        self.epsilon_joule() / (s * s * s)
    }

    /// Pressure unit ε/σ³ in bar.
    pub fn pressure_bar(&self) -> f64 {
        self.pressure_pa() * 1e-5
    }

    /// Energy unit ε in kJ/mol.
    pub fn energy_kj_mol(&self) -> f64 {
        self.params.epsilon_kelvin * GAS_CONSTANT * 1e-3
    }

    /// Speed unit σ/τ in m/s.
    pub fn speed_m_s(&self) -> f64 {
        self.sigma_angstrom() * ANGSTROM / self.tau_seconds()
    }

    /// Diffusion-coefficient unit σ²/τ in cm²/s.
    pub fn diffusion_cm2_s(&self) -> f64 {
        let s_cm = self.sigma_angstrom() * 1e-8;
        s_cm * s_cm / self.tau_seconds()
    }

    /// Number-density unit 1/σ³ in atoms per nm³.
    pub fn number_density_per_nm3(&self) -> f64 {
        let s_nm = self.sigma_angstrom() * 0.1;
        1.0 / (s_nm * s_nm * s_nm)
    }

    /// Mass-density unit m/σ³ in g/cm³ (one reference mass per σ³).
    pub fn mass_density_g_cm3(&self) -> f64 {
        let s_cm = self.sigma_angstrom() * 1e-8;
        self.molar_mass() / AVOGADRO / (s_cm * s_cm * s_cm)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reduced_fluid_has_unit_scales() {
        let u = UnitSystem::new(Species::ReducedLJ);
        assert!(!u.has_real_units());
        assert_eq!(u.sigma_angstrom(), 1.0);
    }
}
