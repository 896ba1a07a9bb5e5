//! After a watchdog alarm in the window: the banner names the atoms, the camera turns to the
//! first of them, the flight-recorder scrubber moves the view through the frames before it, and
//! the rewind timeline goes back to a held snapshot.

mod support;

use egui_kittest::kittest::Queryable;
use noblescope::engine::Command;
use noblescope::io::Setup;
use support::{harness, step_until};

/// The liquid at six times a usable timestep: its conserved energy drifts past the 5 % limit
/// within a hundred steps (step 82 for this seed), with every value still finite.
const DRIFTING: &str = r#"Setup(
    title: "drifting liquid",
    species: [(kind: ReducedLJ, share: 1.0)],
    atoms: 500,
    density: Reduced(0.8442),
    temperature: Reduced(1.44),
    timestep: Reduced(0.03),
    cutoff: Sigma(2.5),
    potential: TruncatedShifted,
    ensemble: Nve,
    seed: 1,
    steps: 1500,
    sample_every: 1,
)"#;

#[test]
fn after_an_alarm_the_banner_names_the_atoms_and_the_scrubber_moves_the_view() {
    let mut h = harness(Setup::parse(DRIFTING, "drifting.ron").unwrap());
    step_until(&mut h, 20, "the engine starts", |a| a.atoms() == 500);
    h.state().send(Command::Run);
    step_until(&mut h, 60, "the watchdog's alarm and its record", |a| {
        a.alarm().is_some_and(|al| a.shown_frame_step() == al.step)
    });
    h.step();
    let alarm = h.state().alarm().unwrap().clone();
    let named = alarm.atom_indices();
    assert!(!named.is_empty(), "{}", alarm.describe());

    // The banner says what happened, when, where and what to try, naming the atoms.
    let first = format!("It started at atoms {} (reduced LJ)", named[0]);
    assert!(
        h.query_by_label_contains(&first).is_some(),
        "no banner naming {first}"
    );
    assert!(
        h.query_by_label_contains(&format!("Step {}, t = ", alarm.step))
            .is_some()
    );
    assert!(
        h.query_by_label_contains(&format!("({}). ", alarm.kind.name()))
            .is_some()
    );
    assert!(h.query_by_label_contains("Try: ").is_some());

    // The camera turned to the first named atom.
    let p = alarm.atoms[0].position;
    let orbit = h.state().view_settings().orbit;
    let l = (500.0f64 / 0.8442).cbrt();
    for k in 0..3 {
        assert!(
            (orbit.pan[k] as f64 - (p[k] / l - 0.5)).abs() < 1e-4,
            "{orbit:?} vs {p:?}"
        );
    }

    // Scrubbing back shows an earlier recorded frame; forward again, the alarm's own.
    let at_alarm = h.state().shown_frame_step();
    h.get_by_label("Flight recorder").set_value_accesskit(0.0);
    h.step();
    h.step();
    let earliest = h.state().shown_frame_step();
    assert!(earliest < at_alarm, "the view stayed at step {earliest}");
    assert!(
        h.query_by_label_contains(&format!(": step {earliest}, t = "))
            .is_some(),
        "the scrubber's label follows"
    );
    h.get_by_label("Flight recorder").increment_accesskit();
    h.step();
    h.step();
    assert_eq!(
        h.state().shown_frame_step(),
        earliest + 2,
        "one recorded frame later"
    );

    // The rewind timeline holds the healthy snapshot of step 0; picking it goes back there and
    // leaves the record behind.
    assert!(
        h.query_by_label_contains("Rewind timeline: 1 snapshots held")
            .is_some()
    );
    h.get_by_label_contains("snapshot at step 0, t = ").click();
    step_until(&mut h, 20, "the rewind to step 0", |a| {
        a.alarm().is_none() && a.engine_status().step == 0 && a.shown_frame_step() == 0
    });
}
