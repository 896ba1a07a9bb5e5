//! Energy conservation of velocity Verlet (common practice, no published source): an NVE
//! Lennard-Jones liquid near ρ* = 0.8442, T* = 0.72 with the shifted-force potential at
//! dt* = 0.005 keeps its total energy within 1e-4 (relative) over 10,000 steps, and the size
//! of the energy fluctuation grows as dt² (the integrator is second order: doubling dt raises
//! it about fourfold).

mod common;
use common::*;
use noblescope::physics::{PotentialMode, Simulation, SimulationState, Thermostat};

/// An equilibrated liquid state at T* ≈ 0.72 (thermostatted, then handed to NVE runs).
fn equilibrated() -> (noblescope::physics::SimulationSpec, SimulationState) {
    let spec = reduced_spec(
        864,
        0.8442,
        0.72,
        2.5,
        PotentialMode::ShiftedForce,
        Thermostat::StochasticRescale {
            target: 0.72,
            tau: 0.1,
        },
    );
    let mut sim = Simulation::new(spec.clone()).unwrap();
    sim.run(3_000).unwrap();
    let mut nve = spec;
    nve.thermostat = Thermostat::None;
    (nve, sim.state())
}

/// Runs NVE from `state` for `steps` at `dt`, returning total energies per atom every `every`.
fn nve_energies(
    spec: &noblescope::physics::SimulationSpec,
    state: &SimulationState,
    dt: f64,
    steps: u64,
    every: u64,
) -> Vec<f64> {
    let mut s = spec.clone();
    s.timestep = dt;
    let mut st = state.clone();
    st.heat = 0.0;
    let mut sim = Simulation::from_state(s, st).unwrap();
    sim.rebase_drift();
    let mut e = vec![sim.observe().total];
    for _ in 0..steps / every {
        sim.run(every).unwrap();
        e.push(sim.observe().total);
    }
    e
}

#[test]
fn total_energy_drifts_less_than_1e_minus_4_over_10000_steps() {
    let (spec, state) = equilibrated();
    let e = nve_energies(&spec, &state, 0.005, 10_000, 10);
    let e0 = e[0];
    let worst = e.iter().map(|x| ((x - e0) / e0).abs()).fold(0.0, f64::max);
    eprintln!("largest relative deviation of total energy over 10,000 steps: {worst:.3e}");
    assert!(worst < 1e-4, "energy drifted by {worst:e}");
    assert!(
        worst > 0.0,
        "the energy must change at all for this test to mean something"
    );
}

#[test]
fn energy_error_scales_as_dt_squared() {
    let (spec, state) = equilibrated();
    // The same simulated time (5 τ) at dt and 2dt; the error is the RMS deviation from the mean.
    let rms = |e: &[f64]| {
        let m = e.iter().sum::<f64>() / e.len() as f64;
        (e.iter().map(|x| (x - m).powi(2)).sum::<f64>() / e.len() as f64).sqrt()
    };
    let small = rms(&nve_energies(&spec, &state, 0.002, 2_500, 5));
    let large = rms(&nve_energies(&spec, &state, 0.004, 1_250, 5));
    let ratio = large / small;
    eprintln!("energy fluctuation at dt=0.002: {small:.3e}, at 0.004: {large:.3e}, ratio {ratio:.2}");
    assert!(
        (3.0..5.3).contains(&ratio),
        "doubling dt changed the energy error by {ratio}, expected about 4"
    );
}
