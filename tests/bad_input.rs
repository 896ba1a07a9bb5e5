//! The command line on bad input, on a good run, and on a run that blows up.
//!
//! Contract under test: the command line (`src/cli/`: `cli::exit_code` gives exit code 2 for
//! bad input, 1 for a failed run, 0 for success) and `io::setup::Setup::resolve` ("Errors name the
//! field, the value given and the allowed range"); parse errors carry file:line:column
//! (`SetupError::Parse`, 1-based line and column as RON 0.12 reports them). Nothing may be written
//! for bad input: the `--out` folder is not created, and an existing run is left as it was.
//!
//! The allowed ranges quoted in the expectations are those of `io::setup` (e.g. MAX_ATOMS); the
//! output file names and CSV header are those of `engine::headless::OUTPUT_FILES` and
//! `io::energy_log::HEADER`. The XYZ layout (count line, comment line, one line per atom) is the
//! common XYZ convention (from memory; no formal standard exists).

mod command_line;
use command_line::{noblescope, text};

use std::path::{Path, PathBuf};

/// A valid reduced-LJ setup; each bad case replaces one line of it. Line numbers matter for the
/// parse-error cases: `atoms` is on line 4, `density` on line 5.
const GOOD: &str = "Setup(
    title: \"bad input test\",
    species: [(kind: ReducedLJ, share: 1.0)],
    atoms: 256,
    density: Reduced(0.8),
    temperature: Reduced(1.0),
    timestep: Reduced(0.005),
    cutoff: Sigma(2.5),
    ensemble: Nve,
    steps: 50,
    sample_every: 10,
)
";

fn with(from: &str, to: &str) -> String {
    assert!(GOOD.contains(from), "test bug: {from:?} not in the base setup");
    GOOD.replacen(from, to, 1)
}

/// Runs `setup_text` and checks: exit code 2, no panic, every `expect` substring in stderr,
/// and the output folder not created.
fn rejects(name: &str, setup_text: &str, extra_args: &[&str], expect: &[&str]) {
    let dir = scratch(name);
    let setup = dir.join(format!("{name}.ron"));
    std::fs::write(&setup, setup_text).unwrap();
    let out = dir.join("out");
    let mut args = vec![
        "run",
        setup.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--quiet",
    ];
    args.extend_from_slice(extra_args);
    let o = noblescope(&args);
    let (stdout, stderr) = text(&o);
    assert_eq!(
        o.status.code(),
        Some(2),
        "{name}: exit status {:?}\nstdout: {stdout}\nstderr: {stderr}",
        o.status
    );
    assert!(!stderr.contains("panicked"), "{name}: panicked: {stderr}");
    for e in expect {
        assert!(stderr.contains(e), "{name}: error message lacks {e:?}:\n{stderr}");
    }
    assert!(
        !out.exists(),
        "{name}: the output folder was created for bad input"
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn syntax_error_reports_file_line_and_column() {
    // Missing comma after `atoms: 256`: RON notices at the next token, `density`, line 5 col 5.
    rejects(
        "syntax",
        &with("atoms: 256,", "atoms: 256"),
        &[],
        &["syntax.ron:5:5:", "comma"],
    );
    // Two numbers where one belongs, line 5: `    density: Reduced(0.8 0.3),`. RON reports the
    // position right after `0.8` (column 25) — accept that or the start of `0.3` (26).
    let dir_case = "stray";
    let dir = scratch(dir_case);
    let setup = dir.join("stray.ron");
    std::fs::write(
        &setup,
        with("density: Reduced(0.8),", "density: Reduced(0.8 0.3),"),
    )
    .unwrap();
    let o = noblescope(&[
        "run",
        setup.to_str().unwrap(),
        "--out",
        dir.join("out").to_str().unwrap(),
        "--quiet",
    ]);
    let (_, stderr) = text(&o);
    assert_eq!(o.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.contains("stray.ron:5:25:") || stderr.contains("stray.ron:5:26:"),
        "wrong position: {stderr}"
    );
    assert!(!dir.join("out").exists());
    // An unterminated string on line 2: the position of its opening quote, column 12.
    rejects(
        "unterminated",
        &with("title: \"bad input test\",", "title: \"bad input test,"),
        &[],
        &["unterminated.ron:2:12:"],
    );
}

#[test]
fn unknown_species_and_unknown_field_are_parse_errors_naming_the_choices() {
    rejects(
        "species",
        &with("kind: ReducedLJ", "kind: Radon"),
        &[],
        &["species.ron:3:22:", "Radon", "Argon", "Xenon", "ReducedLJ"],
    );
    rejects(
        "field",
        &with("steps: 50,", "steps: 50,\n    colour: 3,"),
        &[],
        &["field.ron:11:5:", "colour", "trajectory_every"],
    );
}

#[test]
fn out_of_range_fields_name_field_value_and_range() {
    rejects(
        "density",
        &with("Reduced(0.8)", "Reduced(-0.8)"),
        &[],
        &["density", "-0.8", "1e-6 to 1.5"],
    );
    rejects(
        "timestep",
        &with("Reduced(0.005)", "Reduced(0.0)"),
        &[],
        &["timestep", "Reduced(0.0)", "1e-5 τ to 0.05 τ"],
    );
    rejects(
        "shares",
        &with(
            "[(kind: ReducedLJ, share: 1.0)]",
            "[(kind: Argon, share: 0.5), (kind: Krypton, share: 0.4)]",
        ),
        &[],
        &["species", "0.9", "adding up to 1"],
    );
    rejects(
        "duplicate",
        &with(
            "[(kind: ReducedLJ, share: 1.0)]",
            "[(kind: Argon, share: 0.5), (kind: Argon, share: 0.5)]",
        ),
        &[],
        &["species[1].kind", "Argon", "at most once"],
    );
    // 100 atoms at ρ = 0.8: box edge 5 σ, half of it 2.5 σ < r_c + skin = 2.8 σ.
    rejects(
        "cutoff",
        &with("atoms: 256", "atoms: 100"),
        &[],
        &["cutoff", "2.8000", "half the box edge", "2.5000 σ"],
    );
    rejects(
        "atoms",
        &with("atoms: 256", "atoms: 2000000"),
        &[],
        &["atoms", "2000000", "2 to 1000000"],
    );
    rejects(
        "kelvin",
        &with("temperature: Reduced(1.0)", "temperature: Kelvin(90.0)"),
        &[],
        &["temperature", "Kelvin(90.0)", "Reduced(…)"],
    );
    rejects(
        "sample_every",
        &with("sample_every: 10", "sample_every: 0"),
        &[],
        &["sample_every", ": 0 ", "1 to steps (50)"],
    );
    rejects(
        "equilibration",
        &with(
            "sample_every: 10,",
            "sample_every: 10,\n    equilibration_steps: 50,",
        ),
        &[],
        &["equilibration_steps", "50", "0 to steps − 1 (49)"],
    );
    rejects(
        "threads",
        GOOD,
        &["--threads", "0"],
        &["--threads", "0", "1 to 1024"],
    );
}

#[test]
fn existing_output_folder_is_refused_without_overwrite_and_left_alone() {
    let dir = scratch("existing");
    let setup = dir.join("good.ron");
    std::fs::write(&setup, GOOD).unwrap();
    let out = dir.join("out");
    std::fs::create_dir(&out).unwrap();
    let old = [
        ("energy.csv", "old log\n"),
        ("summary.json", "{\"old\": true}\n"),
        ("notes.txt", "mine\n"),
    ];
    for (f, c) in old {
        std::fs::write(out.join(f), c).unwrap();
    }
    let mtime = |f: &str| std::fs::metadata(out.join(f)).unwrap().modified().unwrap();
    let before: Vec<_> = old.iter().map(|(f, _)| mtime(f)).collect();
    let o = noblescope(&[
        "run",
        setup.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--quiet",
    ]);
    let (_, stderr) = text(&o);
    assert_eq!(o.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.contains("--out") && stderr.contains("--overwrite"),
        "{stderr}"
    );
    for (k, (f, c)) in old.iter().enumerate() {
        assert_eq!(
            std::fs::read_to_string(out.join(f)).unwrap(),
            *c,
            "{f} was changed"
        );
        assert_eq!(mtime(f), before[k], "{f} was touched");
    }
    let mut names: Vec<String> = std::fs::read_dir(&out)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    assert_eq!(names, vec!["energy.csv", "notes.txt", "summary.json"]);
    // With --overwrite the run goes ahead.
    let o = noblescope(&[
        "run",
        setup.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--quiet",
        "--overwrite",
    ]);
    assert_eq!(o.status.code(), Some(0), "{}", text(&o).1);
    assert!(
        std::fs::read_to_string(out.join("energy.csv"))
            .unwrap()
            .starts_with("step,")
    );
    let _ = std::fs::remove_dir_all(&dir);
}

/// Argon, with trajectory output: the good run (256 atoms: a full 4×4×4 fcc start lattice).
fn argon_setup(trajectory_every: u64) -> String {
    format!(
        "Setup(
    title: \"good argon run\",
    species: [(kind: Argon, share: 1.0)],
    atoms: 256,
    density: GramsPerCubicCentimetre(1.40),
    temperature: Kelvin(90.0),
    timestep: Femtoseconds(5.0),
    cutoff: Sigma(2.5),
    ensemble: Nvt(thermostat: StochasticRescale(relaxation: Reduced(0.5))),
    seed: 7,
    steps: 120,
    equilibration_steps: 40,
    sample_every: 10,
    trajectory_every: Some({trajectory_every}),
)"
    )
}

#[test]
fn good_run_writes_log_summary_checkpoint_and_trajectory() {
    let dir = scratch("good");
    let setup = dir.join("argon.ron");
    std::fs::write(&setup, argon_setup(25)).unwrap();
    let out = dir.join("out");
    let o = noblescope(&[
        "run",
        setup.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--quiet",
    ]);
    assert_eq!(o.status.code(), Some(0), "{}", text(&o).1);

    let csv = std::fs::read_to_string(out.join("energy.csv")).unwrap();
    let mut lines = csv.lines();
    let header = lines.next().unwrap();
    for col in [
        "step",
        "time [tau]",
        "potential per atom [eps]",
        "temperature [eps/kB]",
        "pressure [eps/sigma^3]",
        "time [ps]",
        "temperature [K]",
        "pressure [bar]",
        "potential per atom [kJ/mol]",
    ] {
        assert!(
            header.split(',').any(|h| h == col),
            "energy.csv header lacks {col:?}: {header}"
        );
    }
    let rows: Vec<&str> = lines.collect();
    assert_eq!(rows.len(), 13, "samples at steps 0, 10, …, 120");
    let columns = header.split(',').count();
    for (k, r) in rows.iter().enumerate() {
        let f: Vec<&str> = r.split(',').collect();
        assert_eq!(f.len(), columns, "row {k}");
        assert_eq!(f[0], (10 * k).to_string());
        assert!(
            f[1..]
                .iter()
                .all(|x| x.parse::<f64>().map(|v| v.is_finite()).unwrap_or(false)),
            "row {k}: {r}"
        );
    }

    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    assert_eq!(summary["atoms"], 256);
    assert_eq!(summary["steps"], 120);
    // Samples at steps ≥ 40: 40, 50, …, 120.
    assert_eq!(summary["samples_used"], 9);
    for key in ["relative_energy_drift", "atom_steps_per_second", "wall_seconds"] {
        assert!(
            summary[key].as_f64().is_some_and(f64::is_finite),
            "{key}: {}",
            summary[key]
        );
    }
    assert!(summary["threads"].as_u64().is_some_and(|t| t >= 1));
    for key in ["potential_energy_per_atom", "pressure", "temperature"] {
        for part in ["mean", "stderr"] {
            assert!(
                summary[key][part].as_f64().is_some_and(f64::is_finite),
                "{key}.{part}: {}",
                summary[key][part]
            );
            assert!(
                summary["si"][key][part].as_f64().is_some_and(f64::is_finite),
                "si.{key}.{part}: {}",
                summary["si"][key][part]
            );
        }
    }
    // The SI temperature is the reduced one times ε/k_B = 119.8 K for argon (the project's
    // species table, which cites Hirschfelder, Curtiss & Bird 1954). The run is too short for the
    // thermostat to settle, so the value itself is not checked.
    let t_si = summary["si"]["temperature"]["mean"].as_f64().unwrap();
    let t_red = summary["temperature"]["mean"].as_f64().unwrap();
    assert!((t_si / t_red - 119.8).abs() < 1e-9, "{t_si} K vs {t_red}");

    let c = noblescope::io::checkpoint::Checkpoint::load(&out.join("final.checkpoint")).unwrap();
    assert_eq!(c.state.step, 120);
    assert_eq!(c.state.positions.len(), 256);

    // Frames at steps 0, 25, 50, 75, 100: five frames of 2 + 256 lines.
    let xyz = std::fs::read_to_string(out.join("trajectory.xyz")).unwrap();
    let lines: Vec<&str> = xyz.lines().collect();
    assert_eq!(lines.len(), 5 * 258, "trajectory line count");
    for (f, frame) in lines.chunks(258).enumerate() {
        assert_eq!(frame[0], "256", "frame {f} count line");
        assert!(
            frame[1].starts_with(&format!("step={} ", 25 * f)),
            "frame {f} comment: {}",
            frame[1]
        );
        let box_edge: f64 = frame[1]
            .split("box=")
            .nth(1)
            .unwrap()
            .split(' ')
            .next()
            .unwrap()
            .parse()
            .unwrap();
        for atom in &frame[2..] {
            let p: Vec<&str> = atom.split_whitespace().collect();
            assert_eq!(p.len(), 4, "{atom}");
            assert_eq!(p[0], "Ar");
            for x in &p[1..] {
                let v: f64 = x.parse().unwrap();
                // Folded into the box, in ångström (rounded to 6 decimals when printed).
                assert!(
                    (0.0..=box_edge + 1e-6).contains(&v),
                    "coordinate {v} outside [0, {box_edge}]"
                );
            }
        }
    }
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn blow_up_exits_1_naming_step_and_atoms() {
    // Within every validated range: the densest allowed state (ρσ³ = 1.5), the hottest start
    // (kT/ε = 100) and the longest timestep (0.05 τ). Atoms fly ~0.5 σ per step into each
    // other's cores and the energy overflows within a few steps.
    let dir = scratch("blowup");
    let setup = dir.join("blowup.ron");
    let text_ = GOOD
        .replacen("atoms: 256", "atoms: 500", 1)
        .replacen("Reduced(0.8)", "Reduced(1.5)", 1)
        .replacen("temperature: Reduced(1.0)", "temperature: Reduced(100.0)", 1)
        .replacen("Reduced(0.005)", "Reduced(0.05)", 1)
        .replacen("steps: 50", "steps: 2000", 1);
    std::fs::write(&setup, text_).unwrap();
    let out = dir.join("out");
    let o = noblescope(&[
        "run",
        setup.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--quiet",
    ]);
    let (_, stderr) = text(&o);
    assert_eq!(o.status.code(), Some(1), "{stderr}");
    assert!(!stderr.contains("panicked"), "{stderr}");
    let step: u64 = stderr
        .split("at step ")
        .nth(1)
        .and_then(|s| s.split(|c: char| !c.is_ascii_digit()).next())
        .and_then(|s| s.parse().ok())
        .unwrap_or_else(|| panic!("no step in: {stderr}"));
    assert!((1..2000).contains(&step), "{stderr}");
    let atoms = stderr
        .split("atoms involved: [")
        .nth(1)
        .and_then(|s| s.split(']').next())
        .unwrap_or_else(|| panic!("no atoms in: {stderr}"));
    let atoms: Vec<usize> = atoms.split(", ").map(|a| a.parse().unwrap()).collect();
    assert!(!atoms.is_empty() && atoms.iter().all(|&a| a < 500), "{stderr}");
    // A stopped run leaves no checkpoint that could be mistaken for a finished one; its summary
    // says why it stopped, with the same step and atoms, caught before any value overflowed.
    assert!(!out.join("final.checkpoint").exists());
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    let alarm = &summary["alarm"];
    assert_eq!(alarm["step"].as_u64(), Some(step), "{alarm}");
    let kind = alarm["kind"].as_str().unwrap();
    assert!(["jump", "energy_jump", "overlap"].contains(&kind), "{alarm}");
    assert!(
        stderr.contains(&format!("alarm {kind} at step {step}")),
        "{stderr}"
    );
    let listed: Vec<usize> = alarm["atoms"]
        .as_array()
        .unwrap()
        .iter()
        .map(|a| a.as_u64().unwrap() as usize)
        .collect();
    assert_eq!(listed, atoms, "{alarm}");
    assert!(!alarm["detail"].as_str().unwrap().is_empty());
    let _ = std::fs::remove_dir_all(&dir);
}

/// Setup files are read through a cap (`io::setup::MAX_SETUP_BYTES`, 1 MiB): a device that never
/// ends is read no further than the cap, and a larger file is refused naming its size.
#[test]
fn endless_or_oversized_setup_files_are_refused_naming_file_size_and_maximum() {
    let cap = noblescope::io::setup::MAX_SETUP_BYTES;
    let dir = scratch("oversized");
    let big = dir.join("big.ron");
    // A valid setup followed by enough comment to pass the cap by one byte.
    let mut body = GOOD.to_string();
    body.push_str("//");
    body.push_str(&"x".repeat(cap as usize + 1 - body.len()));
    std::fs::write(&big, &body).unwrap();
    let big_name = big.to_str().unwrap().to_owned();
    let mut cases = vec![(big_name.clone(), format!("size {} bytes", cap + 1))];
    if Path::new("/dev/zero").exists() {
        cases.push(("/dev/zero".into(), format!("more than {cap} bytes")));
    }
    for (file, size) in cases {
        let out = dir.join("out");
        let o = noblescope(&["run", &file, "--out", out.to_str().unwrap(), "--quiet"]);
        let (_, stderr) = text(&o);
        assert_eq!(o.status.code(), Some(2), "{file}: {stderr}");
        for e in [file.as_str(), size.as_str(), &format!("at most {cap} bytes")] {
            assert!(stderr.contains(e), "{file}: error lacks {e:?}: {stderr}");
        }
        assert!(!out.exists(), "{file}: output folder created");
    }
    // One byte less is read and parsed as usual.
    body.pop();
    std::fs::write(&big, &body).unwrap();
    assert!(noblescope::io::Setup::load(&big).is_ok());
    let _ = std::fs::remove_dir_all(&dir);
}

fn scratch(name: &str) -> PathBuf {
    command_line::scratch("bad-input", name)
}
