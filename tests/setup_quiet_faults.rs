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
