//! The window's contract with the engine thread: no sample is lost, frames are replaced rather
//! than queued, and commands to a paused engine take effect.

use noblescope::engine::{Command, EngineHandle, Event, Frame, FrameMailbox};
use noblescope::io::setup::{Density, Duration as Dt, Ensemble, Length, Setup, SpeciesShare, Temperature};
use noblescope::physics::{PotentialMode, Species};
use std::time::{Duration, Instant};

fn small(steps: u64, sample_every: u64) -> Setup {
    Setup {
        title: "protocol".into(),
        species: vec![SpeciesShare {
            kind: Species::ReducedLJ,
            share: 1.0,
        }],
        atoms: 500,
        density: Density::Reduced(0.8),
        temperature: Temperature::Reduced(1.0),
        timestep: Dt::Reduced(0.004),
        cutoff: Length::Sigma(2.5),
        skin: Length::Sigma(0.3),
        potential: PotentialMode::TruncatedShifted,
        tail_correction: false,
        ensemble: Ensemble::Nve,
        seed: 3,
        steps,
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

/// Waits for an event matching `want`, collecting every event seen meanwhile.
fn wait_for(h: &EngineHandle, seen: &mut Vec<Event>, secs: u64, want: impl Fn(&Event) -> bool) -> bool {
    let until = Instant::now() + Duration::from_secs(secs);
    while Instant::now() < until {
        if let Some(e) = h.next_event(Duration::from_millis(50)) {
            let hit = want(&e);
            seen.push(e);
            if hit {
                return true;
            }
        }
    }
    false
}

#[test]
fn no_sample_is_lost_across_the_channel() {
    let h = EngineHandle::spawn(small(100_000, 2)).unwrap();
    let mut seen = Vec::new();
    assert!(wait_for(&h, &mut seen, 10, |e| matches!(
        e,
        Event::Started { .. }
    )));
    h.send(Command::Run);
    // Let the engine run ahead while the reader does nothing.
    std::thread::sleep(Duration::from_millis(600));
    h.send(Command::Pause);
    assert!(wait_for(
        &h,
        &mut seen,
        10,
        |e| matches!(e, Event::Status(s) if !s.running && s.step > 50)
    ));
    // Drain what is left after the pause settled.
    std::thread::sleep(Duration::from_millis(200));
    seen.extend(h.events());
    let last_step = seen
        .iter()
        .rev()
        .find_map(|e| {
            if let Event::Status(s) = e {
                Some(s.step)
            } else {
                None
            }
        })
        .unwrap();
    let steps: Vec<u64> = seen
        .iter()
        .filter_map(|e| {
            if let Event::Sample(o) = e {
                Some(o.step)
            } else {
                None
            }
        })
        .collect();
    let expected: Vec<u64> = (0..=last_step / 2).map(|k| 2 * k).collect();
    assert_eq!(
        steps, expected,
        "samples must arrive complete and in order up to step {last_step}"
    );
}

#[test]
fn frames_are_replaced_not_queued() {
    let m = FrameMailbox::new();
    assert!(m.wants_frame());
    for step in 1..=5 {
        m.publish(|f| {
            f.step = step;
            f.positions.clear();
            f.positions.push([step as f32; 3]);
        });
    }
    assert!(
        !m.wants_frame(),
        "an untaken frame stops the writer from making more"
    );
    let mut mine = Frame::default();
    assert!(m.take(&mut mine));
    assert_eq!(mine.step, 5, "only the newest frame is handed over");
    assert!(!m.take(&mut mine), "nothing queued behind it");
    assert_eq!(mine.step, 5);
    assert!(m.wants_frame());
}

#[test]
fn frame_buffers_are_swapped_not_reallocated() {
    let m = FrameMailbox::new();
    m.publish(|f| f.positions.extend((0..1000).map(|i| [i as f32; 3])));
    let mut reader = Frame::default();
    assert!(m.take(&mut reader));
    let reader_ptr = reader.positions.as_ptr();
    // The writer refills the buffers it got back (the reader's old, empty ones) ...
    m.publish(|f| {
        f.positions.clear();
        f.positions.extend((0..1000).map(|i| [i as f32; 3]));
    });
    assert!(m.take(&mut reader));
    // ... and the next refill lands in the reader's first buffer again: no fresh allocation.
    m.publish(|f| {
        assert_eq!(f.positions.as_ptr(), reader_ptr);
        f.positions.clear();
    });
}

#[test]
fn commands_to_a_paused_engine_take_effect() {
    let h = EngineHandle::spawn(small(100_000, 1)).unwrap();
    let mut seen = Vec::new();
    assert!(wait_for(&h, &mut seen, 10, |e| matches!(
        e,
        Event::Started { .. }
    )));
    // A single step while paused advances the step counter by one.
    h.send(Command::StepOnce);
    assert!(wait_for(
        &h,
        &mut seen,
        10,
        |e| matches!(e, Event::Sample(o) if o.step == 1)
    ));
    // A live timestep change while paused is confirmed and reflected in the setup.
    h.send(Command::SetTimestep(Dt::Reduced(0.002)));
    assert!(wait_for(
        &h,
        &mut seen,
        10,
        |e| matches!(e, Event::SetupChanged(s) if s.timestep == Dt::Reduced(0.002))
    ));
    // An invalid apply is refused and leaves the simulation where it was.
    let mut bad = small(100_000, 1);
    bad.density = Density::Reduced(40.0);
    h.send(Command::Apply(Box::new(bad)));
    assert!(wait_for(
        &h,
        &mut seen,
        10,
        |e| matches!(e, Event::Rejected { reason, .. } if reason.contains("density"))
    ));
    h.send(Command::StepOnce);
    assert!(
        wait_for(
            &h,
            &mut seen,
            10,
            |e| matches!(e, Event::Sample(o) if o.step == 2)
        ),
        "the old simulation continues at step 2"
    );
    let mut frame = Frame::default();
    let until = Instant::now() + Duration::from_secs(5);
    while !(h.take_frame(&mut frame) && frame.step == 2) {
        assert!(Instant::now() < until, "a frame of step 2 arrives");
        std::thread::sleep(Duration::from_millis(10));
    }
    assert_eq!(frame.len(), 500);
}

#[test]
fn a_run_pauses_at_the_setups_steps_and_goes_on_past_them_when_asked() {
    let h = EngineHandle::spawn(small(40, 10)).unwrap();
    let mut seen = Vec::new();
    assert!(wait_for(&h, &mut seen, 10, |e| matches!(
        e,
        Event::Started { .. }
    )));
    h.send(Command::Run);
    assert!(
        wait_for(&h, &mut seen, 20, |e| matches!(
            e,
            Event::ReachedSteps { steps: 40 }
        )),
        "no ReachedSteps event"
    );
    assert!(wait_for(
        &h,
        &mut seen,
        5,
        |e| matches!(e, Event::Status(s) if !s.running && s.step == 40)
    ));
    // Asked again, it runs on past the setup's steps without stopping again.
    h.send(Command::Run);
    assert!(wait_for(
        &h,
        &mut seen,
        20,
        |e| matches!(e, Event::Status(s) if s.running && s.step > 200)
    ));
    let stops = seen
        .iter()
        .filter(|e| matches!(e, Event::ReachedSteps { .. }))
        .count();
    assert_eq!(stops, 1);
}
