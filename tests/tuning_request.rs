//! One tuning path: the command line (`noblescope tune`) and the Tuning panel build the same
//! request from the same setup and the same typed numbers, and refuse bad numbers alike.

use noblescope::engine::tuning::{TuneInput, TuneRequest};
use noblescope::io::setup::{Duration, Length, Setup};
use noblescope::ui::tuning_panel::TuningPanel;
use noblescope::ui::unit_field::{TimeUnit, UnitField};

/// 256 reduced-LJ atoms at ρ = 0.8442: half the box is 3.36 σ.
fn reduced() -> Setup {
    let mut s = Setup::parse(include_str!("../assets/reduced-lj-timestep-check.ron"), "reduced").unwrap();
    s.atoms = 256;
    s
}

/// Krypton with the timestep in fs and the cutoff in Å, as the panel shows them.
fn krypton() -> Setup {
    let mut s = Setup::parse(include_str!("../assets/krypton-getter-sample.ron"), "kr").unwrap();
    s.timestep = Duration::Femtoseconds(10.0);
    s.cutoff = Length::Angstrom(9.0);
    s
}

/// The command line's request: numbers in the setup's units, the trial in τ.
fn command_line(s: &Setup, timesteps: &[f64], cutoffs: &[f64], time_tau: f64) -> TuneRequest {
    TuneRequest::from_setup(s, &TuneInput::from_command_line(s, timesteps, cutoffs, time_tau)).unwrap()
}

fn panel(s: &Setup, timesteps: &str, cutoffs: &str, duration: &str) -> TuningPanel {
    let mut p = TuningPanel::for_setup(s);
    p.timesteps = timesteps.into();
    p.cutoffs = cutoffs.into();
    p.duration = duration.into();
    p
}

#[test]
fn reduced_setup_same_numbers_same_request() {
    let s = reduced();
    let from_panel = panel(&s, "0.002, 0.004, 0.01", "2, 2.5", "3")
        .request(&s)
        .unwrap();
    let from_cli = command_line(&s, &[0.002, 0.004, 0.01], &[2.0, 2.5], 3.0);
    assert_eq!(from_panel, from_cli);
    assert_eq!(from_cli.timesteps_tau, vec![0.002, 0.004, 0.01]);
    assert_eq!(from_cli.cutoffs_sigma, vec![2.0, 2.5]);
    assert_eq!(from_cli.duration_tau, 3.0);
}

#[test]
fn real_species_same_numbers_same_request() {
    let s = krypton();
    // The panel shows fs and Å for this setup, as its file does; its trial is in ps.
    let p = panel(&s, "5, 10, 15", "8, 9", "10");
    let from_panel = p.request(&s).unwrap();
    let from_cli = command_line(&s, &[5.0, 10.0, 15.0], &[8.0, 9.0], 10.0 / s.units().tau_ps());
    assert_eq!(from_panel, from_cli);
    let u = s.units();
    assert_eq!(from_cli.timesteps_tau[1], 10.0 / u.tau_fs());
    assert_eq!(from_cli.cutoffs_sigma[1], 9.0 / u.sigma_angstrom());
}

#[test]
fn empty_command_line_lists_are_the_defaults() {
    let s = reduced();
    let defaults = TuneRequest::defaults(&s).unwrap();
    assert_eq!(command_line(&s, &[], &[], 5.0), defaults);
    assert_eq!(defaults.cutoffs_sigma, vec![2.0, 2.5, 3.0]);
    // The panel's default lists are the same request, up to the digits it shows.
    let shown = TuningPanel::for_setup(&s).request(&s).unwrap();
    assert_eq!(shown.cutoffs_sigma, defaults.cutoffs_sigma);
    assert_eq!(shown.duration_tau, defaults.duration_tau);
    for (a, b) in shown.timesteps_tau.iter().zip(&defaults.timesteps_tau) {
        assert!((a - b).abs() < 1e-12 * b, "{a} vs {b}");
    }
}

#[test]
fn both_paths_refuse_the_same_numbers_with_the_same_message() {
    let s = krypton();
    let from_panel = panel(&s, "10, 500", "9", "10")
        .request(&s)
        .unwrap_err()
        .to_string();
    let input = TuneInput::from_command_line(&s, &[10.0, 500.0], &[9.0], 10.0 / s.units().tau_ps());
    let from_cli = TuneRequest::from_setup(&s, &input).unwrap_err().to_string();
    assert_eq!(from_panel, from_cli);
    assert!(
        from_cli.starts_with("timesteps: 500 fs is out of range; allowed:"),
        "{from_cli}"
    );
}

#[test]
fn a_timestep_put_into_the_form_keeps_the_unit_the_form_shows() {
    let s = krypton();
    let mut field = UnitField::<TimeUnit>::from_value(Duration::Picoseconds(0.01));
    field.show_value(&s, Duration::Femtoseconds(5.0));
    assert_eq!(field.unit, TimeUnit::Picoseconds);
    assert_eq!(field.text, "0.005");
    let reduced = s
        .reduced_duration("timestep", field.value("timestep").unwrap())
        .unwrap();
    assert!((reduced - 5.0 / s.units().tau_fs()).abs() < 1e-15, "{reduced}");
    // In the unit it already shows, the value is taken as it is.
    let mut fs = UnitField::<TimeUnit>::from_value(Duration::Femtoseconds(2.0));
    fs.show_value(&s, Duration::Femtoseconds(7.5));
    assert_eq!(fs.value("timestep").unwrap(), Duration::Femtoseconds(7.5));
}
