//! The standard benchmark: reduced LJ liquid, ρ* = 0.8442, T* = 1.44 start, r_c = 2.5 σ,
//! skin 0.3 σ, truncated and shifted, NVE, dt* = 0.005.

use crate::physics::{PotentialMode, Simulation, SimulationSpec, Species, Stage, StageTimes, Thermostat};
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

/// Stage times of normal steps on the standard liquid (see [`measure_stages`]).
#[derive(Clone, Debug, Serialize)]
pub struct StageReport {
    pub atoms: usize,
    /// Steps timed.
    pub steps: u64,
    pub threads: usize,
    /// Neighbour-list builds during the timed steps.
    pub list_builds: u64,
    /// Stored pairs per atom after the last step.
    pub pairs_per_atom: f64,
    /// What the simulation's stage timers accumulated over the timed steps.
    pub times: StageTimes,
}

impl StageReport {
    /// Seconds per step spent in `stage` (its total over the timed steps, divided by them).
    pub fn seconds_per_step(&self, stage: Stage) -> f64 {
        self.times.get(stage).seconds / self.steps.max(1) as f64
    }

    /// Nanoseconds per atom and step spent in `stage`.
    pub fn nanoseconds_per_atom_step(&self, stage: Stage) -> f64 {
        self.seconds_per_step(stage) * 1e9 / self.atoms as f64
    }

    /// Seconds per whole step, stages and bookkeeping.
    pub fn step_seconds(&self) -> f64 {
        self.times.step_seconds / self.steps.max(1) as f64
    }
}

/// Untimed steps before [`measure_stages`] times: the fcc start has melted by then.
const STAGE_WARMUP: u64 = 50;

/// Takes `steps` normal steps of the melted standard liquid with the stage timers on.
pub fn measure_stages(atoms: usize, steps: u64) -> StageReport {
    let mut sim = Simulation::new(standard_liquid(atoms)).expect("the benchmark spec is valid");
    sim.run(STAGE_WARMUP).expect("the benchmark liquid is stable");
    let builds0 = sim.list_builds();
    sim.time_stages(true);
    sim.run(steps).expect("the benchmark liquid is stable");
    sim.time_stages(false);
    StageReport {
        atoms,
        steps,
        threads: rayon::current_num_threads(),
        list_builds: sim.list_builds() - builds0,
        pairs_per_atom: sim.neighbour_list().pairs() as f64 / atoms as f64,
        times: *sim.stage_times(),
    }
}
