//! Dilute boxes: memory stays O(N) at every density a setup allows (ρ* from 1e-6 to 1.5).
//!
//! Contract under test (module doc of `physics::neighbours`): the cell grid has at most
//! `MAX_CELLS_PER_ATOM` cells per atom, cells at least r_c + skin wide; the list holds every pair
//! within r_c + skin once, none beyond the reach plus the search margin 1e-4 σ + 1e-6 L (allowed
//! twice over here, as in tests/neighbour_list_property.rs, for the rounding of single-precision
//! distances). The list's memory figure checked here follows from `NeighbourList::heap_bytes`:
//! 44 bytes an atom (single-precision reference and cell positions, 12 + 12; cell order, slab
//! order and list ends, 4 each; at most two 4-byte cell starts), 4 bytes a stored pair with at
//! most 1/12 slack and 64 entries per 1024-atom chunk, and 4 bytes a slab.
//!
//! The whole-run figures are peak resident memory of `noblescope run` children (getrusage), for
//! the three setups that exhausted memory before the grid was capped: 500 reduced-LJ atoms at
//! ρ* = 1e-6 (4.7 GB before), 2,000 argon atoms at 0.01 kg/m³ and 300 K (3.2 GB), and a million
//! atoms at ρ* = 1e-6 (aborted trying to allocate 182 GB). Positions are invented data from a
//! 64-bit LCG (Knuth's MMIX constants).

use noblescope::physics::geometry::separation;
use noblescope::physics::neighbours::{MAX_CELLS_PER_ATOM, NeighbourList, cells_per_edge};
use noblescope::physics::{PotentialMode, Simulation, SimulationSpec, Species, Thermostat};
use std::collections::BTreeSet;

const CUTOFF: f64 = 2.5;
const SKIN: f64 = 0.3;

fn lcg(seed: u64) -> impl FnMut() -> f64 {
    let mut s = seed;
    move || {
        s = s
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (s >> 11) as f64 / (1u64 << 53) as f64
    }
}

fn box_edge(atoms: usize, density: f64) -> f64 {
    (atoms as f64 / density).cbrt()
}

/// Checks the list against all pairs, and its memory against the figure in the module doc.
fn check_list(positions: &[[f64; 3]], l: f64) -> NeighbourList {
    let n = positions.len();
    let reach = CUTOFF + SKIN;
    let mut list = NeighbourList::new(CUTOFF, SKIN);
    list.build(positions, l);

    let mut got = BTreeSet::new();
    for i in 0..n {
        for &j in list.partners(i) {
            let key = (i.min(j as usize), i.max(j as usize));
            assert!(
                key.0 != key.1 && got.insert(key),
                "pair {key:?} stored twice or self"
            );
        }
    }
    let beyond = reach + 2.0 * (1e-4 + 1e-6 * l);
    for i in 0..n {
        for j in i + 1..n {
            let r = separation(&positions[i], &positions[j], l, 1.0 / l).1.sqrt();
            if r < reach {
                assert!(
                    got.contains(&(i, j)),
                    "pair ({i}, {j}) at r = {r} missing (L = {l})"
                );
            } else if got.contains(&(i, j)) {
                assert!(r < beyond, "pair ({i}, {j}) at r = {r} listed (L = {l})");
            }
        }
    }

    let cells = list.cells_per_edge();
    assert!(
        cells.pow(3) <= MAX_CELLS_PER_ATOM * n,
        "{cells}³ cells for {n} atoms"
    );
    assert!(
        cells == 0 || l / cells as f64 >= reach,
        "cells narrower than the reach"
    );
    let chunks = n.div_ceil(1024);
    let pairs = list.pairs();
    let figure = 44 * n + pairs * 4 * 13 / 12 + chunks * (4 * 64 + 24) + 4 * (list.slabs() + 1) + 64;
    assert!(
        list.heap_bytes() <= figure,
        "{} bytes held for {n} atoms and {pairs} pairs in a box of {l} σ; figure {figure}",
        list.heap_bytes()
    );
    list
}

#[test]
fn five_hundred_atoms_at_the_lowest_density_list_every_pair_in_a_few_kilobytes() {
    // Half the atoms in a droplet straddling the box corner (so there are pairs to find, across
    // the periodic faces), half spread over the box.
    let n = 500;
    let l = box_edge(n, 1e-6);
    let mut u = lcg(7);
    let positions: Vec<[f64; 3]> = (0..n)
        .map(|i| {
            if i % 2 == 0 {
                [u() * 8.0 - 4.0, u() * 8.0 - 4.0, u() * 8.0 - 4.0]
            } else {
                [u() * l, u() * l, u() * l]
            }
        })
        .collect();
    let list = check_list(&positions, l);
    assert!(
        list.pairs() > 1000,
        "{} pairs: the droplet should give many",
        list.pairs()
    );
    // Before the cap: 283³ cells, 4.7 GB. Now well under 200 bytes an atom.
    assert!(
        list.heap_bytes() / n < 200,
        "{} bytes an atom",
        list.heap_bytes() / n
    );
}

#[test]
fn the_list_holds_every_pair_within_its_memory_figure_at_every_allowed_density() {
    let n = 3000;
    for density in [1e-6, 1e-5, 1e-4, 1e-3, 1e-2, 0.05, 0.1, 0.3, 0.8442, 1.5] {
        let l = box_edge(n, density);
        let mut u = lcg(density.to_bits());
        let positions: Vec<[f64; 3]> = (0..n).map(|_| [u() * l, u() * l, u() * l]).collect();
        check_list(&positions, l);
    }
}

#[test]
fn cells_are_as_before_wherever_there_are_at_most_two_per_atom() {
    // The cap changes nothing for dense boxes, so their lists (and runs) stay bitwise the same.
    let reach = CUTOFF + SKIN;
    for (n, density) in [
        (256, 0.8),
        (4000, 0.8442),
        (32000, 0.8442),
        (2000, 0.0385),
        (1_000_000, 1.5),
    ] {
        let l = box_edge(n, density);
        let fit = (l / reach).floor() as usize;
        assert!(fit.pow(3) <= 2 * n);
        assert_eq!(cells_per_edge(l, reach, n), fit, "{n} atoms at {density}");
    }
    // Dilute: at most two cells an atom, never narrower than the reach.
    for (n, density) in [(500, 1e-6), (1_000_000, 1e-6), (2, 1e-6), (27, 1e-3)] {
        let l = box_edge(n, density);
        let c = cells_per_edge(l, reach, n);
        assert!(
            c.pow(3) <= 2 * n && (c + 1).pow(3) > 2 * n,
            "{n} atoms: {c} cells an edge"
        );
        assert!(l / c.max(1) as f64 >= reach);
    }
}

#[test]
fn a_dilute_simulation_holds_little_more_memory_per_atom_than_its_arrays() {
    let spec = SimulationSpec {
        kinds: vec![Species::ReducedLJ],
        counts: vec![500],
        density: 1e-6,
        temperature: 1.44,
        timestep: 0.005,
        cutoff: CUTOFF,
        skin: SKIN,
        potential: PotentialMode::TruncatedShifted,
        tail_correction: false,
        thermostat: Thermostat::None,
        seed: 1,
    };
    let mut sim = Simulation::new(spec).unwrap();
    sim.run(50).unwrap();
    // Positions, velocities, forces (72) and types (1), plus the list's 44 and a few pairs.
    let per_atom = sim.heap_bytes() / 500;
    assert!(per_atom < 200, "{per_atom} bytes an atom");
    assert!(sim.observe().total.is_finite());
}

/// Peak resident memory of the largest child process waited for so far, in bytes.
#[cfg(target_os = "linux")]
fn children_peak_rss() -> u64 {
    let mut usage = std::mem::MaybeUninit::<libc::rusage>::zeroed();
    // SAFETY: getrusage fills the struct it is given; RUSAGE_CHILDREN is a valid `who`.
    let rc = unsafe { libc::getrusage(libc::RUSAGE_CHILDREN, usage.as_mut_ptr()) };
    assert_eq!(rc, 0);
    // SAFETY: filled by the successful call above. ru_maxrss is in kilobytes on Linux.
    unsafe { usage.assume_init() }.ru_maxrss as u64 * 1024
}

/// The only test in this file that starts processes, so the children's peak is its own.
#[cfg(target_os = "linux")]
#[test]
fn dilute_runs_stay_within_their_memory_figure() {
    let dir =
        std::path::Path::new(env!("CARGO_TARGET_TMPDIR")).join(format!("dilute-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let reduced = |atoms: u64| {
        format!(
            "Setup(species: [(kind: ReducedLJ, share: 1.0)], atoms: {atoms}, density: Reduced(1e-6),
              temperature: Reduced(1.44), timestep: Reduced(0.005), cutoff: Sigma(2.5), ensemble: Nve,
              seed: 1, steps: 100, sample_every: 10)"
        )
    };
    let argon =
        "Setup(species: [(kind: Argon, share: 1.0)], atoms: 2000, density: KilogramsPerCubicMetre(0.01),
        temperature: Kelvin(300.0), timestep: Femtoseconds(5.0), cutoff: Sigma(2.5),
        ensemble: Nvt(thermostat: StochasticRescale(relaxation: Femtoseconds(200.0))), seed: 1, steps: 100,
        sample_every: 10)"
            .to_string();
    // Ascending bounds, since the figure is the largest child so far: the process itself is
    // under 10 MB; 400 bytes an atom covers the run (~120) and the checkpoint written at its end
    // (a copy of the state and its encoding, ~120).
    for (name, text, steps, atoms) in [
        ("reduced-500", reduced(500), "100", 500u64),
        ("argon-2000", argon, "100", 2000),
        ("reduced-1m", reduced(1_000_000), "2", 1_000_000),
    ] {
        let setup = dir.join(format!("{name}.ron"));
        std::fs::write(&setup, text).unwrap();
        let o = std::process::Command::new(env!("CARGO_BIN_EXE_noblescope"))
            .args([
                "run",
                setup.to_str().unwrap(),
                "--steps",
                steps,
                "--quiet",
                "--out",
            ])
            .arg(dir.join(name))
            .output()
            .unwrap();
        assert_eq!(
            o.status.code(),
            Some(0),
            "{name}: {}",
            String::from_utf8_lossy(&o.stderr)
        );
        let peak = children_peak_rss();
        let bound = 30_000_000 + 400 * atoms;
        assert!(
            peak < bound,
            "{name}: peak resident memory {peak} bytes, bound {bound}"
        );
    }
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn the_memory_check_before_a_run_counts_at_least_what_the_run_holds_at_every_density() {
    // What the simulation holds, plus the checkpoint written at the end (a copy of the state and
    // its encoding, 61 bytes an atom each, `io::checkpoint`), must be within the estimate.
    let n = 4000;
    for density in [1e-6, 1e-3, 1e-2, 0.1, 0.8442, 1.5] {
        let spec = SimulationSpec {
            kinds: vec![Species::ReducedLJ],
            counts: vec![n],
            density,
            temperature: 1.44,
            timestep: 0.005,
            cutoff: CUTOFF,
            skin: SKIN,
            potential: PotentialMode::TruncatedShifted,
            tail_correction: false,
            thermostat: Thermostat::None,
            seed: 1,
        };
        let mut sim = Simulation::new(spec).unwrap();
        sim.run(20).unwrap();
        let held = sim.heap_bytes() as u64 / n as u64 + 2 * 61;
        let estimate = noblescope::io::setup::bytes_per_atom_estimate(density, CUTOFF + SKIN);
        assert!(
            held <= estimate,
            "ρ* = {density}: {held} bytes an atom, estimate {estimate}"
        );
    }
}
