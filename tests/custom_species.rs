//! Species of the user's own: `Custom(name, epsilon, sigma, mass)` in setup files, alone and in
//! mixtures, in either unit of ε (K, kJ/mol) and σ (Å, nm), with bad values refused naming the
//! field, the value and the allowed range (`io::setup::CUSTOM_*`).

mod command_line;
use command_line::{noblescope, scratch, text};
use noblescope::io::Setup;
use noblescope::physics::UnitSystem;

fn setup(species: &str) -> String {
    format!(
        r#"Setup(
    title: "custom",
    species: [{species}],
    atoms: 256,
    density: GramsPerCubicCentimetre(1.374),
    temperature: Kelvin(94.4),
    timestep: Femtoseconds(10.0),
    cutoff: Sigma(2.5),
    ensemble: Nve,
    steps: 100,
    dynamics_every: Some(5),
)"#
    )
}

const RAHMAN: &str = r#"(kind: Custom(name: "argon, 120 K set", epsilon: Kelvin(120.0), sigma: Angstrom(3.4), mass: Dalton(39.948)), share: 1.0)"#;

#[test]
fn a_custom_species_sets_the_reduced_units() {
    let s = Setup::parse(&setup(RAHMAN), "t.ron").unwrap();
    let spec = s.resolve().unwrap();
    let u = UnitSystem::new(s.reference());
    assert_eq!(u.temperature_kelvin(), 120.0);
    assert_eq!(u.sigma_angstrom(), 3.4);
    // 94.4 K / 120 K and 1.374 g/cm³ as ρσ³ with m = 39.948 Da, σ = 3.4 Å:
    // 1.374 / (39.948 / N_A / (3.4e-8 cm)³) = 0.8141 (arithmetic on the SI 2019 N_A).
    assert!((spec.temperature - 94.4 / 120.0).abs() < 1e-12);
    assert!((spec.density - 0.8141).abs() < 1e-4, "{}", spec.density);
    assert_eq!(s.reference().label(), "argon, 120 K set");
}

#[test]
fn kilojoules_per_mole_and_nanometres_mean_the_same_as_kelvin_and_angstrom() {
    let kelvin = Setup::parse(&setup(RAHMAN), "a.ron").unwrap().resolve().unwrap();
    let kj = 120.0 * 8.314_462_618_153_24e-3; // R = k_B N_A, SI 2019
    let other = RAHMAN
        .replace("Kelvin(120.0)", &format!("KiloJoulesPerMole({kj:?})"))
        .replace("Angstrom(3.4)", "Nanometre(0.34)");
    let s = Setup::parse(&setup(&other), "b.ron").unwrap();
    let spec = s.resolve().unwrap();
    assert!((spec.density - kelvin.density).abs() < 1e-12 * kelvin.density);
    assert!((spec.temperature - kelvin.temperature).abs() < 1e-12);
}

#[test]
fn a_custom_species_mixes_with_a_bundled_one() {
    let mix = RAHMAN.replace("share: 1.0", "share: 0.5") + r#", (kind: Krypton, share: 0.5)"#;
    let s = Setup::parse(&setup(&mix), "m.ron").unwrap();
    let spec = s.resolve().unwrap();
    assert_eq!(spec.counts, vec![128, 128]);
    let dir = scratch("custom-species", "mixture");
    let path = dir.join("m.ron");
    std::fs::write(&path, setup(&mix)).unwrap();
    let out = dir.join("out");
    let o = noblescope(&[
        "run",
        path.to_str().unwrap(),
        "--quiet",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(0), "{:?}", text(&o));
    let msd = std::fs::read_to_string(out.join("msd.csv")).unwrap();
    // The name's comma would split a CSV column: it is written as ';'.
    assert!(
        msd.lines()
            .next()
            .unwrap()
            .contains("msd argon; 120 K set [sigma^2]"),
        "{msd}"
    );
}

#[test]
fn bad_custom_values_name_the_field_the_value_and_the_range() {
    let cases = [
        (
            "Kelvin(120.0)",
            "Kelvin(-5.0)",
            "species[0].kind.epsilon: Kelvin(-5.0) = -5 K is out of range; allowed: ε/k_B from 1 K to 2000 K",
        ),
        (
            "Angstrom(3.4)",
            "Nanometre(3.4)",
            "species[0].kind.sigma: Nanometre(3.4) = 34 Å is out of range; allowed: 1 Å to 10 Å (0.1 nm to 1 nm)",
        ),
        (
            "Dalton(39.948)",
            "Dalton(0.0)",
            "species[0].kind.mass: Dalton(0.0) is out of range; allowed: 1 Da to 1000 Da",
        ),
        (
            "\"argon, 120 K set\"",
            "\"  \"",
            "species[0].kind.name: \"  \" (2 bytes) is out of range; allowed: 1 to 40 bytes",
        ),
        (
            "\"argon, 120 K set\"",
            "\"a name far longer than forty bytes of text\"",
            "species[0].kind.name: \"a name far longer than forty bytes of te\" (42 bytes)",
        ),
    ];
    for (from, to, expect) in cases {
        let s = Setup::parse(&setup(&RAHMAN.replace(from, to)), "bad.ron").unwrap();
        let e = s.resolve().unwrap_err().to_string();
        assert!(e.starts_with(expect), "{e}\nexpected: {expect}");
    }
    // Two species of one name.
    let twice = RAHMAN.replace("share: 1.0", "share: 0.5")
        + ", "
        + &RAHMAN
            .replace("share: 1.0", "share: 0.5")
            .replace("120.0", "119.8");
    let e = Setup::parse(&setup(&twice), "t.ron")
        .unwrap()
        .resolve()
        .unwrap_err()
        .to_string();
    assert!(
        e.starts_with("species[1].kind.name: \"argon, 120 K set\" (named twice)"),
        "{e}"
    );
    // And from the command line: exit 2, nothing written.
    let dir = scratch("custom-species", "bad");
    let path = dir.join("bad.ron");
    std::fs::write(&path, setup(&RAHMAN.replace("Dalton(39.948)", "Dalton(5000.0)"))).unwrap();
    let out = dir.join("out");
    let o = noblescope(&[
        "run",
        path.to_str().unwrap(),
        "--quiet",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        text(&o)
            .1
            .contains("species[0].kind.mass: Dalton(5000.0) is out of range"),
        "{:?}",
        text(&o)
    );
    assert!(!out.exists());
}
