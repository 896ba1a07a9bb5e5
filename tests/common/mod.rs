//! Shared helpers for the physics reference tests.
#![allow(dead_code)]

use noblescope::analysis::{Estimate, block_average};
use noblescope::physics::{Observables, PotentialMode, Simulation, SimulationSpec, Species, Thermostat};

/// A single-species reduced-LJ spec.
pub fn reduced_spec(
    atoms: usize,
    density: f64,
    temperature: f64,
    cutoff: f64,
    potential: PotentialMode,
    thermostat: Thermostat,
) -> SimulationSpec {
    SimulationSpec {
        kinds: vec![Species::ReducedLJ],
        counts: vec![atoms],
        density,
        temperature,
        timestep: 0.005,
        cutoff,
        skin: 0.3,
        potential,
        tail_correction: false,
        thermostat,
        seed: 2024,
    }
}

/// Runs `equilibrate` steps, then samples every `every` steps for `produce` steps.
pub fn sample(sim: &mut Simulation, equilibrate: u64, produce: u64, every: u64) -> Vec<Observables> {
    sim.run(equilibrate).expect("equilibration runs");
    let mut out = Vec::with_capacity((produce / every) as usize);
    for _ in 0..produce / every {
        sim.run(every).expect("production runs");
        out.push(sim.observe());
    }
    out
}

/// Every field of a sample as exact bits, for bitwise comparisons.
pub fn observable_bits(o: &Observables) -> [u64; 9] {
    [
        o.step,
        o.time.to_bits(),
        o.kinetic.to_bits(),
        o.potential.to_bits(),
        o.total.to_bits(),
        o.conserved.to_bits(),
        o.temperature.to_bits(),
        o.pressure.to_bits(),
        o.drift.to_bits(),
    ]
}

/// Block-averaged mean and error of one observable.
pub fn estimate(samples: &[Observables], f: impl Fn(&Observables) -> f64) -> Estimate {
    block_average(&samples.iter().map(f).collect::<Vec<_>>())
}
