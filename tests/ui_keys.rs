//! Keys as a user presses them: plain keys give way to a text field being typed into, F1 does
//! not, and S steps once the field has let go of the keyboard.

mod support;

use egui_kittest::kittest::Queryable;
use std::time::Duration;
use support::{harness, small_argon, step_until};

#[test]
fn plain_keys_give_way_to_a_text_field_and_f1_does_not() {
    let mut h = harness(small_argon());
    step_until(&mut h, 20, "the engine starts", |a| a.atoms() == 500);
    h.get_by_label("Atoms").click();
    h.step();
    h.key_press(egui::Key::S);
    h.key_press(egui::Key::F1);
    for _ in 0..40 {
        h.step();
        std::thread::sleep(Duration::from_millis(10));
    }
    assert_eq!(
        h.state().engine_status().step,
        0,
        "S pressed while typing in a field does not step"
    );
    assert!(
        h.query_by_label("Noblescope help").is_some(),
        "F1 opens the help while typing"
    );

    h.key_press(egui::Key::Escape);
    h.step();
    h.key_press(egui::Key::S);
    step_until(&mut h, 20, "S steps once the field let go of the keyboard", |a| {
        a.engine_status().step == 1
    });
}
