//! Runs that start from an XYZ file (`start: File(path: …)`): the file's atoms and order, the
//! overlap the watchdog finds in a bad file, and errors that name file, line and column.

mod command_line;

use command_line::{noblescope, scratch, text};
use std::fmt::Write as _;
use std::path::Path;

/// A simple cubic lattice of 8³ atoms with spacing 1.1 σ (ρ* = 1/1.331 ≈ 0.7513), in σ.
fn lattice() -> Vec<[f64; 3]> {
    let mut p = Vec::new();
    for i in 0..8 {
        for j in 0..8 {
            for k in 0..8 {
                p.push([1.1 * i as f64 + 0.3, 1.1 * j as f64 + 0.3, 1.1 * k as f64 + 0.3]);
            }
        }
    }
    p
}

fn xyz(positions: &[[f64; 3]], name: &str) -> String {
    let mut s = format!("{}\nmade by the test\n", positions.len());
    for p in positions {
        writeln!(s, "{name} {} {} {}", p[0], p[1], p[2]).unwrap();
    }
    s
}

fn setup(dir: &Path, start: &str) -> std::path::PathBuf {
    let text = format!(
        r#"Setup(
    title: "from a file",
    species: [(kind: ReducedLJ, share: 1.0)],
    atoms: 512,
    density: Reduced({}),
    temperature: Reduced(0.8),
    timestep: Reduced(0.004),
    cutoff: Sigma(2.5),
    potential: TruncatedShifted,
    ensemble: Nve,
    seed: 2,
    steps: 200,
    sample_every: 10,
    start: {start},
)"#,
        1.0 / 1.331
    );
    let path = dir.join("setup.ron");
    std::fs::write(&path, text).unwrap();
    path
}

fn run(setup: &Path, out: &Path) -> (Option<i32>, String) {
    let o = noblescope(&[
        "run",
        setup.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--quiet",
    ]);
    (o.status.code(), text(&o).1)
}

#[test]
fn a_start_file_relative_to_the_setup_runs_from_its_positions() {
    let d = scratch("start", "good");
    std::fs::create_dir_all(d.join("configs")).unwrap();
    std::fs::write(d.join("configs/cubic.xyz"), xyz(&lattice(), "LJ")).unwrap();
    let s = setup(&d, r#"File(path: "configs/cubic.xyz")"#);
    // Run from another working folder: the path is the setup file's, not the caller's.
    let o = std::process::Command::new(env!("CARGO_BIN_EXE_noblescope"))
        .current_dir(std::env::temp_dir())
        .args([
            "run",
            s.to_str().unwrap(),
            "--out",
            d.join("out").to_str().unwrap(),
            "--quiet",
        ])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(0), "{}", text(&o).1);
    // Step 0 of the log: the potential energy of the simple cubic lattice at 1.1 σ, which no
    // fcc start at this density has (its nearest neighbours sit at 1.22 σ).
    let log = std::fs::read_to_string(d.join("out/energy.csv")).unwrap();
    let u0: f64 = log
        .lines()
        .nth(1)
        .unwrap()
        .split(',')
        .nth(3)
        .unwrap()
        .parse()
        .unwrap();
    let shift = 4.0 * (2.5f64.powi(-12) - 2.5f64.powi(-6));
    let mut expected = 0.0;
    for a in -2i32..=2 {
        for b in -2i32..=2 {
            for c in -2i32..=2 {
                let r = 1.1 * ((a * a + b * b + c * c) as f64).sqrt();
                if r > 0.0 && r < 2.5 {
                    expected += 0.5 * (4.0 * (r.powi(-12) - r.powi(-6)) - shift);
                }
            }
        }
    }
    assert!(
        (u0 - expected).abs() < 1e-9,
        "U/N at step 0 {u0}, cubic lattice {expected}"
    );
    let _ = std::fs::remove_dir_all(&d);
}

#[test]
fn two_atoms_a_quarter_sigma_apart_in_the_file_are_an_overlap_naming_exactly_those_two() {
    let d = scratch("start", "overlap");
    let mut p = lattice();
    // Atom 300 leaves its site and sits 0.25 σ from atom 77.
    p[300] = [p[77][0] + 0.25, p[77][1], p[77][2]];
    std::fs::write(d.join("bad.xyz"), xyz(&p, "ReducedLJ")).unwrap();
    let s = setup(&d, r#"File(path: "bad.xyz")"#);
    let (code, stderr) = run(&s, &d.join("out"));
    assert_eq!(code, Some(1), "{stderr}");
    assert!(stderr.contains("alarm overlap at step 0"), "{stderr}");
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(d.join("out/summary.json")).unwrap()).unwrap();
    let alarm = &summary["alarm"];
    assert_eq!(alarm["kind"], "overlap", "{alarm}");
    assert_eq!(alarm["step"], 0, "{alarm}");
    let mut atoms: Vec<u64> = alarm["atoms"]
        .as_array()
        .unwrap()
        .iter()
        .map(|a| a.as_u64().unwrap())
        .collect();
    atoms.sort();
    assert_eq!(atoms, [77, 300], "{alarm}");
    // The configuration at the alarm is kept, in the file's order.
    let at_alarm = std::fs::read_to_string(d.join("out/alarm.xyz")).unwrap();
    let line = |i: usize| at_alarm.lines().nth(2 + i).unwrap().to_string();
    assert!(line(300).starts_with("LJ "), "{}", line(300));
    let _ = std::fs::remove_dir_all(&d);
}

#[test]
fn errors_in_a_start_file_name_the_file_line_and_column_and_exit_2() {
    let d = scratch("start", "errors");
    let mut lines: Vec<String> = xyz(&lattice(), "LJ").lines().map(String::from).collect();
    lines[3] = "LJ 0.3 x1 1.4".into();
    std::fs::write(d.join("typo.xyz"), lines.join("\n")).unwrap();
    let s = setup(&d, r#"File(path: "typo.xyz")"#);
    let (code, stderr) = run(&s, &d.join("out"));
    assert_eq!(code, Some(2), "{stderr}");
    assert!(
        stderr.contains("typo.xyz:4:8: y coordinate \"x1\" is not a number"),
        "{stderr}"
    );
    assert!(!d.join("out").exists(), "nothing is written");

    let s = setup(&d, r#"File(path: "missing.xyz")"#);
    let (code, stderr) = run(&s, &d.join("out"));
    assert_eq!(code, Some(2), "{stderr}");
    assert!(stderr.contains("missing.xyz"), "{stderr}");

    std::fs::write(d.join("short.xyz"), xyz(&lattice()[..500], "LJ")).unwrap();
    let s = setup(&d, r#"File(path: "short.xyz")"#);
    let (code, stderr) = run(&s, &d.join("out"));
    assert_eq!(code, Some(2), "{stderr}");
    assert!(
        stderr.contains("short.xyz:1:1: atom count 500 is out of range; allowed: 512"),
        "{stderr}"
    );
    let _ = std::fs::remove_dir_all(&d);
}
