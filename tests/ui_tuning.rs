//! The tuning panel driven as a user would: open it, type the lists, start a scan, read the
//! results, and put the recommended timestep into the setup form.

mod support;

use egui_kittest::kittest::Queryable;
use noblescope::io::setup::{Duration, Length, Setup};
use support::{harness, retype, step_until};

/// 256 reduced-LJ atoms: cutoff + skin 2.8 σ fits half the box (3.36 σ).
fn small_reduced() -> Setup {
    let mut s = Setup::parse(include_str!("../assets/reduced-lj-timestep-check.ron"), "tuning").unwrap();
    s.atoms = 256;
    s.equilibration_steps = 0;
    s
}

#[test]
fn a_scan_from_the_panel_shows_its_results_and_feeds_the_form() {
    let mut h = harness(small_reduced());
    step_until(&mut h, 20, "the engine starts", |a| a.atoms() == 256);
    h.get_by_label("Tuning").click();
    h.step();
    h.step();
    assert!(
        h.query_by_label("Timestep and cutoff tuning").is_some(),
        "the panel opens"
    );
    assert!(h.query_by_label_contains("No scan yet").is_some());

    // A cutoff that does not fit the box is refused at the field, with the allowed range, and
    // the scan cannot start.
    retype(&mut h, "Timesteps [τ]", "0.002, 0.004, 0.05");
    retype(&mut h, "Cutoffs", "2, 3.5");
    assert!(
        h.query_by_label_contains("cutoffs: 3.5 σ is out of range; allowed: 1 σ to 3.0592 σ")
            .is_some(),
        "the error names value and range"
    );
    h.get_by_label("Start scan").click();
    h.step();
    assert!(!h.state().tuning().scanning(), "an invalid list starts nothing");

    retype(&mut h, "Cutoffs", "2, 2.5");
    retype(&mut h, "Trial length [τ]", "1");
    assert!(h.query_by_label_contains("is out of range").is_none());
    h.get_by_label("Start scan").click();
    h.step();
    assert!(h.state().tuning().scanning());
    assert!(
        h.query_by_label_contains("scanning…").is_some(),
        "the panel says it is scanning"
    );
    step_until(&mut h, 120, "the scan's results arrive", |a| {
        a.tuning().report().is_some()
    });
    h.step();
    assert_eq!(
        h.state().engine_status().step,
        0,
        "the scan did not advance the simulation"
    );

    let report = h.state().tuning().report().unwrap().clone();
    assert_eq!(report.timesteps.len(), 3);
    assert_eq!(report.cutoffs.len(), 2);
    // The tables show every row.
    let shows = |h: &egui_kittest::Harness<'static, noblescope::ui::NoblescopeApp>, text: &str| {
        h.query_all_by_label(text).next().is_some()
    };
    for dt in ["0.002", "0.004", "0.05"] {
        assert!(shows(&h, dt), "timestep row {dt} is shown");
    }
    for rc in ["2", "2.5"] {
        assert!(shows(&h, rc), "cutoff row {rc} is shown");
    }
    let u = format!("{:.4}", report.cutoffs[1].potential);
    assert!(shows(&h, &u), "U/N at 2.5 σ ({u}) is shown");
    let verdicts = ["recommended", "within limit", "too noisy", "blew up"];
    let n = verdicts
        .iter()
        .map(|v| h.query_all_by_label(v).count())
        .sum::<usize>();
    assert_eq!(n, 3, "each timestep row has a verdict");
    assert!(h.query_by_label("Timestep scan").is_some() && h.query_by_label("Cutoff scan").is_some());
    let rec = report.recommended.expect("0.002 τ is steady");
    let shown = noblescope::ui::unit_field::format_number(rec);
    assert!(
        h.query_by_label(&format!("Recommended timestep: {shown} τ"))
            .is_some()
    );

    // "Use this timestep" puts it into the setup form; nothing changes in the running simulation.
    h.get_by_label("Use this timestep").click();
    h.step();
    h.step();
    let (draft, _) = h.state_mut().form_mut().draft();
    assert_eq!(draft.timestep, Duration::Reduced(rec));
    assert_eq!(h.state().running_setup().timestep, Duration::Reduced(0.005));
    assert!(h.query_by_label_contains("is in the setup form now").is_some());

    // The cutoff half: a recommendation with its reason and the cost of each cutoff, and "Use
    // this cutoff" puts it into the form.
    let rc = report
        .cutoff_choice
        .cutoff_sigma
        .expect("two cutoffs scanned: one is recommended");
    let shown = noblescope::ui::unit_field::format_number(rc);
    assert!(
        h.query_by_label(&format!("Recommended cutoff: {shown} σ"))
            .is_some()
    );
    assert!(h.query_by_label_contains("Why: ").is_some());
    assert!(h.query_by_label("cost a step").is_some());
    assert!(report.cutoffs.iter().all(|r| r.relative_cost > 0.0));
    h.get_by_label("Use this cutoff").click();
    h.step();
    h.step();
    let (draft, _) = h.state_mut().form_mut().draft();
    assert_eq!(draft.cutoff, Length::Sigma(rc));
}
