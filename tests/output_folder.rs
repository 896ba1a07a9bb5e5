//! What an output folder holds after each way a run can end, and what `--out` refuses.
//!
//! Contract under test (`io::run_folder`, `engine::headless::run`, README "What a folder holds"):
//! a folder always holds exactly one run; a later run that fails or is killed never damages an
//! earlier complete one; nothing is written through a symbolic link; leftovers of a killed run
//! are cleaned by the next run into the same folder. Exit codes as in `tests/bad_input.rs`.

mod command_line;
use command_line::noblescope;

use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};

fn setup(dir: &Path, name: &str, extra: &str, steps: u64) -> PathBuf {
    let text = format!(
        "Setup(
    species: [(kind: ReducedLJ, share: 1.0)],
    atoms: 256,
    density: Reduced(0.8),
    temperature: Reduced(1.0),
    timestep: Reduced(0.005),
    cutoff: Sigma(2.5),
    ensemble: Nve,
    steps: {steps},
    sample_every: 10,
    {extra}
)"
    );
    let p = dir.join(format!("{name}.ron"));
    std::fs::write(&p, text).unwrap();
    p
}

fn run(setup: &Path, out: &Path, extra: &[&str]) -> Output {
    let mut args = vec![
        "run",
        setup.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--quiet",
    ];
    args.extend_from_slice(extra);
    noblescope(&args)
}

fn names(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

#[test]
fn an_overwriting_run_leaves_no_file_of_the_earlier_run_beside_its_own() {
    let d = scratch("stale");
    let out = d.join("out");
    let with_files = setup(
        &d,
        "with",
        "trajectory_every: Some(20), rdf_every: Some(10),",
        100,
    );
    assert_eq!(run(&with_files, &out, &[]).status.code(), Some(0));
    assert_eq!(
        names(&out),
        [
            "energy.csv",
            "final.checkpoint",
            "rdf.csv",
            "summary.json",
            "trajectory.xyz"
        ]
    );
    let plain = setup(&d, "plain", "", 100);
    assert_eq!(run(&plain, &out, &["--overwrite"]).status.code(), Some(0));
    assert_eq!(names(&out), ["energy.csv", "final.checkpoint", "summary.json"]);
    assert_eq!(
        names(&d),
        ["out", "plain.ron", "with.ron"],
        "no staging folder left beside it"
    );
}

#[test]
fn an_overwriting_run_that_blows_up_leaves_only_its_own_log() {
    let d = scratch("blowup");
    let out = d.join("out");
    let good = setup(&d, "good", "", 100);
    assert_eq!(run(&good, &out, &[]).status.code(), Some(0));
    // Densest allowed state, hottest start, longest timestep: blows up within a few steps.
    let bad = d.join("bad.ron");
    std::fs::write(
        &bad,
        std::fs::read_to_string(&good)
            .unwrap()
            .replace("atoms: 256", "atoms: 500")
            .replace("Reduced(0.8)", "Reduced(1.5)")
            .replace("temperature: Reduced(1.0)", "temperature: Reduced(100.0)")
            .replace("Reduced(0.005)", "Reduced(0.05)"),
    )
    .unwrap();
    let o = run(&bad, &out, &["--overwrite"]);
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(1), "{stderr}");
    assert!(stderr.contains("holds the run up to the alarm"), "{stderr}");
    assert_eq!(
        names(&out),
        ["alarm.xyz", "energy.csv", "summary.json"],
        "the earlier run's checkpoint is gone; the summary is the stopped run's"
    );
    let summary = std::fs::read_to_string(out.join("summary.json")).unwrap();
    assert!(summary.contains("\"alarm\""), "{summary}");
    let log = std::fs::read_to_string(out.join("energy.csv")).unwrap();
    assert!(
        log.lines().count() < 12,
        "the log is the short blown-up run's:\n{log}"
    );
}

#[test]
fn a_run_killed_while_overwriting_leaves_the_earlier_run_whole_and_is_cleaned_up_next_time() {
    let d = scratch("killed");
    let out = d.join("out");
    let short = setup(&d, "short", "", 100);
    assert_eq!(run(&short, &out, &[]).status.code(), Some(0));
    let before: Vec<Vec<u8>> = names(&out)
        .iter()
        .map(|n| std::fs::read(out.join(n)).unwrap())
        .collect();
    let long = setup(&d, "long", "", 100_000_000);
    let mut child = Command::new(env!("CARGO_BIN_EXE_noblescope"))
        .args([
            "run",
            long.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
            "--quiet",
            "--overwrite",
        ])
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    // Wait until the run is writing its staging folder, then kill it without warning.
    let staging = d.join(format!(".out.staging-{}", child.id()));
    for _ in 0..600 {
        if staging.join("energy.csv").exists() {
            break;
        }
        std::thread::sleep(std::time::Duration::from_millis(10));
    }
    assert!(
        staging.join("energy.csv").exists(),
        "the run never started writing"
    );
    child.kill().unwrap();
    child.wait().unwrap();
    let after: Vec<Vec<u8>> = names(&out)
        .iter()
        .map(|n| std::fs::read(out.join(n)).unwrap())
        .collect();
    assert_eq!(before, after, "the earlier run changed");
    assert!(staging.exists(), "test bug: the kill came after the run ended");
    // The next run into the folder removes the dead run's staging folder.
    assert_eq!(run(&short, &out, &["--overwrite"]).status.code(), Some(0));
    assert!(!staging.exists());
    assert_eq!(names(&d), ["long.ron", "out", "short.ron"]);
}

#[cfg(unix)]
#[test]
fn nothing_is_written_through_a_symbolic_link_in_the_output_folder() {
    let d = scratch("link");
    let out = d.join("out");
    let s = setup(&d, "s", "", 50);
    assert_eq!(run(&s, &out, &[]).status.code(), Some(0));
    let victim = d.join("victim.txt");
    std::fs::write(&victim, "the user's file").unwrap();
    std::fs::remove_file(out.join("energy.csv")).unwrap();
    std::os::unix::fs::symlink(&victim, out.join("energy.csv")).unwrap();
    assert_eq!(run(&s, &out, &["--overwrite"]).status.code(), Some(0));
    assert_eq!(std::fs::read_to_string(&victim).unwrap(), "the user's file");
    assert!(
        !std::fs::symlink_metadata(out.join("energy.csv"))
            .unwrap()
            .file_type()
            .is_symlink()
    );
}

#[cfg(unix)]
#[test]
fn a_link_as_the_output_folder_is_refused_with_exit_2_and_the_users_files_are_kept() {
    let d = scratch("refuse");
    let s = setup(&d, "s", "", 50);
    let dangling = d.join("dangling");
    std::os::unix::fs::symlink(d.join("nowhere"), &dangling).unwrap();
    let o = run(&s, &dangling, &[]);
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.contains("is a symbolic link to") && stderr.contains("which does not exist"),
        "{stderr}"
    );
    // The user's own files in a run folder outlive any number of overwriting runs.
    let mine = d.join("mine");
    std::fs::create_dir(&mine).unwrap();
    std::fs::write(mine.join("thesis.tex"), "months of work").unwrap();
    assert_eq!(run(&s, &mine, &[]).status.code(), Some(0));
    assert_eq!(run(&s, &mine, &["--overwrite"]).status.code(), Some(0));
    assert_eq!(
        std::fs::read_to_string(mine.join("thesis.tex")).unwrap(),
        "months of work"
    );
    assert_eq!(
        names(&mine),
        ["energy.csv", "final.checkpoint", "summary.json", "thesis.tex"]
    );
}

fn scratch(name: &str) -> PathBuf {
    command_line::scratch("out-folder", name)
}
