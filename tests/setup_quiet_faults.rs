//! Setups that used to be accepted while doing something other than asked, now refused with the
//! field, the value and the allowed range (`io::setup::Setup::resolve`).

use noblescope::io::Setup;

fn mixture(second_share: f64, atoms: u64) -> Setup {
    let text = format!(
        "Setup(
    species: [(kind: Argon, share: {}), (kind: Krypton, share: {second_share})],
    atoms: {atoms},
    density: GramsPerCubicCentimetre(1.4),
    temperature: Kelvin(100.0),
    timestep: Femtoseconds(5.0),
    cutoff: Sigma(2.5),
    ensemble: Nve,
    steps: 100,
)",
        1.0 - second_share
    );
    Setup::parse(&text, "mixture.ron").unwrap()
}

#[test]
fn a_species_whose_share_rounds_to_no_atom_is_refused_with_the_smallest_share_that_gives_one() {
    // 1e-6 of 500 atoms is 0.0005 atoms: the largest-remainder split gives krypton none.
    let e = mixture(1e-6, 500).resolve().unwrap_err().to_string();
    assert!(
        e.starts_with("species[1].share: 1e-6 (gives 0 of 500 atoms) is out of range"),
        "{e}"
    );
    assert!(e.contains("at least 1/500 ≈ 0.002"), "{e}");
    // The same share with enough atoms for one krypton atom runs.
    let spec = mixture(1e-6, 1_000_000).resolve().unwrap();
    assert_eq!(spec.counts, vec![999_999, 1]);
    // A share of exactly one atom's worth is accepted.
    assert_eq!(mixture(0.002, 500).resolve().unwrap().counts, vec![499, 1]);
}

fn helium(temperature: &str) -> Setup {
    let text = format!(
        "Setup(
    species: [(kind: Helium, share: 1.0)],
    atoms: 256,
    density: Reduced(0.5),
    temperature: {temperature},
    timestep: Reduced(0.005),
    cutoff: Sigma(2.5),
    ensemble: Nve,
    steps: 100,
)"
    );
    Setup::parse(&text, "helium.ron").unwrap()
}

#[test]
fn very_large_values_are_echoed_in_short_scientific_form() {
    // Kelvin(1e308) was echoed as its reduced value with 300 digits.
    let e = helium("Kelvin(1e308)").resolve().unwrap_err().to_string();
    assert!(
        e.starts_with("temperature: Kelvin(1e308) = 9.7847e306 reduced is out of range"),
        "{e}"
    );
    assert!(e.len() < 200, "{e}");
}

#[test]
fn the_quantum_caution_quotes_the_temperature_as_given() {
    // 0.0102 K was quoted as "0 K".
    let notes = helium("Kelvin(0.0102)").cautions();
    assert!(
        notes[0].starts_with("helium at 0.0102 K: classical dynamics"),
        "{notes:?}"
    );
    let notes = helium("Reduced(1.0)").cautions();
    assert!(
        notes[0].starts_with("helium at kT/ε = 1 (about 10.22 K)"),
        "{notes:?}"
    );
}
