//! Tuning through the engine: the scan works on copies (the user's step counter stays put), the
//! engine keeps serving commands meanwhile, bad requests are refused with field, value and
//! allowed range, and only one scan runs at a time.

use noblescope::engine::{Command, CommandKind, EngineHandle, Event, TuneRequest};
use noblescope::io::setup::Setup;
use std::time::{Duration, Instant};

/// 256 reduced-LJ atoms at ρ = 0.8442: half the box is 3.36 σ, skin 0.3 σ.
fn small() -> Setup {
    let mut s = Setup::parse(include_str!("../assets/reduced-lj-timestep-check.ron"), "tuning").unwrap();
    s.atoms = 256;
    s.steps = 100_000;
    s.equilibration_steps = 0;
    s.sample_every = 1;
    s
}

/// Waits for an event matching `want`, collecting every event seen meanwhile.
fn wait_for(
    h: &EngineHandle,
    seen: &mut Vec<Event>,
    secs: u64,
    want: impl Fn(&Event) -> bool,
) -> Option<Event> {
    let until = Instant::now() + Duration::from_secs(secs);
    while Instant::now() < until {
        if let Some(e) = h.next_event(Duration::from_millis(50)) {
            let hit = want(&e);
            seen.push(e.clone());
            if hit {
                return Some(e);
            }
        }
    }
    None
}

fn rejection(h: &EngineHandle, c: Command) -> String {
    h.send(c);
    let mut seen = Vec::new();
    match wait_for(h, &mut seen, 10, |e| matches!(e, Event::Rejected { .. })) {
        Some(Event::Rejected { command, reason }) => {
            assert_eq!(command, CommandKind::Tune);
            reason
        }
        _ => panic!("no rejection; saw {seen:?}"),
    }
}

fn tune(timesteps: &[f64], cutoffs: &[f64], duration: f64) -> Command {
    Command::Tune(TuneRequest {
        timesteps_tau: timesteps.to_vec(),
        cutoffs_sigma: cutoffs.to_vec(),
        duration_tau: duration,
    })
}

#[test]
fn a_scan_leaves_the_simulation_where_it_was_and_reports_every_row() {
    let h = EngineHandle::spawn(small()).unwrap();
    let mut seen = Vec::new();
    assert!(wait_for(&h, &mut seen, 10, |e| matches!(e, Event::Started { .. })).is_some());
    h.send(Command::StepOnce);
    h.send(Command::StepOnce);
    assert!(
        wait_for(
            &h,
            &mut seen,
            10,
            |e| matches!(e, Event::Status(s) if s.step == 2)
        )
        .is_some()
    );
    seen.clear();
    h.send(tune(&[0.002, 0.005, 0.05], &[2.0, 2.5], 2.0));
    let Some(Event::Tuned(report)) = wait_for(&h, &mut seen, 120, |e| matches!(e, Event::Tuned(_))) else {
        panic!("no results; saw {:?}", seen.last())
    };
    // The user's simulation did not move while the scan ran.
    let steps: Vec<u64> = seen
        .iter()
        .filter_map(|e| {
            if let Event::Status(s) = e {
                Some(s.step)
            } else {
                None
            }
        })
        .collect();
    assert!(!steps.is_empty(), "status kept coming during the scan");
    assert!(
        steps.iter().all(|&s| s == 2),
        "the step counter moved during the scan: {steps:?}"
    );
    assert!(
        !seen.iter().any(|e| matches!(e, Event::Sample(_))),
        "no samples of the user's simulation during the scan"
    );
    assert_eq!(report.from_step, 2);
    assert_eq!(
        report
            .timesteps
            .iter()
            .map(|r| r.timestep_tau)
            .collect::<Vec<_>>(),
        vec![0.002, 0.005, 0.05]
    );
    assert_eq!(
        report.cutoffs.iter().map(|r| r.cutoff_sigma).collect::<Vec<_>>(),
        vec![2.0, 2.5]
    );
    assert_eq!(report.configurations, 5);
    let small_dt = &report.timesteps[0];
    assert!(
        !small_dt.blew_up && small_dt.fluctuation_ratio < 0.05,
        "0.002 τ is steady: {small_dt:?}"
    );
    let big = &report.timesteps[2];
    assert!(
        big.blew_up || big.fluctuation_ratio > small_dt.fluctuation_ratio,
        "0.05 τ is worse than 0.002 τ: {big:?}"
    );
    let rec = report.recommended.expect("a timestep passes");
    assert!(rec == 0.002 || rec == 0.005, "{rec}");
    // Longer cutoffs bind more in the truncated-shifted mode's full estimate; the estimate
    // changes less between cutoffs than the as-run energy does.
    let (a, b) = (&report.cutoffs[0], &report.cutoffs[1]);
    assert!(a.potential.is_finite() && a.pressure.is_finite());
    assert!(
        (a.potential_full_estimate - b.potential_full_estimate).abs() < (a.potential - b.potential).abs(),
        "{a:?} {b:?}"
    );
    // After the scan the engine still steps from where it was.
    h.send(Command::StepOnce);
    assert!(
        wait_for(
            &h,
            &mut seen,
            10,
            |e| matches!(e, Event::Sample(o) if o.step == 3)
        )
        .is_some()
    );
}

#[test]
fn the_engine_serves_commands_while_a_scan_runs_and_refuses_a_second_scan() {
    let h = EngineHandle::spawn(small()).unwrap();
    let mut seen = Vec::new();
    assert!(wait_for(&h, &mut seen, 10, |e| matches!(e, Event::Started { .. })).is_some());
    // Long enough that it is still running when the next commands arrive.
    h.send(tune(&[0.001, 0.002], &[2.5], 60.0));
    let reason = rejection(&h, tune(&[0.004], &[2.5], 1.0));
    assert!(reason.contains("already running"), "{reason}");
    seen.clear();
    h.send(Command::StepOnce);
    assert!(
        wait_for(
            &h,
            &mut seen,
            10,
            |e| matches!(e, Event::Sample(o) if o.step == 1)
        )
        .is_some(),
        "a step is served during the scan"
    );
    assert!(
        !seen.iter().any(|e| matches!(e, Event::Tuned(_))),
        "the step came before the scan's end"
    );
    let Some(Event::Tuned(report)) = wait_for(&h, &mut seen, 300, |e| matches!(e, Event::Tuned(_))) else {
        panic!("no results")
    };
    assert_eq!(report.from_step, 0);
    // Once it is done, another scan is accepted.
    h.send(tune(&[0.004], &[2.5], 0.5));
    assert!(wait_for(&h, &mut seen, 60, |e| matches!(e, Event::Tuned(_))).is_some());
}

#[test]
fn bad_requests_name_the_field_the_value_and_the_range() {
    let h = EngineHandle::spawn(small()).unwrap();
    let mut seen = Vec::new();
    assert!(wait_for(&h, &mut seen, 10, |e| matches!(e, Event::Started { .. })).is_some());
    let r = rejection(&h, tune(&[0.005, 0.08], &[2.5], 1.0));
    assert!(
        r.contains("timesteps: 0.08 τ is out of range; allowed: 0.00001 τ to 0.05 τ"),
        "{r}"
    );
    let r = rejection(&h, tune(&[-0.001], &[2.5], 1.0));
    assert!(r.contains("timesteps: -0.001 τ is out of range"), "{r}");
    let r = rejection(&h, tune(&[f64::NAN], &[2.5], 1.0));
    assert!(r.contains("timesteps: NaN τ is out of range"), "{r}");
    let r = rejection(&h, tune(&[0.005], &[3.2], 1.0));
    assert!(
        r.contains("cutoffs: 3.2 σ is out of range; allowed: 1 σ to 3.0592 σ"),
        "{r}"
    );
    assert!(
        r.contains("cutoff + skin (0.3 σ) at most half the box (3.3592 σ)"),
        "{r}"
    );
    let r = rejection(&h, tune(&[0.005], &[0.5], 1.0));
    assert!(r.contains("cutoffs: 0.5 σ is out of range"), "{r}");
    let r = rejection(&h, tune(&[0.005], &[2.5], 0.0));
    assert!(
        r.contains("duration: 0 τ is out of range; allowed: more than 0 and at most 1000 τ"),
        "{r}"
    );
    let r = rejection(&h, tune(&[0.005], &[2.5], 5000.0));
    assert!(r.contains("duration: 5000 τ is out of range"), "{r}");
    let r = rejection(&h, tune(&[], &[2.5], 1.0));
    assert!(
        r.contains("timesteps: 0 values is out of range; allowed: 1 to 12 values"),
        "{r}"
    );
    let r = rejection(&h, tune(&[0.005], &[], 1.0));
    assert!(r.contains("cutoffs: 0 values is out of range"), "{r}");
    // A refused request starts nothing: a good one is accepted next.
    h.send(tune(&[0.005], &[2.5], 0.2));
    assert!(wait_for(&h, &mut seen, 60, |e| matches!(e, Event::Tuned(_))).is_some());
}

#[test]
fn a_running_scan_can_be_stopped_and_another_started() {
    let h = EngineHandle::spawn(small()).unwrap();
    let mut seen = Vec::new();
    assert!(wait_for(&h, &mut seen, 10, |e| matches!(e, Event::Started { .. })).is_some());
    // Nothing to stop yet.
    h.send(Command::CancelTune);
    match wait_for(&h, &mut seen, 10, |e| matches!(e, Event::Rejected { .. })) {
        Some(Event::Rejected { command, reason }) => {
            assert_eq!(command, CommandKind::CancelTune);
            assert!(reason.contains("no tuning scan is running"), "{reason}");
        }
        e => panic!("no rejection: {e:?}"),
    }
    // A scan long enough to be caught running: 12 timesteps of 40 τ each.
    let long: Vec<f64> = (1..=12).map(|k| 0.0005 * k as f64).collect();
    h.send(tune(&long, &[2.0], 40.0));
    h.send(Command::CancelTune);
    assert!(
        wait_for(&h, &mut seen, 10, |e| matches!(e, Event::TuneCancelled)).is_some(),
        "saw {seen:?}"
    );
    // The engine takes a new scan at once, and only that one reports.
    seen.clear();
    h.send(tune(&[0.005], &[2.5], 1.0));
    let Some(Event::Tuned(report)) = wait_for(&h, &mut seen, 120, |e| matches!(e, Event::Tuned(_))) else {
        panic!("no results; saw {seen:?}")
    };
    assert_eq!(report.timesteps.len(), 1);
    assert!(
        !seen.iter().any(|e| matches!(e, Event::Rejected { .. })),
        "{seen:?}"
    );
    assert!(
        wait_for(&h, &mut seen, 3, |e| matches!(e, Event::Tuned(_))).is_none(),
        "the stopped scan reported too"
    );
}
