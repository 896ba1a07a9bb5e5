//! Unit pickers convert both ways and show the equivalent in the other unit system.

mod support;

use egui_kittest::kittest::Queryable;
use noblescope::io::setup::{Density, Duration, Setup, Temperature};
use noblescope::ui::unit_field::{DensityUnit, TemperatureUnit, TimeUnit, UnitField};
use support::{harness, small_argon, step_until};

fn argon() -> Setup {
    small_argon()
}

#[test]
fn time_converts_fs_to_tau_and_back() {
    let s = argon();
    let tau_fs = s.units().tau_fs();
    let mut f = UnitField::<TimeUnit>::from_value(Duration::Femtoseconds(5.0));
    f.set_unit(&s, TimeUnit::Reduced);
    let r: f64 = f.text.parse().unwrap();
    assert!((r - 5.0 / tau_fs).abs() / r < 1e-4, "{r}");
    f.set_unit(&s, TimeUnit::Picoseconds);
    assert!(
        (f.text.parse::<f64>().unwrap() - 0.005).abs() < 1e-7,
        "{}",
        f.text
    );
    f.set_unit(&s, TimeUnit::Femtoseconds);
    assert_eq!(f.text, "5");
}

#[test]
fn density_converts_between_all_units() {
    let s = argon();
    let mut f = UnitField::<DensityUnit>::from_value(Density::GramsPerCubicCentimetre(1.4));
    f.set_unit(&s, DensityUnit::KilogramsPerCubicMetre);
    assert_eq!(f.text, "1400");
    f.set_unit(&s, DensityUnit::Reduced);
    let reduced: f64 = f.text.parse().unwrap();
    let expected = s.reduced_density(Density::GramsPerCubicCentimetre(1.4)).unwrap();
    assert!((reduced - expected).abs() < 1e-4, "{reduced} vs {expected}");
    f.set_unit(&s, DensityUnit::GramsPerCubicCentimetre);
    assert!((f.text.parse::<f64>().unwrap() - 1.4).abs() < 1e-3, "{}", f.text);
}

#[test]
fn temperature_converts_and_shows_the_equivalent() {
    let s = argon();
    let mut f = UnitField::<TemperatureUnit>::from_value(Temperature::Kelvin(119.8));
    assert_eq!(f.equivalent(&s).as_deref(), Some("= 1 kT/ε"));
    f.set_unit(&s, TemperatureUnit::Reduced);
    assert_eq!(f.text, "1");
    assert_eq!(f.equivalent(&s).as_deref(), Some("= 119.8 K"));
}

#[test]
fn a_bad_number_keeps_its_text_when_the_unit_changes() {
    let s = argon();
    let mut f = UnitField::<TimeUnit>::from_value(Duration::Femtoseconds(5.0));
    f.text = "five".into();
    f.set_unit(&s, TimeUnit::Reduced);
    assert_eq!((f.text.as_str(), f.unit), ("five", TimeUnit::Reduced));
    assert!(f.value("timestep").unwrap_err().contains("not a number"));
}

#[test]
fn the_form_shows_converted_values_next_to_the_fields() {
    let s = argon();
    let tau_fs = s.units().tau_fs();
    let mut h = harness(s);
    step_until(&mut h, 20, "the engine starts", |a| a.atoms() == 500);
    let shown = format!("= {} τ", noblescope::ui::unit_field::format_number(5.0 / tau_fs));
    assert!(
        h.query_by_label(&shown).is_some(),
        "the timestep field shows {shown}"
    );
    // Picking τ in the timestep's unit picker converts the typed number.
    h.get_by_label("unit of Timestep").click();
    h.step();
    h.step();
    h.get_by_label("τ").click();
    h.step();
    h.step();
    let reduced = noblescope::ui::unit_field::format_number(5.0 / tau_fs);
    assert_eq!(h.state_mut().form_mut().timestep.text, reduced);
    assert!(h.query_by_label("= 5 fs").is_some());
}
