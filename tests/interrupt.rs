//! Ctrl-C (SIGINT): a headless run stops after the step under way with every file written and a
//! checkpoint to continue from; a sweep keeps every finished point and runs the rest next time.

mod command_line;

use command_line::scratch;
use std::path::Path;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

fn setup_text(steps: u64) -> String {
    format!(
        "Setup(
    species: [(kind: ReducedLJ, share: 1.0)],
    atoms: 256,
    density: Reduced(0.7),
    temperature: Reduced(1.5),
    timestep: Reduced(0.005),
    cutoff: Sigma(2.5),
    ensemble: Nvt(thermostat: Langevin(friction: Reduced(1.0))),
    steps: {steps},
    sample_every: 10,
)"
    )
}

fn interrupt(pid: u32) {
    let s = Command::new("kill")
        .args(["-INT", &pid.to_string()])
        .status()
        .unwrap();
    assert!(s.success());
}

fn wait_until(secs: u64, what: &str, done: impl Fn() -> bool) {
    let until = Instant::now() + Duration::from_secs(secs);
    while !done() {
        assert!(Instant::now() < until, "timed out waiting for {what}");
        std::thread::sleep(Duration::from_millis(50));
    }
}

fn summary(dir: &Path) -> serde_json::Value {
    serde_json::from_str(&std::fs::read_to_string(dir.join("summary.json")).unwrap()).unwrap()
}

#[test]
fn an_interrupted_run_writes_its_files_and_continues_from_its_checkpoint() {
    let d = scratch("interrupt", "run");
    let s = d.join("long.ron");
    std::fs::write(&s, setup_text(100_000_000)).unwrap();
    let out = d.join("out");
    let child = Command::new(env!("CARGO_BIN_EXE_noblescope"))
        .args([
            "run",
            s.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
            "--quiet",
        ])
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    // Let it run a little (the staging folder appears beside the output folder).
    std::thread::sleep(Duration::from_millis(1500));
    interrupt(child.id());
    let o = child.wait_with_output().unwrap();
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(130), "{err}");
    assert!(
        err.contains("interrupted at step") && err.contains("resume"),
        "{err}"
    );
    let v = summary(&out);
    assert_eq!(v["stopped_because"], "interrupted");
    let step = v["steps"].as_u64().unwrap();
    assert!(step > 0 && step < 100_000_000);
    assert!(out.join("final.checkpoint").exists() && out.join("energy.csv").exists());
    // The checkpoint continues the run.
    let more = d.join("more");
    let o = Command::new(env!("CARGO_BIN_EXE_noblescope"))
        .args([
            "resume",
            out.join("final.checkpoint").to_str().unwrap(),
            "--out",
            more.to_str().unwrap(),
            "--quiet",
            "--steps",
            &(step + 100).to_string(),
        ])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(0), "{}", String::from_utf8_lossy(&o.stderr));
    assert_eq!(summary(&more)["steps"].as_u64().unwrap(), step + 100);
}

#[test]
fn an_interrupted_sweep_keeps_its_finished_points_and_runs_the_rest_next_time() {
    let d = scratch("interrupt", "sweep");
    let f = d.join("six.ron");
    let base = setup_text(4000);
    std::fs::write(
        &f,
        format!(
            "Sweep(base: {base}, temperature: [Reduced(1.5), Reduced(1.6), Reduced(1.7), Reduced(1.8), Reduced(1.9), Reduced(2.0)])"
        ),
    )
    .unwrap();
    let out = d.join("out");
    let sweep = |extra: &[&str]| {
        let mut c = Command::new(env!("CARGO_BIN_EXE_noblescope"));
        c.args([
            "sweep",
            f.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
            "--quiet",
            "--jobs",
            "1",
        ]);
        c.args(extra);
        c
    };
    let child = sweep(&[])
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    wait_until(120, "the first point to finish", || {
        out.join("point-0000/summary.json").exists()
    });
    interrupt(child.id());
    let o = child.wait_with_output().unwrap();
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(130), "{err}");
    assert!(err.contains("finished points are kept"), "{err}");
    let finished: Vec<usize> = (0..6)
        .filter(|i| {
            let p = out.join(format!("point-{i:04}/summary.json"));
            p.exists() && summary(p.parent().unwrap())["stopped_because"] != "interrupted"
        })
        .collect();
    assert!(
        !finished.is_empty() && finished.len() < 6,
        "finished: {finished:?}"
    );
    let energy_before = std::fs::read(out.join("point-0000/energy.csv")).unwrap();
    let o = sweep(&[]).output().unwrap();
    let stdout = String::from_utf8_lossy(&o.stdout);
    assert_eq!(o.status.code(), Some(0), "{}", String::from_utf8_lossy(&o.stderr));
    assert!(
        stdout.contains(&format!("6 finished ({} earlier)", finished.len())),
        "{stdout}"
    );
    // The finished point was not run again.
    assert_eq!(
        std::fs::read(out.join("point-0000/energy.csv")).unwrap(),
        energy_before
    );
}
