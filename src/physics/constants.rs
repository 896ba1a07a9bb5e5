//! Physical constants (SI 2019 exact values) used to convert between reduced and real units.

/// Boltzmann constant in J/K (SI 2019, exact).
pub const BOLTZMANN: f64 = 1.380_649e-23;
/// Avogadro constant in 1/mol (SI 2019, exact).
pub const AVOGADRO: f64 = 6.022_140_76e23;
/// Molar gas constant R = k_B N_A in J/(mol K) (exact from the two above).
pub const GAS_CONSTANT: f64 = BOLTZMANN * AVOGADRO;
/// One ångström in metres.
pub const ANGSTROM: f64 = 1e-10;
