//! The blow-up watchdog: checks every step and names the atoms where trouble started.
//!
//! Each step's own loops measure what the watchdog needs ([`crate::physics::StepHealth`]: the
//! largest move and force, the energies, whether any value is not finite), so checking every
//! step costs a few comparisons per atom. The bounds and why they sit where they do are on
//! [`Bounds`]. An alarm names at most [`NAMED_ATOMS`] atoms, those that crossed the bound,
//! ranked by how far they crossed it; no atom is ever picked by comparing NaN.

use crate::physics::geometry::{fold, separation};
use crate::physics::{Simulation, Species};
use serde::Serialize;

/// Most atoms an alarm names.
pub const NAMED_ATOMS: usize = 8;
/// Nearest neighbours given for each named atom.
pub const NEIGHBOURS: usize = 4;

/// What kind of trouble the watchdog saw; in files as `non_finite`, `overlap`, `jump`,
/// `energy_jump`, `drift`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum AlarmKind {
    /// A position, velocity, force or energy is no longer a finite number.
    NonFinite,
    /// An atom feels a force beyond the overlap bound: atoms sit inside each other's cores.
    Overlap,
    /// An atom moved further in one step than the move bound.
    Jump,
    /// The conserved or the potential energy changed by more than the jump bound in one step.
    EnergyJump,
    /// The conserved energy drifted beyond the drift limit since the start.
    Drift,
}

impl AlarmKind {
    /// The name used in files and messages.
    pub fn name(self) -> &'static str {
        match self {
            AlarmKind::NonFinite => "non_finite",
            AlarmKind::Overlap => "overlap",
            AlarmKind::Jump => "jump",
            AlarmKind::EnergyJump => "energy_jump",
            AlarmKind::Drift => "drift",
        }
    }

    /// Whether the state itself is lost (no step can be taken from it).
    pub fn is_blow_up(self) -> bool {
        self == AlarmKind::NonFinite
    }

    /// What to try, in words.
    pub fn advice(self) -> &'static str {
        match self {
            AlarmKind::NonFinite => {
                "Rewind to a healthy state and lower the timestep; if it happens at the start, check the start configuration."
            }
            AlarmKind::Overlap => {
                "Check the start configuration (atoms placed on top of each other) or lower the timestep."
            }
            AlarmKind::Jump | AlarmKind::EnergyJump => {
                "Lower the timestep (or the temperature), then rewind and run on."
            }
            AlarmKind::Drift => "Lower the timestep, raise the cutoff, or use the ShiftedForce potential.",
        }
    }
}

/// A neighbour of a named atom.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Neighbour {
    /// Index in the run's atom order (0-based).
    pub atom: usize,
    pub species: Species,
    /// Minimum-image distance, σ.
    pub distance: f64,
}

/// An atom an alarm names, as it was at the alarm's step.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct NamedAtom {
    /// Index in the run's atom order (0-based).
    pub atom: usize,
    pub species: Species,
    /// Position folded into the box, σ.
    pub position: [f64; 3],
    /// The measure that crossed the bound (the move in σ, the force in ε/σ, the kinetic energy
    /// in ε); not finite for `non_finite`.
    pub value: f64,
    /// Nearest atoms, closest first.
    pub neighbours: Vec<Neighbour>,
}

/// Why the watchdog stopped a run.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Alarm {
    pub kind: AlarmKind,
    /// The step whose state crossed the bound.
    pub step: u64,
    /// Simulated time of that step, τ.
    pub time: f64,
    /// The measure (largest move, force, energy change per atom, drift) and its bound.
    pub value: f64,
    pub bound: f64,
    /// Where the trouble started: atoms ranked by how far they crossed the bound.
    pub atoms: Vec<NamedAtom>,
    /// One sentence on what was seen, with the numbers.
    pub detail: String,
}

impl Alarm {
    /// Step at which the alarm fired.
    pub fn step(&self) -> u64 {
        self.step
    }

    /// Indices of the named atoms, in rank order.
    pub fn atom_indices(&self) -> Vec<usize> {
        self.atoms.iter().map(|a| a.atom).collect()
    }

    /// One paragraph for people: kind, step, atoms, what was seen and what to try.
    pub fn describe(&self) -> String {
        format!(
            "{} at step {}: atoms {:?}. {} {}",
            self.kind.name(),
            self.step,
            self.atom_indices(),
            self.detail,
            self.kind.advice()
        )
    }
}

/// The watchdog's bounds, in reduced units of the reference species.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Bounds {
    /// Largest distance an atom may drift in one step, σ: [`MOVE_FRACTION`] of the smallest σ
    /// of the run's species.
    pub max_move: f64,
    /// Largest force on an atom, ε/σ: [`OVERLAP_FORCE`] times the largest ε/σ of the species.
    pub max_force: f64,
    /// Largest change per atom of the conserved or the potential energy between consecutive
    /// steps, as a fraction of the energy scale per atom (|U|/N + K/N, at least ε).
    pub energy_jump_fraction: f64,
    /// |relative drift| of the conserved energy; doubles after each drift alarm so a user who
    /// chooses to continue is not stopped again at once.
    pub drift: f64,
}

/// An atom may move at most this fraction of σ in one step. The repulsive wall of the LJ
/// potential rises as r⁻¹², so its energy grows e-fold over about σ/12 ≈ 0.08 σ: an atom that
/// moves 0.3 σ in one step crosses almost four such lengths before any force acts on it, and
/// lands where the energy is some forty times higher. A healthy liquid moves its fastest atoms
/// about 0.03 σ a step at dt = 0.005 τ, T = 1.44 ε/k_B (speeds of 5 σ/τ at most among 10⁶
/// atoms). The factor is our own rule of thumb, from that estimate.
pub const MOVE_FRACTION: f64 = 0.3;

/// Force bound in units of ε/σ of the pair: at 10⁵ ε/σ two LJ atoms are closer than about
/// 0.55 σ, where their energy is some 5000 ε; no thermal state the setups allow (kT ≤ 100 ε)
/// reaches that (at kT = 100 ε collisions turn near 0.7 σ, at forces of about 5·10³ ε/σ).
pub const OVERLAP_FORCE: f64 = 1e5;

/// A jump of this fraction of the energy scale per atom in one step (common practice puts the
/// fluctuation of the conserved energy of a usable run far below a percent over the whole run).
pub const ENERGY_JUMP_FRACTION: f64 = 0.1;

/// Default drift limit, 5 % of the conserved energy.
pub const DRIFT_LIMIT: f64 = 0.05;

impl Bounds {
    /// The bounds for the species of `sim` (smallest σ, largest ε/σ, in reduced units).
    pub fn for_simulation(sim: &Simulation) -> Bounds {
        let kinds = &sim.spec().kinds;
        let reference = kinds[0].params();
        let (mut sigma_min, mut force_scale) = (f64::INFINITY, 0.0f64);
        for k in kinds {
            let p = k.params();
            let sigma = p.sigma_angstrom / reference.sigma_angstrom;
            let eps = p.epsilon_kelvin / reference.epsilon_kelvin;
            sigma_min = sigma_min.min(sigma);
            force_scale = force_scale.max(eps / sigma);
        }
        Bounds {
            max_move: MOVE_FRACTION * sigma_min,
            max_force: OVERLAP_FORCE * force_scale,
            energy_jump_fraction: ENERGY_JUMP_FRACTION,
            drift: DRIFT_LIMIT,
        }
    }
}

/// Energies of the previous check, for the jump test.
#[derive(Clone, Copy, Debug, PartialEq)]
struct Energies {
    conserved: f64,
    potential: f64,
    scale: f64,
}

/// The watchdog of one session.
#[derive(Clone, Debug, PartialEq)]
pub struct Watchdog {
    pub bounds: Bounds,
    previous: Option<Energies>,
}

impl Watchdog {
    /// A watchdog with the bounds for `sim`; tells `sim` its move bound.
    pub fn new(sim: &mut Simulation) -> Watchdog {
        let bounds = Bounds::for_simulation(sim);
        sim.set_move_bound(bounds.max_move);
        Watchdog {
            bounds,
            previous: None,
        }
    }

    /// Forgets the previous energies (after a rewind or a live change of the interaction,
    /// which moves the energy surface).
    pub fn forget(&mut self) {
        self.previous = None;
    }

    /// Checks the state `sim` is in (after a step, or a start) with what its step measured.
    ///
    /// The tests follow the order trouble shows itself within a step: a value that is not
    /// finite; an atom moving too far (the drift comes first in the step); a force beyond the
    /// overlap bound (computed at the new positions); an energy jump; the drift.
    pub fn check(&mut self, sim: &Simulation) -> Option<Alarm> {
        let h = sim.health();
        let b = self.bounds;
        let n = sim.system().len() as f64;
        let energies = Energies {
            conserved: h.conserved / n,
            potential: h.potential / n,
            scale: (h.potential.abs() / n + h.kinetic / n).max(1.0),
        };
        let previous = self.previous.replace(energies);
        if h.non_finite || !(h.kinetic.is_finite() && h.potential.is_finite()) {
            return Some(non_finite(sim));
        }
        if h.max_move > b.max_move {
            let atoms: Vec<(usize, f64)> = h.movers.iter().copied().take(NAMED_ATOMS).collect();
            let (first, d) = atoms.first().copied().unwrap_or((0, h.max_move));
            let detail = format!(
                "atom {first} moved {d:.3} σ in one step (bound {:.3} σ); {} atoms moved further than the bound.",
                b.max_move,
                h.movers.len()
            );
            return Some(alarm(
                sim,
                AlarmKind::Jump,
                h.max_move,
                b.max_move,
                &atoms,
                detail,
            ));
        }
        if h.max_force > b.max_force {
            let atoms = ranked(sim, |i| force(sim, i), b.max_force);
            let detail = format!(
                "atom {} feels a force of {:.3e} ε/σ (bound {:.1e} ε/σ): atoms sit inside each other's cores.",
                atoms.first().map_or(0, |a| a.0),
                h.max_force,
                b.max_force
            );
            return Some(alarm(
                sim,
                AlarmKind::Overlap,
                h.max_force,
                b.max_force,
                &atoms,
                detail,
            ));
        }
        if let Some(p) = previous {
            let bound = b.energy_jump_fraction * p.scale;
            let de = (energies.conserved - p.conserved).abs();
            let du = (energies.potential - p.potential).abs();
            if de > bound || du > bound {
                let (what, jump) = if de >= du {
                    ("conserved", de)
                } else {
                    ("potential", du)
                };
                let atoms = ranked(sim, |i| sim.system().kinetic_of(i), 0.0);
                let detail = format!(
                    "the {what} energy changed by {jump:.3} ε per atom in one step (bound {bound:.3} ε); named are the atoms with the most kinetic energy."
                );
                return Some(alarm(sim, AlarmKind::EnergyJump, jump, bound, &atoms, detail));
            }
        }
        if h.drift.abs() > b.drift {
            let limit = b.drift;
            self.bounds.drift *= 2.0;
            let atoms = ranked(sim, |i| sim.system().kinetic_of(i), 0.0);
            let detail = format!(
                "the conserved energy drifted by {:.3} % since the start (limit {:.3} %; the next alarm at {:.3} %).",
                h.drift * 100.0,
                limit * 100.0,
                self.bounds.drift * 100.0
            );
            return Some(alarm(sim, AlarmKind::Drift, h.drift, limit, &atoms, detail));
        }
        None
    }
}

fn force(sim: &Simulation, i: usize) -> f64 {
    let f = sim.system().forces[i];
    (f[0] * f[0] + f[1] * f[1] + f[2] * f[2]).sqrt()
}

/// The atoms whose `value` exceeds `bound`, largest first (by index among equals), at most
/// [`NAMED_ATOMS`]; values that are not finite are left out.
fn ranked(sim: &Simulation, value: impl Fn(usize) -> f64, bound: f64) -> Vec<(usize, f64)> {
    let mut over: Vec<(usize, f64)> = (0..sim.system().len())
        .map(|i| (i, value(i)))
        .filter(|&(_, v)| v.is_finite() && v > bound)
        .collect();
    over.sort_by(|a, b| b.1.total_cmp(&a.1).then(a.0.cmp(&b.0)));
    over.truncate(NAMED_ATOMS);
    over
}

/// The alarm for values that are not finite: the atoms holding one, in index order.
pub fn non_finite(sim: &Simulation) -> Alarm {
    let s = sim.system();
    let bad = |i: usize| {
        !s.positions[i]
            .iter()
            .chain(&s.velocities[i])
            .chain(&s.forces[i])
            .all(|x| x.is_finite())
    };
    let atoms: Vec<(usize, f64)> = (0..s.len())
        .filter(|&i| bad(i))
        .take(NAMED_ATOMS)
        .map(|i| (i, f64::NAN))
        .collect();
    let detail = if atoms.is_empty() {
        "the potential energy or the virial is no longer finite; no atom holds a non-finite value."
            .to_string()
    } else {
        format!(
            "{} atoms hold a position, velocity or force that is no longer a finite number (the first {} are named); the run blew up.",
            (0..s.len()).filter(|&i| bad(i)).count(),
            atoms.len()
        )
    };
    alarm(sim, AlarmKind::NonFinite, f64::NAN, f64::NAN, &atoms, detail)
}

fn alarm(
    sim: &Simulation,
    kind: AlarmKind,
    value: f64,
    bound: f64,
    atoms: &[(usize, f64)],
    detail: String,
) -> Alarm {
    Alarm {
        kind,
        step: sim.step_count(),
        time: sim.time(),
        value,
        bound,
        atoms: atoms.iter().map(|&(i, v)| named(sim, i, v)).collect(),
        detail,
    }
}

/// Atom `i` as the alarm shows it: species, folded position and its nearest neighbours.
fn named(sim: &Simulation, i: usize, value: f64) -> NamedAtom {
    let s = sim.system();
    let l = s.box_length;
    let p = s.positions[i];
    let mut near: Vec<(usize, f64)> = (0..s.len())
        .filter(|&j| j != i)
        .map(|j| (j, separation(&p, &s.positions[j], l, 1.0 / l).1.sqrt()))
        .filter(|(_, d)| d.is_finite())
        .collect();
    let k = NEIGHBOURS.min(near.len());
    if k > 0 {
        near.select_nth_unstable_by(k - 1, |a, b| a.1.total_cmp(&b.1).then(a.0.cmp(&b.0)));
        near.truncate(k);
        near.sort_by(|a, b| a.1.total_cmp(&b.1).then(a.0.cmp(&b.0)));
    }
    NamedAtom {
        atom: i,
        species: s.kinds[s.types[i] as usize],
        position: [fold(p[0], l), fold(p[1], l), fold(p[2], l)],
        value,
        neighbours: near
            .into_iter()
            .map(|(j, distance)| Neighbour {
                atom: j,
                species: s.kinds[s.types[j] as usize],
                distance,
            })
            .collect(),
    }
}
