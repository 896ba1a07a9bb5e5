//! Ideal-gas limit: at ρ* = 0.001, T* = 2 the pressure is ρkT within 1%.
//! (The second-virial correction B₂ρ is below 1e-3 here: B₂*(T* = 2) ≈ −0.63, from memory of
//! the tabulated LJ second virial coefficient; so the ideal-gas law must hold to 1%.)

mod common;
use common::*;
use noblescope::physics::{PotentialMode, Simulation, Thermostat};

#[test]
fn dilute_gas_obeys_p_equals_rho_k_t() {
    let spec = reduced_spec(
        2048,
        0.001,
        2.0,
        2.5,
        PotentialMode::TruncatedShifted,
        Thermostat::StochasticRescale {
            target: 2.0,
            tau: 0.5,
        },
    );
    let mut sim = Simulation::new(spec).unwrap();
    let samples = sample(&mut sim, 2_000, 20_000, 20);
    let p = estimate(&samples, |o| o.pressure);
    let ideal = 0.001 * 2.0;
    eprintln!("P = {:.6e} ± {:.1e}, ideal ρkT = {ideal:e}", p.mean, p.stderr);
    assert!(
        ((p.mean - ideal) / ideal).abs() < 0.01,
        "P {} vs ρkT {ideal}",
        p.mean
    );
    assert!(
        p.stderr / ideal < 0.003,
        "the run must be long enough to resolve 1%"
    );
}
