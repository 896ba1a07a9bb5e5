//! The standard benchmark: reduced LJ liquid, ρ* = 0.8442, T* = 1.44 start, r_c = 2.5 σ,
//! skin 0.3 σ, truncated and shifted, NVE, dt* = 0.005.

use super::watchdog::Watchdog;
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

/// What the per-step watchdog costs (see [`measure_watchdog`]).
#[derive(Clone, Debug, Serialize)]
pub struct WatchdogCost {
    pub atoms: usize,
    /// Steps timed of each kind.
    pub steps: u64,
    /// Seconds per step in the drift and kick stages, watched.
    pub watched_stage_seconds: f64,
    /// Seconds per step in the same stages, plain.
    pub plain_stage_seconds: f64,
    /// Seconds per step in [`Watchdog::check`].
    pub check_seconds: f64,
    /// Seconds per whole step, plain.
    pub plain_step_seconds: f64,
    /// Seconds per whole step, watched and checked.
    pub watched_step_seconds: f64,
}

impl WatchdogCost {
    /// What watching adds to a step: the extra time of the watched stages and the check, as a
    /// percentage of a plain step.
    pub fn percent(&self) -> f64 {
        100.0 * (self.watched_stage_seconds - self.plain_stage_seconds + self.check_seconds)
            / self.plain_step_seconds
    }
}

/// Times `steps` watched and `steps` plain steps of the melted standard liquid on one
/// simulation, alternating step by step (the two kinds give the same trajectory to the bit),
/// so both see the same machine and the same list builds. The watchdog touches only the drift
/// and kick stages, and those are timed by the stage clock, which separates its cost from the
/// machine's drift in speed far better than whole steps would.
pub fn measure_watchdog(atoms: usize, steps: u64) -> WatchdogCost {
    let mut sim = Simulation::new(standard_liquid(atoms)).expect("the benchmark spec is valid");
    let mut dog = Watchdog::new(&mut sim);
    sim.run(STAGE_WARMUP).expect("the benchmark liquid is stable");
    sim.time_stages(true);
    let (mut stage, mut whole, mut check) = ([0.0; 2], [0.0; 2], 0.0);
    for i in 0..2 * steps {
        let on = i % 2 == 0;
        sim.watch_atoms(on);
        sim.reset_stage_times();
        sim.step().expect("the benchmark liquid is stable");
        let t = *sim.stage_times();
        let k = on as usize;
        stage[k] += t.drift.seconds + t.kick.seconds;
        whole[k] += t.step_seconds;
        if on {
            let c = Instant::now();
            let alarm = dog.check(&sim);
            check += c.elapsed().as_secs_f64();
            assert!(alarm.is_none(), "the benchmark liquid raised {alarm:?}");
        }
    }
    sim.time_stages(false);
    sim.watch_atoms(true);
    let per = |s: f64| s / steps.max(1) as f64;
    WatchdogCost {
        atoms,
        steps,
        watched_stage_seconds: per(stage[1]),
        plain_stage_seconds: per(stage[0]),
        check_seconds: per(check),
        plain_step_seconds: per(whole[0]),
        watched_step_seconds: per(whole[1] + check),
    }
}
