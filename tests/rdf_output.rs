//! g(r) written by a headless run of a dense Lennard-Jones liquid.
//!
//! Reference shape (from memory of the classic simulation results for the LJ liquid near its
//! triple point, e.g. Verlet, Phys. Rev. 165, 201 (1968), and Allen & Tildesley 2017, Fig. 2.3):
//! g(r) is zero inside about 0.9σ, has its first peak of height about 2.5–3.2 near r ≈ 1.1σ,
//! and about 12 neighbours lie within the first minimum (≈ 1.5σ).

use std::process::Command;

const SETUP: &str = r#"Setup(
    title: "rdf check",
    species: [(kind: ReducedLJ, share: 1.0)],
    atoms: 864,
    density: Reduced(0.8442),
    temperature: Reduced(0.75),
    timestep: Reduced(0.005),
    cutoff: Sigma(2.5),
    potential: TruncatedShifted,
    ensemble: Nvt(thermostat: StochasticRescale(relaxation: Reduced(0.1))),
    seed: 5,
    steps: 4000,
    equilibration_steps: 2000,
    sample_every: 20,
    rdf_every: Some(50),
)"#;

#[test]
fn dense_liquid_rdf_has_the_expected_shape() {
    let dir = std::env::temp_dir().join(format!("noblescope-rdf-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let setup = dir.join("liquid.ron");
    std::fs::write(&setup, SETUP).unwrap();
    let out = dir.join("out");
    let st = Command::new(env!("CARGO_BIN_EXE_noblescope"))
        .args([
            "run",
            setup.to_str().unwrap(),
            "--quiet",
            "--out",
            out.to_str().unwrap(),
        ])
        .status()
        .unwrap();
    assert!(st.success());
    let text = std::fs::read_to_string(out.join("rdf.csv")).unwrap();
    let mut lines = text.lines();
    assert_eq!(lines.next(), Some("r [sigma],g [1],coordination [1]"));
    let rows: Vec<[f64; 3]> = lines
        .map(|l| {
            let v: Vec<f64> = l.split(',').map(|x| x.parse().unwrap()).collect();
            [v[0], v[1], v[2]]
        })
        .collect();
    assert_eq!(rows.len(), 200);
    assert!(rows.last().unwrap()[0] < 2.5);
    let core = rows
        .iter()
        .filter(|r| r[0] < 0.85)
        .map(|r| r[1])
        .fold(0.0, f64::max);
    assert!(core < 0.01, "atoms inside the core: g = {core}");
    let peak = rows.iter().max_by(|a, b| a[1].total_cmp(&b[1])).unwrap();
    assert!(
        (1.0..1.2).contains(&peak[0]) && (2.4..3.4).contains(&peak[1]),
        "first peak {peak:?}"
    );
    // First minimum near 1.5σ: about 12 neighbours inside it.
    let shell = rows.iter().find(|r| r[0] >= 1.5).unwrap();
    assert!(
        (11.0..14.0).contains(&shell[2]),
        "coordination at 1.5σ: {shell:?}"
    );
    let _ = std::fs::remove_dir_all(&dir);
}
