//! Time reversibility of velocity Verlet: N steps forward, velocities reversed, N steps back
//! returns every atom to its start to near round-off. (The integrator is symmetric in time;
//! chaos amplifies round-off, so N is kept to a fraction of the liquid's Lyapunov time —
//! common practice.)

mod common;
use common::*;
use noblescope::physics::simulation::reverse_velocities;
use noblescope::physics::{PotentialMode, Simulation, Thermostat};

#[test]
fn forward_then_backward_returns_to_start() {
    let spec = reduced_spec(500, 0.8, 1.0, 2.5, PotentialMode::ShiftedForce, Thermostat::None);
    let mut sim = Simulation::new(spec).unwrap();
    sim.run(500).unwrap(); // melt the lattice: a disordered start tests more
    let start = sim.system().positions.clone();
    let v_start = sim.system().velocities.clone();
    sim.run(200).unwrap();
    let moved = sim
        .system()
        .positions
        .iter()
        .zip(&start)
        .map(|(a, b)| (a[0] - b[0]).abs())
        .fold(0.0, f64::max);
    reverse_velocities(sim.system_mut());
    sim.refresh();
    sim.run(200).unwrap();
    let dx = sim
        .system()
        .positions
        .iter()
        .zip(&start)
        .flat_map(|(a, b)| (0..3).map(move |k| (a[k] - b[k]).abs()))
        .fold(0.0, f64::max);
    let dv = sim
        .system()
        .velocities
        .iter()
        .zip(&v_start)
        .flat_map(|(a, b)| (0..3).map(move |k| (a[k] + b[k]).abs()))
        .fold(0.0, f64::max);
    eprintln!("atoms moved up to {moved:.3} σ and came back within {dx:.2e} σ (velocities {dv:.2e})");
    assert!(
        moved > 0.1,
        "the atoms must have moved for the test to mean anything"
    );
    assert!(dx < 1e-9 && dv < 1e-8, "did not retrace: dx {dx:e}, dv {dv:e}");
}
