//! `temperature_ramp`: the bath target moves linearly from the setup's temperature to the
//! ramp's end over its steps and stays there; the kinetic temperature follows; bad ramps are
//! refused naming the field, the value and the allowed range.

use noblescope::engine::Session;
use noblescope::io::Setup;

fn setup(ensemble: &str, ramp: &str) -> Setup {
    Setup::parse(
        &format!(
            r#"Setup(
    species: [(kind: Argon, share: 1.0)],
    atoms: 500,
    density: GramsPerCubicCentimetre(1.2),
    temperature: Kelvin(60.0),
    timestep: Femtoseconds(5.0),
    cutoff: Sigma(2.5),
    ensemble: {ensemble},
    steps: 3000,
    temperature_ramp: {ramp},
)"#
        ),
        "ramp.ron",
    )
    .unwrap()
}

const LANGEVIN: &str = "Nvt(thermostat: Langevin(friction: PerPicosecond(5.0)))";

#[test]
fn the_bath_target_moves_linearly_and_the_temperature_follows() {
    let s = setup(LANGEVIN, "Some((to: Kelvin(180.0), steps: 2000))");
    let k = s.units().temperature_kelvin();
    let mut session = Session::new(s).unwrap();
    let mut late = Vec::new();
    for step in 0..3000u64 {
        session.step();
        let target = session.simulation().spec().thermostat.target().unwrap() * k;
        // The step just taken used the target of its start: 60 K + 120 K · step/2000.
        let expect = 60.0 + 120.0 * (step as f64 / 2000.0).min(1.0);
        assert!(
            (target - expect).abs() < 1e-9,
            "step {step}: target {target} K, expected {expect} K"
        );
        if step >= 2500 {
            late.push(session.observe().temperature * k);
        }
    }
    let mean = late.iter().sum::<f64>() / late.len() as f64;
    // 500 atoms: the kinetic temperature fluctuates by about √(2/3N) ≈ 4 % per sample.
    assert!((mean - 180.0).abs() < 9.0, "temperature after the ramp {mean} K");
}

#[test]
fn bad_ramps_name_the_field_the_value_and_the_range() {
    for (ensemble, ramp, expect) in [
        (
            "Nve",
            "Some((to: Kelvin(180.0), steps: 100))",
            "temperature_ramp: TemperatureRamp { to: Kelvin(180.0), steps: 100 } with ensemble Nve is out of range; allowed: None under Nve",
        ),
        (
            LANGEVIN,
            "Some((to: Kelvin(180.0), steps: 0))",
            "temperature_ramp.steps: 0 is out of range; allowed: 1 to steps (3000)",
        ),
        (
            LANGEVIN,
            "Some((to: Kelvin(1e6), steps: 10))",
            "temperature_ramp.to: Kelvin(1000000.0) = ",
        ),
    ] {
        let e = setup(ensemble, ramp).resolve().unwrap_err().to_string();
        assert!(e.starts_with(expect), "{e}\nexpected: {expect}");
    }
}
