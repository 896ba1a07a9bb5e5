//! Unit conversions for argon derived from the constants.
//!
//! Sources: SI 2019 exact values of k_B = 1.380649e-23 J/K and N_A = 6.02214076e23 /mol (BIPM,
//! SI Brochure 9th ed.); argon ε/k_B = 119.8 K, σ = 3.405 Å (Hirschfelder, Curtiss & Bird 1954,
//! from memory); molar mass 39.948 g/mol (IUPAC conventional value). Expected figures: τ ≈ 2.156 ps
//! and ε/σ³ ≈ 419 bar, the values commonly quoted for argon in reduced-unit tables.

use noblescope::io::setup::{Density, Duration, Length, Setup, Temperature};
use noblescope::physics::{Species, UnitSystem};

fn argon() -> UnitSystem {
    UnitSystem::new(Species::Argon)
}

#[test]
fn time_unit_is_2_156_ps() {
    let u = argon();
    // Independent arithmetic from the constants: τ = σ √(m/ε).
    let m: f64 = 39.948e-3 / 6.022_140_76e23;
    let eps = 119.8 * 1.380_649e-23;
    let tau = 3.405e-10 * (m / eps).sqrt();
    assert!((u.tau_seconds() / tau - 1.0).abs() < 1e-12);
    assert!((u.tau_ps() - 2.156).abs() < 0.0005, "{}", u.tau_ps());
}

#[test]
fn pressure_unit_is_419_bar() {
    let u = argon();
    assert!((u.pressure_bar() - 419.0).abs() < 0.5, "{}", u.pressure_bar());
    let direct = 119.8 * 1.380_649e-23 / (3.405e-10f64).powi(3) / 1e5;
    assert!((u.pressure_bar() / direct - 1.0).abs() < 1e-12);
}

#[test]
fn energy_and_density_units() {
    let u = argon();
    // ε N_A = 119.8 K × R, R = 8.314462618 J/(mol K).
    assert!((u.energy_kj_mol() - 119.8 * 8.314_462_618e-3).abs() < 1e-9);
    // m/σ³ in g/cm³: 39.948 / N_A / (3.405e-8 cm)³ ≈ 1.6806 g/cm³.
    assert!((u.mass_density_g_cm3() - 39.948 / 6.022_140_76e23 / (3.405e-8f64).powi(3)).abs() < 1e-12);
    assert!((u.number_density_per_nm3() - 1.0 / 0.3405f64.powi(3)).abs() < 1e-9);
}

fn argon_setup() -> Setup {
    Setup::load(std::path::Path::new(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/assets/argon-cold-trap.ron"
    )))
    .expect("bundled setup parses")
}

#[test]
fn setup_fields_reduce_consistently() {
    let s = argon_setup();
    let u = s.units();
    let rho = s.reduced_density(Density::GramsPerCubicCentimetre(1.40)).unwrap();
    assert!((rho - 1.40 / u.mass_density_g_cm3()).abs() < 1e-12);
    let rho_kg = s
        .reduced_density(Density::KilogramsPerCubicMetre(1400.0))
        .unwrap();
    assert!((rho - rho_kg).abs() < 1e-12);
    let rho_n = s.reduced_density(Density::PerCubicNanometre(21.0)).unwrap();
    assert!((rho_n - 21.0 * 0.3405f64.powi(3)).abs() < 1e-9);
    assert!((s.reduced_temperature("t", Temperature::Kelvin(119.8)).unwrap() - 1.0).abs() < 1e-12);
    let dt = s.reduced_duration("dt", Duration::Femtoseconds(5.0)).unwrap();
    assert!((dt - 5.0 / u.tau_fs()).abs() < 1e-15 && (dt - 0.00232).abs() < 1e-5);
    assert!((s.reduced_duration("dt", Duration::Picoseconds(0.005)).unwrap() - dt).abs() < 1e-15);
    assert!((s.reduced_length("c", Length::Angstrom(8.5125)).unwrap() - 2.5).abs() < 1e-12);
}
