//! The standard benchmark: reduced LJ liquid, ρ* = 0.8442, T* = 1.44 start, r_c = 2.5 σ,
//! skin 0.3 σ, truncated and shifted, NVE, dt* = 0.005.

use crate::physics::{PotentialMode, Simulation, SimulationSpec, Species, Thermostat};
use serde::Serialize;
use std::time::Instant;

/// One measured size.
#[derive(Clone, Debug, Serialize)]
pub struct BenchResult {
    pub atoms: usize,
    pub steps: u64,
    pub threads: usize,
    pub seconds: f64,
    pub atom_steps_per_second: f64,
    pub nanoseconds_per_atom_step: f64,
    pub list_builds: u64,
    /// Peak resident memory growth of the process divided by atoms (from /proc/self/status).
    pub peak_bytes_per_atom: Option<f64>,
    /// Heap held by the simulation's own arrays divided by atoms.
    pub heap_bytes_per_atom: f64,
}

/// The benchmark spec at `atoms` atoms.
pub fn standard_liquid(atoms: usize) -> SimulationSpec {
    SimulationSpec {
        kinds: vec![Species::ReducedLJ],
        counts: vec![atoms],
        density: 0.8442,
        temperature: 1.44,
        timestep: 0.005,
        cutoff: 2.5,
        skin: 0.3,
        potential: PotentialMode::TruncatedShifted,
        tail_correction: false,
        thermostat: Thermostat::None,
        seed: 1,
    }
}

fn status_kb(key: &str) -> Option<f64> {
    let text = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = text.lines().find(|l| l.starts_with(key))?;
    Some(line.split_whitespace().nth(1)?.parse::<f64>().ok()? * 1024.0)
}

/// Builds the liquid, takes `warmup` steps, then times `steps` steps.
///
/// Call sizes in ascending order in one process: the peak-memory figure is the growth of the
/// process's high-water mark over its resident size before this size was built.
pub fn measure(atoms: usize, warmup: u64, steps: u64) -> BenchResult {
    let baseline = status_kb("VmRSS:");
    let mut sim = Simulation::new(standard_liquid(atoms)).expect("the benchmark spec is valid");
    sim.run(warmup).expect("the benchmark liquid is stable");
    let builds0 = sim.list_builds();
    let t = Instant::now();
    sim.run(steps).expect("the benchmark liquid is stable");
    let seconds = t.elapsed().as_secs_f64();
    let peak = status_kb("VmHWM:");
    let rate = atoms as f64 * steps as f64 / seconds;
    BenchResult {
        atoms,
        steps,
        threads: rayon::current_num_threads(),
        seconds,
        atom_steps_per_second: rate,
        nanoseconds_per_atom_step: 1e9 / rate,
        list_builds: sim.list_builds() - builds0,
        peak_bytes_per_atom: baseline.zip(peak).map(|(b, p)| (p - b) / atoms as f64),
        heap_bytes_per_atom: sim.heap_bytes() as f64 / atoms as f64,
    }
}

/// Time per call of the two expensive stages, measured alone on the standard liquid.
#[derive(Clone, Debug, Serialize)]
pub struct StageTimes {
    pub atoms: usize,
    /// Seconds per neighbour-list build.
    pub build_seconds: f64,
    /// Seconds per force evaluation.
    pub force_seconds: f64,
    /// Stored pairs per atom.
    pub pairs_per_atom: f64,
}

/// Times `repeats` list builds and force evaluations on a melted standard liquid.
pub fn measure_stages(atoms: usize, repeats: u32) -> StageTimes {
    let mut sim = Simulation::new(standard_liquid(atoms)).expect("the benchmark spec is valid");
    sim.run(50).expect("the benchmark liquid is stable");
    let t = Instant::now();
    for _ in 0..repeats {
        sim.refresh_list_only();
    }
    let build_seconds = t.elapsed().as_secs_f64() / repeats as f64;
    let t = Instant::now();
    for _ in 0..repeats {
        sim.refresh_forces_only();
    }
    let force_seconds = t.elapsed().as_secs_f64() / repeats as f64;
    StageTimes {
        atoms,
        build_seconds,
        force_seconds,
        pairs_per_atom: sim.neighbour_list().pairs() as f64 / atoms as f64,
    }
}
