//! Bitwise reproducibility across thread counts.
//!
//! Claim under test: the doc comments of `physics::neighbours` and `physics::forces::compute`
//! ("the result is bitwise the same for any number of threads") and `physics::random` (every
//! random draw is a function of seed, step and atom only). The test runs the same spec and seed
//! inside rayon thread pools of 1, 2 and 3 threads (rayon 1.x `ThreadPoolBuilder::install`) and
//! demands identical bits in every sampled observable, every position and every velocity.
//!
//! Two box sizes: one with ≥ 9 force slabs (so each phase of the slab schedule runs several slabs
//! in parallel), and one small box with a single slab. The spec values (ρ = 0.8, T = 1.0,
//! r_c = 2.5, skin 0.3, dt = 0.005) are a common-practice liquid state point for the reduced LJ
//! fluid, chosen here only to give a dense, moving system.

mod common;
use noblescope::physics::{PotentialMode, Simulation, SimulationSpec, Species, Thermostat};

const STEPS: u64 = 150;

fn spec(kinds: Vec<Species>, counts: Vec<usize>, thermostat: Thermostat, density: f64) -> SimulationSpec {
    SimulationSpec {
        kinds,
        counts,
        density,
        temperature: 1.0,
        timestep: 0.005,
        cutoff: 2.5,
        skin: 0.3,
        potential: PotentialMode::TruncatedShifted,
        tail_correction: true,
        thermostat,
        seed: 2024,
    }
}

/// Everything compared: per-step observables as bits, then final positions and velocities as bits.
#[derive(PartialEq, Eq, Debug)]
struct Trace {
    slabs: usize,
    observables: Vec<[u64; 9]>,
    positions: Vec<[u64; 3]>,
    velocities: Vec<[u64; 3]>,
    builds: u64,
}

fn bits3(v: &[[f64; 3]]) -> Vec<[u64; 3]> {
    v.iter()
        .map(|x| [x[0].to_bits(), x[1].to_bits(), x[2].to_bits()])
        .collect()
}

fn run(spec: &SimulationSpec, threads: usize) -> Trace {
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .unwrap();
    pool.install(|| {
        assert_eq!(rayon::current_num_threads(), threads);
        let mut sim = Simulation::new(spec.clone()).unwrap();
        let slabs = sim.neighbour_list().slabs();
        let mut observables = Vec::new();
        for _ in 0..STEPS {
            sim.step().unwrap();
            let o = sim.observe();
            observables.push(common::observable_bits(&o));
        }
        Trace {
            slabs,
            observables,
            positions: bits3(&sim.system().positions),
            velocities: bits3(&sim.system().velocities),
            builds: sim.list_builds(),
        }
    })
}

fn check(name: &str, spec: SimulationSpec, min_slabs: usize, max_slabs: usize) {
    let one = run(&spec, 1);
    assert!(
        (min_slabs..=max_slabs).contains(&one.slabs),
        "{name}: {} slabs, wanted {min_slabs} to {max_slabs}",
        one.slabs
    );
    assert!(
        one.builds > 1,
        "{name}: the neighbour list was never rebuilt in {STEPS} steps"
    );
    for threads in [2, 3] {
        let other = run(&spec, threads);
        if let Some(k) = (0..STEPS as usize).find(|&k| one.observables[k] != other.observables[k]) {
            panic!(
                "{name}: observables differ first at step {} with {threads} threads: {:?} vs {:?}",
                k + 1,
                one.observables[k],
                other.observables[k]
            );
        }
        if let Some(i) = (0..one.positions.len())
            .find(|&i| one.positions[i] != other.positions[i] || one.velocities[i] != other.velocities[i])
        {
            panic!("{name}: atom {i} differs with {threads} threads");
        }
        assert_eq!(one, other, "{name}: {threads} threads");
    }
}

// 13 500 atoms at ρ = 0.8: box edge 25.65 σ, floor(25.65 / 2.8) = 9 slabs.
const LARGE: usize = 13_500;

#[test]
fn nve_many_slabs() {
    check(
        "NVE",
        spec(vec![Species::ReducedLJ], vec![LARGE], Thermostat::None, 0.8),
        9,
        usize::MAX,
    );
}

#[test]
fn stochastic_rescale_many_slabs() {
    check(
        "stochastic rescale",
        spec(
            vec![Species::ReducedLJ],
            vec![LARGE],
            Thermostat::StochasticRescale {
                target: 1.3,
                tau: 0.1,
            },
            0.8,
        ),
        9,
        usize::MAX,
    );
}

#[test]
fn langevin_many_slabs() {
    check(
        "Langevin",
        spec(
            vec![Species::ReducedLJ],
            vec![LARGE],
            Thermostat::Langevin {
                target: 1.3,
                gamma: 1.0,
            },
            0.8,
        ),
        9,
        usize::MAX,
    );
}

#[test]
fn two_species_mixture_many_slabs() {
    // Argon–krypton: argon is the reference, krypton has larger σ and ε and mass (species table).
    check(
        "Ar-Kr mixture",
        spec(
            vec![Species::Argon, Species::Krypton],
            vec![LARGE - 4000, 4000],
            Thermostat::Langevin {
                target: 1.0,
                gamma: 0.5,
            },
            0.8,
        ),
        9,
        usize::MAX,
    );
}

#[test]
fn small_box_single_slab() {
    // 256 atoms at ρ = 0.8: box edge 6.84 σ < 3 × 2.8 σ, so one slab and the all-pairs list path.
    check(
        "small NVE",
        spec(vec![Species::ReducedLJ], vec![256], Thermostat::None, 0.8),
        1,
        1,
    );
    check(
        "small mixture",
        spec(
            vec![Species::Argon, Species::Xenon],
            vec![200, 56],
            Thermostat::StochasticRescale {
                target: 1.0,
                tau: 0.2,
            },
            0.8,
        ),
        1,
        1,
    );
}
