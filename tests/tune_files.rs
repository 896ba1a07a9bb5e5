//! `noblescope tune --out`: the scan's results as files (tuning.json, timesteps.csv,
//! cutoffs.csv) with the recommended cutoff and its reason; tolerances from the command line.

mod command_line;

use command_line::{noblescope, scratch, text};

#[test]
fn tune_writes_its_tables_and_recommends_a_cutoff_within_the_tolerances_given() {
    let d = scratch("tune", "files");
    let s = d.join("liquid.ron");
    std::fs::write(
        &s,
        "Setup(
    species: [(kind: ReducedLJ, share: 1.0)],
    atoms: 864,
    density: Reduced(0.8442),
    temperature: Reduced(0.72),
    timestep: Reduced(0.005),
    cutoff: Sigma(2.5),
    ensemble: Nvt(thermostat: Langevin(friction: Reduced(1.0))),
    steps: 2000,
    equilibration_steps: 500,
)",
    )
    .unwrap();
    let out = d.join("out");
    let run = |extra: &[&str]| {
        let mut a = vec![
            "tune",
            s.to_str().unwrap(),
            "--cutoffs",
            "2.5,3,4",
            "--timesteps",
            "0.005",
            "--time",
            "0.5",
            "--out",
            out.to_str().unwrap(),
        ];
        a.extend_from_slice(extra);
        noblescope(&a)
    };
    let o = run(&[]);
    let (stdout, err) = text(&o);
    assert_eq!(o.status.code(), Some(0), "{err}");
    assert!(stdout.contains("recommended cutoff"), "{stdout}");
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("tuning.json")).unwrap()).unwrap();
    let rc = json["recommended_cutoff_sigma"].as_f64().unwrap();
    assert!([2.5, 3.0, 4.0].contains(&rc), "{rc}");
    assert!(json["cutoff_reason"].as_str().unwrap().contains("4 σ"));
    let rows: Vec<&serde_json::Value> = json["cutoffs"].as_array().unwrap().iter().collect();
    let largest = rows.iter().find(|r| r["cutoff"] == 4.0).unwrap();
    let pick = rows.iter().find(|r| r["cutoff"].as_f64() == Some(rc)).unwrap();
    let du = (pick["potential_full_estimate"].as_f64().unwrap()
        - largest["potential_full_estimate"].as_f64().unwrap())
    .abs();
    assert!(du <= 0.01, "recommended {rc} σ is {du} ε from 4 σ");
    for (file, header) in [
        ("timesteps.csv", "timestep_tau,"),
        ("cutoffs.csv", "cutoff_sigma,"),
    ] {
        let t = std::fs::read_to_string(out.join(file)).unwrap();
        assert!(t.lines().nth(1).unwrap().starts_with(header), "{file}: {t}");
    }
    assert_eq!(
        std::fs::read_to_string(out.join("cutoffs.csv"))
            .unwrap()
            .lines()
            .count(),
        2 + 3
    );
    // Tolerances so tight that only the largest qualifies.
    let o = run(&["--energy-tolerance", "1e-9", "--pressure-tolerance", "1e-9"]);
    assert_eq!(o.status.code(), Some(0));
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("tuning.json")).unwrap()).unwrap();
    assert_eq!(json["recommended_cutoff_sigma"].as_f64(), Some(4.0));
    assert!(
        json["cutoff_reason"]
            .as_str()
            .unwrap()
            .starts_with("no smaller cutoff")
    );
    let o = run(&["--energy-tolerance", "-1"]);
    let (_, err) = text(&o);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(err.contains("--energy-tolerance: -1 is out of range"), "{err}");
}
