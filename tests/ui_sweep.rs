//! The sweep window, driven headless: a sweep's folder opens as a table with a plot, and a
//! point's link asks for its setup to be opened.

use egui_kittest::Harness;
use egui_kittest::kittest::Queryable;
use noblescope::ui::sweep_view::SweepView;
use std::path::Path;
use std::process::Command;

fn small_sweep(dir: &Path) {
    let f = dir.join("iso.ron");
    std::fs::write(
        &f,
        "Sweep(
    base: Setup(
        species: [(kind: ReducedLJ, share: 1.0)],
        atoms: 108,
        density: Reduced(0.5),
        temperature: Reduced(1.5),
        timestep: Reduced(0.005),
        cutoff: Sigma(2.0),
        ensemble: Nvt(thermostat: Langevin(friction: Reduced(1.0))),
        steps: 300,
    ),
    density: [Reduced(0.05), Reduced(0.6)],
)",
    )
    .unwrap();
    let o = Command::new(env!("CARGO_BIN_EXE_noblescope"))
        .args([
            "sweep",
            f.to_str().unwrap(),
            "--out",
            dir.join("out").to_str().unwrap(),
            "--quiet",
        ])
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
}

#[test]
fn a_sweep_folder_opens_as_a_table_with_a_plot_and_a_point_opens_its_setup() {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join(format!("ui-sweep-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    small_sweep(&dir);
    let view = SweepView::load(&dir.join("out")).unwrap();
    assert!(view.table.plot.is_some(), "density alone varies: a plot");
    let mut h = Harness::builder()
        .with_size(egui::vec2(1000.0, 800.0))
        .build_ui_state(|ui, v: &mut SweepView| v.show(ui.ctx()), view);
    h.step();
    h.step();
    h.get_by_label("2 points: 2 finished, 0 failed, 0 not run");
    h.get_by_label("Reduced(0.05)");
    h.get_by_label("Reduced(0.6)");
    h.get_by_label("p* (equation)");
    h.get_by_label("1").click();
    h.step();
    let asked = h
        .state()
        .open_point
        .clone()
        .expect("the link asks for the point's setup");
    assert!(asked.ends_with("point-0001/setup.ron"), "{}", asked.display());
    assert!(asked.exists());
}
