//! The engine's equilibration evidence as the window receives it: at most once a second while
//! running unasked, and whenever asked (also while paused), from the start the window sets; met precision targets pause
//! the run once; a rewind forgets the samples after the step it went back to.

use noblescope::analysis::{Quantity, StartChoice};
use noblescope::engine::{Command, EngineHandle, Event, EvidenceReport};
use noblescope::io::precision_setting::{PrecisionSetting, StandardError};
use noblescope::io::setup::{Density, Duration as Dt, Ensemble, Length, Setup, SpeciesShare, Temperature};
use noblescope::physics::{PotentialMode, Species};
use std::time::{Duration, Instant};

fn small(sample_every: u64) -> Setup {
    Setup {
        title: "evidence".into(),
        species: vec![SpeciesShare {
            kind: Species::ReducedLJ,
            share: 1.0,
        }],
        atoms: 256,
        density: Density::Reduced(0.8),
        temperature: Temperature::Reduced(1.0),
        timestep: Dt::Reduced(0.004),
        cutoff: Length::Sigma(2.5),
        skin: Length::Sigma(0.3),
        potential: PotentialMode::TruncatedShifted,
        tail_correction: false,
        ensemble: Ensemble::Nve,
        seed: 3,
        steps: 10_000_000,
        equilibration_steps: 0,
        sample_every,
        trajectory_every: None,
        rdf_every: None,
        rdf_reach: Default::default(),
        diffusion_window: None,
        dynamics_every: None,
        speeds_every: None,
        temperature_ramp: None,
        precision_targets: Vec::new(),
        recover: false,
        start: Default::default(),
    }
}

/// Reads events for up to `secs` until `want` holds for one; returns it and every event seen.
fn wait_for(h: &EngineHandle, secs: f64, want: impl Fn(&Event) -> bool) -> (Option<Event>, Vec<Event>) {
    let until = Instant::now() + Duration::from_secs_f64(secs);
    let mut seen = Vec::new();
    while Instant::now() < until {
        if let Some(e) = h.next_event(Duration::from_millis(20)) {
            if want(&e) {
                return (Some(e), seen);
            }
            seen.push(e);
        }
    }
    (None, seen)
}

fn evidence(e: Option<Event>) -> Box<EvidenceReport> {
    match e {
        Some(Event::Evidence(r)) => r,
        other => panic!("expected evidence, got {other:?}"),
    }
}

#[test]
fn evidence_comes_at_most_once_a_second_and_whenever_a_start_is_set() {
    let h = EngineHandle::spawn(small(2)).unwrap();
    let first = evidence(wait_for(&h, 10.0, |e| matches!(e, Event::Evidence(_))).0);
    assert_eq!(
        (first.step, first.evidence.entries),
        (0, 1),
        "the start's evidence"
    );
    h.send(Command::Run);
    let (_, seen) = wait_for(&h, 4.0, |_| false);
    h.send(Command::Pause);
    let refreshes = seen.iter().filter(|e| matches!(e, Event::Evidence(_))).count();
    // Unasked while running, and never more often than once a second (less often where one
    // analysis takes over 1/20 s).
    assert!(
        (1..=5).contains(&refreshes),
        "{refreshes} refreshes in 4 s of running"
    );
    let paused = evidence(wait_for(&h, 10.0, |e| matches!(e, Event::Evidence(_))).0);
    assert!(paused.step > 100, "a pause sends the evidence of the paused step");
    assert_eq!(paused.evidence.choice, StartChoice::Automatic);

    // A start set by hand is answered while paused, and averages from there.
    let end = paused.evidence.entries;
    let t = 0.4 * paused.step as f64 * 0.004;
    h.send(Command::SetAverageStart(StartChoice::FromTime(t)));
    let set = evidence(wait_for(&h, 5.0, |e| matches!(e, Event::Evidence(_))).0);
    assert_eq!(set.evidence.choice, StartChoice::FromTime(t));
    assert!(
        set.evidence.start_time >= t - 1e-9 && set.evidence.start_time < t + 2.0 * 0.004 * 2.0,
        "averaged from {} for {t}",
        set.evidence.start_time
    );
    let after = set.evidence.row(Quantity::Temperature).stats.samples;
    assert_eq!(after, end - set.evidence.start_index);
    assert!((after as f64 - 0.6 * end as f64).abs() < 3.0, "{after} of {end}");

    // Several starts sent together are answered by one analysis of the last.
    for k in 1..=5 {
        h.send(Command::SetAverageStart(StartChoice::FromTime(
            t * k as f64 / 10.0,
        )));
    }
    let last = evidence(wait_for(&h, 5.0, |e| matches!(e, Event::Evidence(_))).0);
    let (more, _) = wait_for(&h, 0.3, |e| matches!(e, Event::Evidence(_)));
    let answered: Vec<StartChoice> = std::iter::once(last.evidence.choice)
        .chain(more.map(|e| evidence(Some(e)).evidence.choice))
        .collect();
    assert_eq!(answered.last(), Some(&StartChoice::FromTime(t * 0.5)));
    assert!(answered.len() <= 2, "coalesced: {answered:?}");
}

#[test]
fn met_precision_targets_pause_the_run_once() {
    let mut s = small(5);
    // Loose enough to be met as soon as the run is called equilibrated.
    s.precision_targets = vec![PrecisionSetting {
        quantity: Quantity::Temperature,
        stderr: StandardError::Reduced(0.5),
    }];
    let h = EngineHandle::spawn(s).unwrap();
    h.send(Command::Run);
    let (met, _) = wait_for(&h, 60.0, |e| matches!(e, Event::PrecisionReached(_)));
    let Some(Event::PrecisionReached(progress)) = met else {
        panic!("the targets were not reported met")
    };
    assert!(progress.iter().all(|p| p.met && p.stderr <= 0.5), "{progress:?}");
    let (paused, _) = wait_for(&h, 5.0, |e| matches!(e, Event::Status(s) if !s.running));
    let Some(Event::Status(at)) = paused else {
        panic!("no paused status")
    };
    let (ev, _) = wait_for(&h, 5.0, |e| matches!(e, Event::Evidence(r) if r.step == at.step));
    let ev = evidence(ev);
    assert!(ev.evidence.overall.is_equilibrated(), "{:?}", ev.evidence.overall);
    assert!(ev.precision.iter().all(|p| p.met));

    // Run again: it goes on without stopping for them again.
    h.send(Command::Run);
    let (again, seen) = wait_for(&h, 2.0, |e| matches!(e, Event::PrecisionReached(_)));
    assert!(again.is_none(), "stopped a second time");
    let last = seen
        .iter()
        .rev()
        .find_map(|e| {
            if let Event::Status(s) = e {
                Some(s.clone())
            } else {
                None
            }
        })
        .expect("statuses while running");
    assert!(last.running && last.step > at.step);
}

#[test]
fn a_rewind_forgets_the_samples_after_its_step() {
    let h = EngineHandle::spawn(small(5)).unwrap();
    h.send(Command::Run);
    let (_, _) = wait_for(&h, 30.0, |e| matches!(e, Event::Status(s) if s.step > 1200));
    h.send(Command::Pause);
    let paused = evidence(wait_for(&h, 10.0, |e| matches!(e, Event::Evidence(_))).0);
    h.send(Command::Rewind);
    let (rewound, _) = wait_for(&h, 10.0, |e| matches!(e, Event::Rewound { .. }));
    let Some(Event::Rewound { step, .. }) = rewound else {
        panic!("no rewind")
    };
    assert!(step < paused.step && step.is_multiple_of(5));
    let after = evidence(wait_for(&h, 10.0, |e| matches!(e, Event::Evidence(_))).0);
    assert_eq!(after.step, step);
    assert_eq!(
        after.evidence.entries as u64,
        step / 5 + 1,
        "samples up to step {step} only"
    );
}
