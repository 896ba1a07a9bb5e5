//! `noblescope sweep`: points from a sweep file, a local sweep that resumes and retries, the
//! Slurm batch script, and refusals of bad sweeps before anything runs.

mod command_line;

use command_line::{noblescope, scratch, text};
use noblescope::io::Setup;
use noblescope::io::sweep_file::Sweep;
use std::path::{Path, PathBuf};

const BASE: &str = "Setup(
        species: [(kind: ReducedLJ, share: 1.0)],
        atoms: 108,
        density: Reduced(0.5),
        temperature: Reduced(1.5),
        timestep: Reduced(0.005),
        cutoff: Sigma(2.0),
        ensemble: Nvt(thermostat: Langevin(friction: Reduced(1.0))),
        seed: 40,
        steps: 300,
        sample_every: 10,
    )";

fn sweep_file(dir: &Path, name: &str, axes: &str) -> PathBuf {
    let p = dir.join(format!("{name}.ron"));
    std::fs::write(&p, format!("Sweep(\n    base: {BASE},\n    {axes}\n)")).unwrap();
    p
}

fn sweep(args: &[&str]) -> (Option<i32>, String, String) {
    let mut all = vec!["sweep"];
    all.extend_from_slice(args);
    let o = noblescope(&all);
    let (out, err) = text(&o);
    (o.status.code(), out, err)
}

#[test]
fn points_follow_the_axes_in_order_with_seeds_from_their_index_and_exclusions_left_out() {
    let text = format!(
        "Sweep(base: {BASE}, temperature: [Reduced(1.5), Reduced(2.0)], density: [Reduced(0.4), Reduced(0.5), Reduced(0.6)], replicas: 2,
        exclude: [(temperature: Reduced(2.0), density: Reduced(0.6))])"
    );
    let s = Sweep::parse(&text, "t.ron").unwrap();
    let base = match &s.base {
        noblescope::io::sweep_file::Base::Inline(b) => (**b).clone(),
        _ => unreachable!("inline base"),
    };
    let points = s.points(&base).unwrap();
    // 2 × 3 × 2 = 12, less the 2 replicas of the excluded combination.
    assert_eq!(points.len(), 10);
    for (i, p) in points.iter().enumerate() {
        assert_eq!(p.index, i);
        assert_eq!(p.setup.seed, 40 + i as u64);
    }
    // Temperature slowest, then density, replica fastest.
    let d = |i: usize| {
        format!(
            "{:?}/{:?}/{}",
            points[i].setup.temperature, points[i].setup.density, points[i].replica
        )
    };
    assert_eq!(d(0), "Reduced(1.5)/Reduced(0.4)/0");
    assert_eq!(d(1), "Reduced(1.5)/Reduced(0.4)/1");
    assert_eq!(d(2), "Reduced(1.5)/Reduced(0.5)/0");
    assert_eq!(d(9), "Reduced(2.0)/Reduced(0.5)/1");
}

#[test]
fn bad_axes_and_huge_sweeps_are_refused_before_anything_runs() {
    let d = scratch("sweep", "bad");
    for (axes, words) in [
        (
            "temperature: [Reduced(1.5), Reduced(-1.0)]",
            "temperature[1] (temperature)",
        ),
        ("cutoff: [Sigma(25.0)]", "cutoff[0] (cutoff)"),
        ("atoms: [1]", "atoms[0] (atoms)"),
        ("replicas: 0", "replicas"),
        (
            "density: [Reduced(0.5)], exclude: [(density: Reduced(0.5))]",
            "exclude",
        ),
    ] {
        let f = sweep_file(&d, "bad", axes);
        let out = d.join("out");
        let (code, _, err) = sweep(&[f.to_str().unwrap(), "--out", out.to_str().unwrap(), "--quiet"]);
        assert_eq!(code, Some(2), "{axes}: {err}");
        assert!(err.contains(words) && err.contains("allowed"), "{axes}: {err}");
        assert!(!out.exists(), "{axes}: something was written");
    }
    let values: Vec<String> = (0..400)
        .map(|i| format!("Reduced({:.4})", 1.0 + i as f64 * 0.001))
        .collect();
    let dens: Vec<String> = (0..300)
        .map(|i| format!("Reduced({:.4})", 0.3 + i as f64 * 0.001))
        .collect();
    let f = sweep_file(
        &d,
        "huge",
        &format!(
            "temperature: [{}], density: [{}]",
            values.join(","),
            dens.join(",")
        ),
    );
    let (code, _, err) = sweep(&[f.to_str().unwrap(), "--out", d.join("huge").to_str().unwrap()]);
    assert_eq!(code, Some(2), "{err}");
    assert!(err.contains("120000 points") && err.contains("--yes"), "{err}");
}

#[test]
fn a_local_sweep_resumes_retries_failed_points_and_refuses_a_folder_of_another_sweep() {
    let d = scratch("sweep", "local");
    let f = sweep_file(
        &d,
        "three",
        "temperature: [Reduced(1.5), Reduced(1.8), Reduced(2.1)],",
    );
    let out = d.join("out");
    let o = out.to_str().unwrap();
    let (code, stdout, err) = sweep(&[f.to_str().unwrap(), "--out", o, "--quiet", "--jobs", "2"]);
    assert_eq!(code, Some(0), "{err}");
    assert!(stdout.contains("3 finished (0 earlier)"), "{stdout}");
    let csv = std::fs::read_to_string(out.join("sweep.csv")).unwrap();
    assert_eq!(csv.lines().filter(|l| !l.starts_with('#')).count(), 4, "{csv}");
    assert!(
        csv.contains("\ntemperature") || csv.contains(",temperature,"),
        "{csv}"
    );
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("sweep.json")).unwrap()).unwrap();
    assert_eq!(json["finished"], 3);

    // A point rerun alone from its own setup file gives the same energy log.
    let alone = d.join("alone");
    let r = noblescope(&[
        "run",
        out.join("point-0001/setup.ron").to_str().unwrap(),
        "--out",
        alone.to_str().unwrap(),
        "--quiet",
    ]);
    assert_eq!(r.status.code(), Some(0));
    assert_eq!(
        std::fs::read(alone.join("energy.csv")).unwrap(),
        std::fs::read(out.join("point-0001/energy.csv")).unwrap()
    );

    // Finished points are skipped; a point without its summary runs again.
    std::fs::remove_file(out.join("point-0002/summary.json")).unwrap();
    let (code, stdout, err) = sweep(&[f.to_str().unwrap(), "--out", o, "--quiet"]);
    assert_eq!(code, Some(0), "{err}");
    assert!(stdout.contains("3 finished (2 earlier)"), "{stdout}");

    // A point that fails (a folder of the user's where its run writes a file) is recorded as
    // failed, skipped by the next run, and run again with --retry-failed.
    std::fs::remove_file(out.join("point-0000/summary.json")).unwrap();
    std::fs::remove_file(out.join("point-0000/final.checkpoint")).unwrap();
    std::fs::create_dir_all(out.join("point-0000/final.checkpoint/notes")).unwrap();
    let (code, _, err) = sweep(&[f.to_str().unwrap(), "--out", o, "--quiet"]);
    assert_eq!(code, Some(1), "{err}");
    assert!(
        err.contains("[0] failed") && err.contains("--retry-failed"),
        "{err}"
    );
    assert!(out.join("point-0000/failed.txt").exists());
    let (code, stdout, _) = sweep(&[f.to_str().unwrap(), "--out", o, "--quiet"]);
    assert_eq!(code, Some(1));
    assert!(stdout.contains("1 failed"), "{stdout}");
    std::fs::remove_dir_all(out.join("point-0000/final.checkpoint")).unwrap();
    let (code, stdout, err) = sweep(&[f.to_str().unwrap(), "--out", o, "--quiet", "--retry-failed"]);
    assert_eq!(code, Some(0), "{err}");
    assert!(stdout.contains("3 finished (2 earlier), 0 failed"), "{stdout}");
    assert!(!out.join("point-0000/failed.txt").exists());

    // Another sweep into the same folder is refused, and the folder is left as it was.
    let other = sweep_file(&d, "other", "temperature: [Reduced(1.6)],");
    let (code, _, err) = sweep(&[other.to_str().unwrap(), "--out", o, "--quiet"]);
    assert_eq!(code, Some(2), "{err}");
    assert!(err.contains("different sweep"), "{err}");
    assert!(out.join("point-0002/summary.json").exists());
}

#[test]
fn slurm_writes_a_job_array_script_for_the_points_not_yet_run() {
    let d = scratch("sweep", "slurm");
    let f = sweep_file(&d, "four", "density: [Reduced(0.3), Reduced(0.4)], replicas: 2,");
    let out = d.join("out");
    let o = out.to_str().unwrap();
    let (code, stdout, err) = sweep(&[
        f.to_str().unwrap(),
        "--out",
        o,
        "--slurm",
        "--partition",
        "short",
        "--time",
        "00:30:00",
        "--cpus-per-task",
        "2",
        "--max-parallel",
        "3",
    ]);
    assert_eq!(code, Some(0), "{err}");
    assert!(stdout.contains("4 of 4 points"), "{stdout}");
    let script = std::fs::read_to_string(out.join("sweep.sbatch")).unwrap();
    for line in [
        "#SBATCH --array=0-3%3",
        "#SBATCH --partition=short",
        "#SBATCH --time=00:30:00",
        "#SBATCH --cpus-per-task=2",
        "run \"$point/setup.ron\" --out \"$point\"",
    ] {
        assert!(script.contains(line), "missing {line:?} in\n{script}");
    }
    // Each point's setup is a setup file `run` accepts as it is.
    for i in 0..4 {
        Setup::load(&out.join(format!("point-{i:04}/setup.ron")))
            .unwrap()
            .resolve()
            .unwrap();
    }
    // After point 1 has run, only the others are listed.
    let r = noblescope(&[
        "run",
        out.join("point-0001/setup.ron").to_str().unwrap(),
        "--out",
        out.join("point-0001").to_str().unwrap(),
        "--quiet",
    ]);
    assert_eq!(r.status.code(), Some(0));
    let (code, _, _) = sweep(&[f.to_str().unwrap(), "--out", o, "--slurm"]);
    assert_eq!(code, Some(0));
    let script = std::fs::read_to_string(out.join("sweep.sbatch")).unwrap();
    assert!(script.contains("#SBATCH --array=0,2-3\n"), "{script}");
    let (code, _, err) = sweep(&[f.to_str().unwrap(), "--out", o, "--slurm", "--time", "1:5"]);
    assert_eq!(code, Some(2));
    assert!(err.contains("--time: 1:5"), "{err}");
}
