//! Shared helpers for the window tests: a small setup and a harness around the app.

#![allow(dead_code)]

use egui_kittest::Harness;
use egui_kittest::kittest::Queryable;
use noblescope::io::setup::Setup;
use noblescope::ui::{NoblescopeApp, StartOptions};
use std::time::{Duration, Instant};

/// A quick argon liquid: 500 atoms.
pub fn small_argon() -> Setup {
    let mut s = Setup::parse(include_str!("../../assets/argon-cold-trap.ron"), "argon").unwrap();
    s.atoms = 500;
    s
}

/// The app in a headless harness (no GL: the sphere callback is simply not run).
pub fn harness(setup: Setup) -> Harness<'static, NoblescopeApp> {
    let app = NoblescopeApp::new(
        None,
        StartOptions {
            setup: Some((setup, None)),
            view: Some(noblescope::ui::watch::StartView::Setup),
            watch: None,
            persist: false,
            sweep: None,
        },
    );
    Harness::builder()
        .with_size(egui::vec2(1500.0, 1000.0))
        .build_ui_state(|ui, app: &mut NoblescopeApp| app.show(ui), app)
}

/// Steps the harness until `done` holds, failing after `secs` seconds.
pub fn step_until(
    h: &mut Harness<'static, NoblescopeApp>,
    secs: u64,
    what: &str,
    done: impl Fn(&NoblescopeApp) -> bool,
) {
    let until = Instant::now() + Duration::from_secs(secs);
    loop {
        h.step();
        if done(h.state()) {
            return;
        }
        assert!(Instant::now() < until, "timed out waiting for: {what}");
        std::thread::sleep(Duration::from_millis(10));
    }
}

/// Replaces the text of the text field labelled `label` by typing into it.
pub fn retype(h: &mut Harness<'static, NoblescopeApp>, label: &str, text: &str) {
    h.get_by_label(label).click();
    h.step();
    h.key_press_modifiers(egui::Modifiers::COMMAND, egui::Key::A);
    h.step();
    h.get_by_label(label).type_text(text);
    h.step();
    h.step();
}
