//! The structure and motion files of a headless run: `rdf.csv` (every pair and the total),
//! `msd.csv`, `vacf.csv`, `speeds.csv`, each with a units header, and `self_diffusion` in
//! `summary.json` (reduced, and cm²/s under `si` for real species); bad `dynamics_every` and
//! `speeds_every` values are refused naming the field, the value and the allowed range.
//!
//! The layouts are those of `io::rdf_csv`, `io::motion_csv` and `io::speeds_csv`.

mod command_line;
use command_line::{noblescope, scratch, text};

const MIXTURE: &str = r#"Setup(
    title: "motion files",
    species: [(kind: Argon, share: 0.6), (kind: Krypton, share: 0.4)],
    atoms: 500,
    density: GramsPerCubicCentimetre(1.6),
    temperature: Kelvin(120.0),
    timestep: Femtoseconds(5.0),
    cutoff: Sigma(2.5),
    ensemble: Nve,
    steps: 1200,
    equilibration_steps: 200,
    sample_every: 20,
    rdf_every: Some(20),
    dynamics_every: Some(4),
    speeds_every: Some(50),
)"#;

fn run(name: &str, text_of_setup: &str) -> (std::process::Output, std::path::PathBuf) {
    let dir = scratch("motion-output", name);
    let setup = dir.join("s.ron");
    std::fs::write(&setup, text_of_setup).unwrap();
    let out = dir.join("out");
    let o = noblescope(&[
        "run",
        setup.to_str().unwrap(),
        "--quiet",
        "--out",
        out.to_str().unwrap(),
    ]);
    (o, out)
}

fn rows(text: &str) -> Vec<Vec<f64>> {
    text.lines()
        .skip(1)
        .map(|l| {
            l.split(',')
                .map(|x| x.parse::<f64>().unwrap_or(f64::NAN))
                .collect()
        })
        .collect()
}

#[test]
fn a_mixture_run_writes_every_analysis_file_with_units_and_both_diffusion_estimates() {
    let (o, out) = run("mixture", MIXTURE);
    assert_eq!(o.status.code(), Some(0), "{:?}", text(&o));
    let rdf = std::fs::read_to_string(out.join("rdf.csv")).unwrap();
    assert_eq!(
        rdf.lines().next().unwrap(),
        "r [sigma],r [angstrom],g [1],coordination [1],g Ar-Ar [1],n Ar around Ar [1],g Ar-Kr [1],\
         n Kr around Ar [1],n Ar around Kr [1],g Kr-Kr [1],n Kr around Kr [1]"
    );
    let r = rows(&rdf);
    assert_eq!(r.len(), 200);
    // The total is the mole-fraction mixing sum of the pair functions (x_Ar = 0.6).
    for row in &r[100..110] {
        let mix = 0.36 * row[4] + 2.0 * 0.24 * row[6] + 0.16 * row[9];
        assert!((mix - row[2]).abs() < 1e-4, "{row:?}");
    }

    let msd = std::fs::read_to_string(out.join("msd.csv")).unwrap();
    assert_eq!(
        msd.lines().next().unwrap(),
        "t [tau],t [ps],msd all [sigma^2],msd all [angstrom^2],msd Ar [sigma^2],msd Ar [angstrom^2],\
         msd Kr [sigma^2],msd Kr [angstrom^2]"
    );
    let m = rows(&msd);
    assert_eq!(m[0][2], 0.0);
    assert!(m.windows(2).all(|w| w[1][0] > w[0][0]), "lags ascend");
    assert!(m.last().unwrap()[2] > m[1][2], "atoms move");

    let vacf = std::fs::read_to_string(out.join("vacf.csv")).unwrap();
    assert!(vacf.starts_with(
        "t [tau],t [ps],vacf all [1],<v(0).v(t)> all [sigma^2/tau^2],D(t) all [sigma^2/tau],D(t) all [cm^2/s],"
    ));
    assert_eq!(rows(&vacf)[0][2], 1.0, "normalised at lag 0");

    let speeds = std::fs::read_to_string(out.join("speeds.csv")).unwrap();
    assert_eq!(
        speeds.lines().next().unwrap(),
        "species,v [sigma/tau],density [tau/sigma],maxwell-boltzmann [tau/sigma],v [m/s],density [s/m],maxwell-boltzmann [s/m]"
    );
    assert_eq!(speeds.lines().filter(|l| l.starts_with("Kr,")).count(), 60);

    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    let d = &summary["self_diffusion"];
    let si = &summary["si"]["self_diffusion"];
    for key in ["einstein", "green_kubo"] {
        let (reduced, cm2) = (
            d[key]["mean"].as_f64().unwrap(),
            si[key]["mean"].as_f64().unwrap(),
        );
        assert!(reduced > 0.0 && d[key]["stderr"].as_f64().unwrap() > 0.0, "{d}");
        // σ²/τ of argon in cm²/s: (3.405e-8 cm)² / 2.15e-12 s ≈ 5.4e-4 (from the unit system).
        assert!(
            (cm2 / reduced - 5.4e-4).abs() < 0.1e-4,
            "{key}: {cm2} vs {reduced}"
        );
    }
    assert_eq!(summary["si"]["units"]["self_diffusion"], "cm^2/s");
    assert_eq!(summary["speeds"].as_array().unwrap().len(), 2);
    // Earlier keys are still there.
    assert!(summary["pressure"]["mean"].is_number() && summary["si"]["temperature"]["mean"].is_number());
}

#[test]
fn a_reduced_run_writes_reduced_columns_only_and_no_si_section() {
    let setup = r#"Setup(
    species: [(kind: ReducedLJ, share: 1.0)],
    atoms: 256,
    density: Reduced(0.8),
    temperature: Reduced(1.0),
    timestep: Reduced(0.005),
    cutoff: Sigma(2.5),
    ensemble: Nve,
    steps: 400,
    dynamics_every: Some(5),
    speeds_every: Some(100),
    diffusion_window: Some((Reduced(0.1), Reduced(0.5))),
)"#;
    let (o, out) = run("reduced", setup);
    assert_eq!(o.status.code(), Some(0), "{:?}", text(&o));
    let msd = std::fs::read_to_string(out.join("msd.csv")).unwrap();
    assert_eq!(msd.lines().next().unwrap(), "t [tau],msd all [sigma^2]");
    let speeds = std::fs::read_to_string(out.join("speeds.csv")).unwrap();
    assert_eq!(
        speeds.lines().next().unwrap(),
        "species,v [sigma/tau],density [tau/sigma],maxwell-boltzmann [tau/sigma]"
    );
    assert!(!out.join("rdf.csv").exists());
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    assert!(summary["self_diffusion"]["einstein"]["mean"].is_number());
    assert_eq!(
        summary["self_diffusion"]["fit_window"],
        serde_json::json!([0.1, 0.5])
    );
    assert!(summary["si"].is_null());
    // A reversed window is refused.
    let bad = setup.replace(
        "Some((Reduced(0.1), Reduced(0.5)))",
        "Some((Reduced(0.5), Reduced(0.1)))",
    );
    let (o, _) = run("reversed-window", &bad);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        text(&o).1.contains(
            "diffusion_window: (Reduced(0.5), Reduced(0.1)) = 0.5 τ to 0.1 τ is out of range; allowed: (from, to) with 0 ≤ from < to"
        ),
        "{:?}",
        text(&o)
    );
}

#[test]
fn bad_sampling_intervals_are_refused_with_field_value_and_range() {
    for (line, field, value) in [
        ("dynamics_every: Some(4),", "dynamics_every", "Some(0)"),
        ("speeds_every: Some(50),", "speeds_every", "Some(5000)"),
    ] {
        let bad = MIXTURE.replace(line, &format!("{field}: {value},"));
        let (o, out) = run(field, &bad);
        let (_, stderr) = text(&o);
        assert_eq!(o.status.code(), Some(2), "{stderr}");
        assert!(
            stderr.contains(&format!(
                "{field}: {value} is out of range; allowed: None or Some(n) with 1 ≤ n ≤ steps (1200)"
            )),
            "{stderr}"
        );
        assert!(!out.exists());
    }
}

#[test]
fn g_of_r_reaches_half_the_box_when_asked_and_large_boxes_are_refused_that() {
    let setup = r#"Setup(
    species: [(kind: ReducedLJ, share: 1.0)],
    atoms: 864,
    density: Reduced(0.8442),
    temperature: Reduced(0.9),
    timestep: Reduced(0.005),
    cutoff: Sigma(2.5),
    ensemble: Nve,
    steps: 400,
    rdf_every: Some(20),
    rdf_reach: HalfBox,
)"#;
    let (o, out) = run("half-box", setup);
    assert_eq!(o.status.code(), Some(0), "{:?}", text(&o));
    let r = rows(&std::fs::read_to_string(out.join("rdf.csv")).unwrap());
    // Box edge (864 / 0.8442)^(1/3) = 10.08 σ: g reaches 5.04 σ, beyond the 2.5 σ cutoff.
    let last = r.last().unwrap()[0];
    assert!((last - 5.04).abs() < 0.03, "last bin at {last}");
    // Far out the liquid is uniform: g ≈ 1 between 4 and 5 σ.
    let far: Vec<f64> = r
        .iter()
        .filter(|x| (4.0..5.0).contains(&x[0]))
        .map(|x| x[1])
        .collect();
    let mean = far.iter().sum::<f64>() / far.len() as f64;
    assert!((mean - 1.0).abs() < 0.03, "g far out {mean}");
    let big = setup.replace("atoms: 864", "atoms: 32000");
    let (o, _) = run("half-box-big", &big);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        text(&o).1.contains(
            "rdf_reach: HalfBox with 32000 atoms is out of range; allowed: HalfBox up to 20000 atoms"
        ),
        "{:?}",
        text(&o)
    );
}
