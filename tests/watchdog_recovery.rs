//! `run --recover`: a run that would blow up goes back to its last healthy snapshot with half
//! the timestep, finishes, lists each recovery in summary.json, and is bitwise reproducible.

mod command_line;

use command_line::{noblescope, scratch, text};
use std::path::Path;

/// The liquid at ten times a usable timestep: a jump within the first steps.
const TOO_FAST: &str = r#"Setup(
    title: "recovering liquid",
    species: [(kind: ReducedLJ, share: 1.0)],
    atoms: 500,
    density: Reduced(0.8442),
    temperature: Reduced(1.44),
    timestep: Reduced(0.05),
    cutoff: Sigma(2.5),
    potential: TruncatedShifted,
    ensemble: Nve,
    seed: 5,
    steps: 1200,
    sample_every: 10,
    trajectory_every: Some(100),
)"#;

fn run(setup: &Path, out: &Path, extra: &[&str]) -> (Option<i32>, String) {
    let mut args = vec![
        "run",
        setup.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--quiet",
    ];
    args.extend_from_slice(extra);
    let o = noblescope(&args);
    (o.status.code(), text(&o).1)
}

fn summary(out: &Path) -> serde_json::Value {
    serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap()
}

#[test]
fn a_run_that_would_blow_up_recovers_lists_its_recoveries_and_is_bitwise_reproducible() {
    let d = scratch("recover", "liquid");
    let setup = d.join("fast.ron");
    std::fs::write(&setup, TOO_FAST).unwrap();

    let (code, stderr) = run(&setup, &d.join("plain"), &[]);
    assert_eq!(code, Some(1), "without --recover the run stops: {stderr}");

    let (code, stderr) = run(&setup, &d.join("a"), &["--recover"]);
    assert_eq!(code, Some(0), "{stderr}");
    let s = summary(&d.join("a"));
    assert!(s["alarm"].is_null(), "{s}");
    assert_eq!(s["steps"].as_u64(), Some(1200));
    let recoveries = s["recoveries"].as_array().unwrap();
    assert!((1..=3).contains(&recoveries.len()), "{s}");
    let mut dt = 0.05;
    for r in recoveries {
        assert_eq!(r["timestep_before"].as_f64(), Some(dt), "{r}");
        dt /= 2.0;
        assert_eq!(r["timestep_after"].as_f64(), Some(dt), "{r}");
        assert!(r["resumed_from_step"].as_u64().unwrap() < r["alarm"]["step"].as_u64().unwrap());
        assert!(!r["alarm"]["atoms"].as_array().unwrap().is_empty());
    }
    // The log reads as one run: each step once, in order, up to the end.
    let log = std::fs::read_to_string(d.join("a/energy.csv")).unwrap();
    let steps: Vec<u64> = log
        .lines()
        .skip(1)
        .map(|l| l.split(',').next().unwrap().parse().unwrap())
        .collect();
    assert_eq!(steps, (0..=120).map(|i| i * 10).collect::<Vec<_>>());

    // Again: the same bits, checkpoint included.
    let (code, stderr) = run(&setup, &d.join("a2"), &["--recover"]);
    assert_eq!(code, Some(0), "{stderr}");
    let same = |x: &str, y: &str, f: &str| {
        std::fs::read(d.join(x).join(f)).unwrap() == std::fs::read(d.join(y).join(f)).unwrap()
    };
    for f in ["energy.csv", "trajectory.xyz", "final.checkpoint"] {
        assert!(same("a", "a2", f), "{f} differs between two recovering runs");
    }
    // Through the setup field instead of the flag: the same run (the checkpoint differs only
    // in the setup it records).
    let field = d.join("field.ron");
    std::fs::write(
        &field,
        TOO_FAST.replace("sample_every: 10,", "sample_every: 10, recover: true,"),
    )
    .unwrap();
    let (code, stderr) = run(&field, &d.join("b"), &[]);
    assert_eq!(code, Some(0), "{stderr}");
    for f in ["energy.csv", "trajectory.xyz"] {
        assert!(
            same("a", "b", f),
            "{f} differs between the flag and the setup field"
        );
    }
    assert_eq!(summary(&d.join("b"))["recoveries"], s["recoveries"]);
    let _ = std::fs::remove_dir_all(&d);
}

#[test]
fn recovery_gives_up_after_three_halvings_and_says_so() {
    let d = scratch("recover", "hopeless");
    let setup = d.join("hot.ron");
    // Densest allowed state, hottest start: even an eighth of the longest timestep is too long.
    let text_ = TOO_FAST
        .replace("Reduced(0.8442)", "Reduced(1.5)")
        .replace("temperature: Reduced(1.44)", "temperature: Reduced(100.0)");
    std::fs::write(&setup, text_).unwrap();
    let (code, stderr) = run(&setup, &d.join("out"), &["--recover"]);
    assert_eq!(code, Some(1), "{stderr}");
    let s = summary(&d.join("out"));
    assert_eq!(s["recoveries"].as_array().unwrap().len(), 3, "{s}");
    assert!(s["alarm"]["kind"].is_string(), "{s}");
    assert!(stderr.contains("timestep now 0.00625 tau"), "{stderr}");
    assert!(!d.join("out/final.checkpoint").exists());
    let _ = std::fs::remove_dir_all(&d);
}

#[test]
fn the_window_engine_recovers_a_setup_that_asks_for_it_and_says_so() {
    use noblescope::engine::{Command, EngineHandle, Event};
    use noblescope::io::Setup;
    use std::time::{Duration, Instant};
    let text_ = TOO_FAST.replace("sample_every: 10,", "sample_every: 10, recover: true,");
    let h = EngineHandle::spawn(Setup::parse(&text_, "fast.ron").unwrap()).unwrap();
    h.send(Command::Run);
    let until = Instant::now() + Duration::from_secs(60);
    let mut recovered = Vec::new();
    let mut alarms = 0;
    let mut reached = false;
    while Instant::now() < until && !reached {
        match h.next_event(Duration::from_millis(100)) {
            Some(Event::Recovered {
                alarm,
                resumed_from_step,
                timestep,
            }) => {
                assert!(resumed_from_step < alarm.step);
                recovered.push(timestep.value());
            }
            Some(Event::Alarm(_)) => alarms += 1,
            Some(Event::ReachedSteps { .. }) => reached = true,
            _ => {}
        }
    }
    assert!(reached, "the run reached its steps");
    assert_eq!(alarms, 0, "every alarm was recovered");
    assert!(!recovered.is_empty() && recovered.len() <= 3, "{recovered:?}");
    assert_eq!(recovered[0], 0.025);
}
