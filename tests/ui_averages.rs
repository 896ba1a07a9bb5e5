//! The Averages panel driven as a user would: type a start time, drag the start line on a time
//! plot, return to the automatic start; the averages follow each time and the verdicts are
//! written out in words.

mod support;

use egui_kittest::kittest::Queryable;
use noblescope::analysis::{Quantity, StartChoice};
use noblescope::engine::Command;
use noblescope::io::setup::Setup;
use noblescope::ui::NoblescopeApp;
use noblescope::ui::averages::mean_pm;
use support::{harness, retype, step_until};

type H = egui_kittest::Harness<'static, NoblescopeApp>;

/// 256 reduced-LJ atoms from a lattice, at constant energy.
fn small_reduced() -> Setup {
    let mut s = Setup::parse(
        include_str!("../assets/reduced-lj-timestep-check.ron"),
        "averages",
    )
    .unwrap();
    s.atoms = 256;
    s.steps = 1_000_000;
    s
}

/// The start, the temperature's samples after it and its mean as the table shows it.
fn shown(h: &H) -> (StartChoice, f64, usize, String) {
    let r = h.state().averages().report().expect("evidence has arrived");
    let t = &r.evidence.row(Quantity::Temperature).stats;
    (
        r.evidence.choice,
        r.evidence.start_time,
        t.samples,
        format!("{} kT/ε", mean_pm(t.mean, t.stderr)),
    )
}

/// Runs until at least `samples` are analysed, then pauses and waits for the evidence of the
/// paused step.
fn run_for(h: &mut H, samples: usize) {
    h.state().send(Command::Run);
    step_until(h, 60, "enough samples are analysed", |a| {
        a.averages()
            .report()
            .is_some_and(|r| r.evidence.entries >= samples)
    });
    h.state().send(Command::Pause);
    step_until(h, 20, "the evidence of the paused run arrives", |a| {
        !a.engine_status().running
            && a.averages()
                .report()
                .is_some_and(|r| r.step == a.engine_status().step)
    });
    h.step();
}

#[test]
fn typing_or_dragging_the_start_moves_the_averages_and_the_verdict_is_written_out() {
    let mut h = harness(small_reduced());
    step_until(&mut h, 20, "the engine starts", |a| a.atoms() == 256);
    h.state_mut().set_averages_open(true);
    run_for(&mut h, 400);
    assert!(h.query_by_label("Block averaging").is_some(), "the panel is open");

    // The overall verdict and every row's verdict are in words.
    let r = h.state().averages().report().unwrap().clone();
    let words = r
        .evidence
        .overall
        .words(|t| format!("{} τ", noblescope::io::numbers::format_number(t)));
    assert!(
        h.query_by_label(&words).is_some(),
        "the overall verdict is written: {words}"
    );
    let verdict_cells = [
        "equilibrated",
        "not yet",
        "drifting",
        "equilibrated (info)",
        "not yet (info)",
        "drifting (info)",
    ]
    .iter()
    .map(|v| h.query_all_by_label(v).count())
    .sum::<usize>();
    assert_eq!(verdict_cells, 5, "each of the five rows has a verdict");
    let (choice, start, samples, mean) = shown(&h);
    assert_eq!(choice, StartChoice::Automatic);
    assert!(
        h.query_by_label(&mean).is_some(),
        "the temperature mean {mean} is shown"
    );

    // Typing a start: the averages are taken from there at once.
    let end = r.evidence.rows[0].stats.samples as f64;
    let typed = if start < 1.0 { 2.0 } else { 0.5 };
    retype(&mut h, "Average from [τ]", &typed.to_string());
    h.key_press(egui::Key::Enter);
    step_until(&mut h, 20, "the typed start is answered", |a| {
        a.averages()
            .report()
            .is_some_and(|r| r.evidence.choice == StartChoice::FromTime(typed))
    });
    h.step();
    let (_, start2, samples2, mean2) = shown(&h);
    assert!(
        (start2 - typed).abs() < 0.05,
        "averaged from {start2} τ, typed {typed}"
    );
    assert_ne!(samples2, samples, "a different stretch is averaged (of {end})");
    assert!(
        h.query_by_label(&mean2).is_some(),
        "the new mean {mean2} is shown"
    );
    assert!(h.query_by_label("Automatic start").is_some());

    // Dragging the start line on the temperature plot.
    let (frame, x) = h.state().start_line_drawn()[2];
    let y = frame.center().y;
    let to = if x - frame.left() > frame.width() / 2.0 {
        x - 120.0
    } else {
        x + 120.0
    };
    h.hover_at(egui::pos2(x, y));
    h.step();
    h.drag_at(egui::pos2(x, y));
    h.step();
    for k in 1..=6 {
        h.hover_at(egui::pos2(x + (to - x) * k as f32 / 6.0, y));
        h.step();
    }
    h.drop_at(egui::pos2(to, y));
    h.step();
    step_until(&mut h, 20, "the dragged start is answered", |a| {
        a.averages().dragged.is_none()
            && !a.averages().waiting()
            && a.averages().report().is_some_and(
                |r| matches!(r.evidence.choice, StartChoice::FromTime(t) if (t - typed).abs() > 0.1),
            )
    });
    h.step();
    let (_, start3, samples3, mean3) = shown(&h);
    assert_eq!(start3 > start2, to > x, "the start moved the way it was dragged");
    assert_ne!(samples3, samples2);
    assert!(
        h.query_by_label(&mean3).is_some(),
        "the new mean {mean3} is shown"
    );
    let (_, x3) = h.state().start_line_drawn()[2];
    assert!(
        (x3 - to).abs() < 8.0,
        "the line is drawn where it was let go: {x3} vs {to}"
    );

    // One click back to the automatic start.
    h.get_by_label("Automatic start").click();
    step_until(&mut h, 20, "the automatic start is answered", |a| {
        a.averages()
            .report()
            .is_some_and(|r| r.evidence.choice == StartChoice::Automatic)
    });
    h.step();
    let (_, start4, samples4, _) = shown(&h);
    assert_eq!(
        (start4, samples4),
        (start, samples),
        "back where the detection put it"
    );
}
