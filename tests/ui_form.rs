//! The window driven as a user would: edit, apply, run; bad input is marked and not applied.

mod support;

use egui_kittest::kittest::Queryable;
use support::{harness, retype, small_argon, step_until};

#[test]
fn edit_a_field_apply_and_run_advances_the_step_counter() {
    let mut h = harness(small_argon());
    step_until(&mut h, 20, "the engine starts", |a| a.atoms() == 500);
    retype(&mut h, "Atoms", "864");
    assert_eq!(
        h.state().running_setup().atoms,
        500,
        "typing alone changes nothing that runs"
    );
    h.get_by_label("Apply and restart").click();
    step_until(&mut h, 20, "the engine restarts on 864 atoms", |a| {
        a.atoms() == 864 && a.running_setup().atoms == 864
    });
    assert_eq!(h.state().engine_status().step, 0);
    h.get_by_label("Run").click();
    step_until(&mut h, 30, "the step counter advances", |a| {
        a.engine_status().step > 20
    });
    assert!(h.state().samples() > 1, "samples reach the plots");
    h.get_by_label("Pause").click();
    step_until(&mut h, 10, "the engine pauses", |a| !a.engine_status().running);
}

#[test]
fn an_invalid_density_is_marked_and_leaves_the_running_simulation_unchanged() {
    let mut h = harness(small_argon());
    step_until(&mut h, 20, "the engine starts", |a| a.atoms() == 500);
    h.get_by_label("Run").click();
    step_until(&mut h, 30, "the run is going", |a| a.engine_status().step > 10);
    let before = h.state().running_setup().clone();

    retype(&mut h, "Density", "40");
    // The error sits at the field and names the value and the allowed range.
    assert!(
        h.query_by_label_contains("density: GramsPerCubicCentimetre(40.0)")
            .is_some(),
        "the error names the field and value"
    );
    assert!(
        h.query_by_label_contains("out of range; allowed: reduced density ρσ³ from 1e-6 to 1.5")
            .is_some(),
        "and the allowed range"
    );
    h.get_by_label("Apply and restart").click();
    h.step();
    h.step();
    let step_then = h.state().engine_status().step;
    step_until(&mut h, 30, "the old simulation keeps running", |a| {
        a.engine_status().step > step_then + 10
    });
    assert_eq!(h.state().running_setup(), &before, "nothing was applied");
    assert_eq!(h.state().atoms(), 500);

    // A value that is not a number is named as such.
    retype(&mut h, "Density", "dense");
    assert!(h.query_by_label_contains("\"dense\" is not a number").is_some());
    h.get_by_label("Pause").click();
    h.step();
}

#[test]
fn helium_at_low_temperature_shows_the_quantum_note() {
    let mut s = small_argon();
    s.species[0].kind = noblescope::physics::Species::Helium;
    s.temperature = noblescope::io::setup::Temperature::Kelvin(4.0);
    s.density = noblescope::io::setup::Density::Reduced(0.3);
    s.timestep = noblescope::io::setup::Duration::Reduced(0.004);
    let mut h = harness(s);
    step_until(&mut h, 20, "the engine starts", |a| a.atoms() == 500);
    assert!(
        !h.query_all_by_label_contains("classical dynamics misses quantum effects")
            .collect::<Vec<_>>()
            .is_empty()
    );
}

#[test]
fn a_live_timestep_change_reaches_the_running_simulation() {
    let mut h = harness(small_argon());
    step_until(&mut h, 20, "the engine starts", |a| a.atoms() == 500);
    retype(&mut h, "Timestep", "2");
    h.get_by_label("Change live").click();
    step_until(&mut h, 20, "the engine confirms the new timestep", |a| {
        a.running_setup().timestep == noblescope::io::setup::Duration::Femtoseconds(2.0)
    });
    assert_eq!(h.state().atoms(), 500, "a live change does not restart");
}
