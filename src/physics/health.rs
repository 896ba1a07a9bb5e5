//! What a step's own loops see of every atom, for a watchdog outside the physics.
//!
//! The drift and the last kick of a step visit every atom anyway; their watched forms
//! ([`drift_watched`], [`kick_watched`]) also keep the largest speed and force, the kinetic
//! energy and whether any value stopped being finite. A step's [`StepHealth`] is built from these,
//! so watching every step costs a few comparisons per atom and no extra pass over memory. Atoms
//! are listed ([`StepHealth::movers`]) only in a step where some atom crossed the move bound.
//! Maxima and "or" do not depend on the order of the atoms, and the kinetic energy is summed in
//! the fixed chunks of [`super::parallel::CHUNK`], so the results do not depend on threads.

use super::parallel::{CHUNK, ELEMENTWISE_TASK};
use super::stages;
use rayon::prelude::*;

/// What one step measured about its atoms, after the step.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct StepHealth {
    /// The step these belong to (the state after it).
    pub step: u64,
    /// Largest distance an atom drifted in the step, σ: dt·|v| with the velocity it drifted at
    /// (under BAOAB, the faster of its two half drifts, taken over a whole step). 0 for a state
    /// that was not reached by a step (a start, a restored state).
    pub max_move: f64,
    /// Largest force on one atom, ε/σ.
    pub max_force: f64,
    /// Total kinetic energy, ε (the sum of [`super::System::kinetic_energy`] in another fixed
    /// order, so it may differ from it in the last bits).
    pub kinetic: f64,
    /// Total potential energy with the tail correction, ε.
    pub potential: f64,
    /// Conserved energy (kinetic + potential − the thermostat's heat), ε.
    pub conserved: f64,
    /// Relative drift of the conserved energy, as [`super::Observables::drift`].
    pub drift: f64,
    /// Some position, velocity or force is not finite (or so large that its square is not).
    pub non_finite: bool,
    /// Atoms that drifted further than the move bound in this step, with the distance (σ),
    /// farthest first and by index among equals; empty when none did.
    pub movers: Vec<(usize, f64)>,
}

/// What a watched drift saw.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct DriftTally {
    /// Largest |v|² among the atoms that drifted (non-finite values left out).
    pub max_speed2: f64,
    /// Some new position or velocity is not finite.
    pub non_finite: bool,
}

impl DriftTally {
    fn merge(self, o: DriftTally) -> DriftTally {
        DriftTally {
            max_speed2: self.max_speed2.max(o.max_speed2),
            non_finite: self.non_finite | o.non_finite,
        }
    }
}

/// What a watched kick (or [`measure`]) saw in one chunk of atoms, or in all of them.
/// [`measure`] also checks the positions.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct KickTally {
    /// Σ ½ m v² after the kick.
    pub kinetic: f64,
    /// Largest |F|² (non-finite values left out).
    pub max_force2: f64,
    /// Some velocity or force is not finite (or its square overflows).
    pub non_finite: bool,
}

/// Atoms one task of [`drift_watched`] takes at a time.
const BLOCK: usize = 1024;
/// Independent accumulators per loop: four chains of additions and maxima instead of one, so
/// the loop is not held up by the latency of each (a fixed pattern, so the sums do not depend
/// on threads either).
const LANES: usize = 4;

/// Largest of the lanes; a comparison never picks NaN.
fn lane_max(m: [f64; LANES]) -> f64 {
    m.iter().fold(0.0, |a, &b| if b > a { b } else { a })
}

/// Whether a probe (Σ 0·x over values x) met a value that is not finite: 0·x is 0 for every
/// finite x and NaN for infinity and NaN.
fn probe_hit(p: [f64; LANES]) -> bool {
    p.iter().any(|&x| x != 0.0)
}

/// A: x ← x + h v for every atom, as [`super::stages::drift`], keeping the largest speed and
/// whether a new position or a velocity is not finite. The maximum is taken by comparison, so
/// it is never NaN; NaN and infinity set `non_finite` instead.
pub fn drift_watched(positions: &mut [[f64; 3]], velocities: &[[f64; 3]], h: f64) -> DriftTally {
    positions
        .par_chunks_mut(BLOCK)
        .zip(velocities.par_chunks(BLOCK))
        .with_min_len(ELEMENTWISE_TASK / BLOCK)
        .map(|(xs, vs)| {
            let mut m = [0.0; LANES];
            let mut probe = [0.0; LANES];
            let mut one = |l: usize, x: &mut [f64; 3], v: &[f64; 3]| {
                x[0] += h * v[0];
                x[1] += h * v[1];
                x[2] += h * v[2];
                let s2 = v[0] * v[0] + v[1] * v[1] + v[2] * v[2];
                if s2 > m[l] {
                    m[l] = s2;
                }
                probe[l] += 0.0 * (x[0] + x[1] + x[2] + s2);
            };
            let mut x4 = xs.chunks_exact_mut(LANES);
            let mut v4 = vs.chunks_exact(LANES);
            for (x, v) in (&mut x4).zip(&mut v4) {
                for l in 0..LANES {
                    one(l, &mut x[l], &v[l]);
                }
            }
            for (x, v) in x4.into_remainder().iter_mut().zip(v4.remainder()) {
                one(0, x, v);
            }
            DriftTally {
                max_speed2: lane_max(m),
                non_finite: probe_hit(probe),
            }
        })
        .reduce(DriftTally::default, DriftTally::merge)
}

/// B: v ← v + h F/m for every atom, as [`super::stages::kick`], keeping the kinetic energy
/// after the kick, the largest force and whether a velocity or force is not finite. `partials`
/// is reused scratch (one entry per [`CHUNK`] atoms), so a step allocates nothing.
pub fn kick_watched(
    velocities: &mut [[f64; 3]],
    forces: &[[f64; 3]],
    types: &[u8],
    masses: &[f64],
    h: f64,
    partials: &mut Vec<KickTally>,
) -> KickTally {
    let per_type = stages::KickFactors::new(masses, h);
    velocities
        .par_chunks_mut(CHUNK)
        .zip(forces.par_chunks(CHUNK))
        .zip(types.par_chunks(CHUNK))
        .with_min_len(ELEMENTWISE_TASK / CHUNK)
        .map(|((vs, fs), ts)| {
            let mut ke = [0.0; LANES];
            let mut m = [0.0; LANES];
            // Σ|F|²: not finite exactly when some force is not (or the sum overflows); the sum
            // of kinetic energies does the same for the velocities.
            let mut fsum = [0.0; LANES];
            let mut one = |l: usize, v: &mut [f64; 3], f: &[f64; 3], ty: u8| {
                let (a, mass) = per_type.get(ty);
                v[0] += a * f[0];
                v[1] += a * f[1];
                v[2] += a * f[2];
                let k = 0.5 * mass * (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]);
                let f2 = f[0] * f[0] + f[1] * f[1] + f[2] * f[2];
                ke[l] += k;
                if f2 > m[l] {
                    m[l] = f2;
                }
                fsum[l] += f2;
            };
            let mut v4 = vs.chunks_exact_mut(LANES);
            let mut f4 = fs.chunks_exact(LANES);
            let mut t4 = ts.chunks_exact(LANES);
            for ((v, f), t) in (&mut v4).zip(&mut f4).zip(&mut t4) {
                for l in 0..LANES {
                    one(l, &mut v[l], &f[l], t[l]);
                }
            }
            let rest = v4
                .into_remainder()
                .iter_mut()
                .zip(f4.remainder())
                .zip(t4.remainder());
            for ((v, f), &t) in rest {
                one(0, v, f, t);
            }
            let kinetic = (ke[0] + ke[1]) + (ke[2] + ke[3]);
            KickTally {
                kinetic,
                max_force2: lane_max(m),
                non_finite: !(kinetic + fsum[0] + fsum[1] + fsum[2] + fsum[3]).is_finite(),
            }
        })
        .collect_into_vec(partials);
    total(partials)
}

/// The tally of [`kick_watched`] without kicking: kinetic energy, largest force, finiteness of
/// velocities, forces and positions of a state that was not reached by a step.
pub fn measure(
    positions: &[[f64; 3]],
    velocities: &[[f64; 3]],
    forces: &[[f64; 3]],
    types: &[u8],
    masses: &[f64],
) -> KickTally {
    let mut partials = Vec::new();
    velocities
        .par_chunks(CHUNK)
        .zip(forces.par_chunks(CHUNK))
        .zip(types.par_chunks(CHUNK))
        .zip(positions.par_chunks(CHUNK))
        .map(|(((vs, fs), ts), xs)| {
            let mut ke = [0.0; LANES];
            let mut t = KickTally::default();
            for (i, (((v, f), &ty), x)) in vs.iter().zip(fs).zip(ts).zip(xs).enumerate() {
                let mass = masses[ty as usize];
                let k = 0.5 * mass * (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]);
                let f2 = f[0] * f[0] + f[1] * f[1] + f[2] * f[2];
                ke[i % LANES] += k;
                if f2 > t.max_force2 {
                    t.max_force2 = f2;
                }
                t.non_finite |= !(k + f2 + x[0] + x[1] + x[2]).is_finite();
            }
            t.kinetic = (ke[0] + ke[1]) + (ke[2] + ke[3]);
            t
        })
        .collect_into_vec(&mut partials);
    total(&partials)
}

/// Chunk tallies added in index order.
fn total(partials: &[KickTally]) -> KickTally {
    KickTally {
        kinetic: partials.iter().map(|t| t.kinetic).sum(),
        max_force2: partials.iter().fold(0.0, |m, t| m.max(t.max_force2)),
        non_finite: partials.iter().any(|t| t.non_finite),
    }
}

/// Atoms whose speed times `dt` exceeds `bound`, with that distance, merged into `movers`
/// (an atom already listed keeps the larger distance), farthest first and by index among equals.
pub fn collect_movers(velocities: &[[f64; 3]], dt: f64, bound: f64, movers: &mut Vec<(usize, f64)>) {
    for (i, v) in velocities.iter().enumerate() {
        let d = dt * (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt();
        if d > bound {
            match movers.iter_mut().find(|(j, _)| *j == i) {
                Some(m) => m.1 = m.1.max(d),
                None => movers.push((i, d)),
            }
        }
    }
    movers.sort_by(|a, b| b.1.total_cmp(&a.1).then(a.0.cmp(&b.0)));
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::system::kinetic_energy;

    type Arrays = (Vec<[f64; 3]>, Vec<[f64; 3]>, Vec<[f64; 3]>, Vec<u8>);

    /// Positions, velocities, forces and types of `n` made-up atoms.
    fn atoms(n: usize) -> Arrays {
        let x = (0..n).map(|i| [i as f64 * 0.1, 1.0, 2.0]).collect();
        let v = (0..n)
            .map(|i| [((i * 7) % 13) as f64 * 0.1 - 0.6, 0.2, -0.1])
            .collect();
        let f = (0..n).map(|i| [((i * 5) % 11) as f64 - 5.0, 1.0, 0.5]).collect();
        let t = (0..n).map(|i| (i % 2) as u8).collect();
        (x, v, f, t)
    }

    #[test]
    fn the_watched_stages_move_atoms_as_the_plain_ones_and_sum_the_kinetic_energy() {
        let masses = [1.0, 2.5];
        let (x, v, f, t) = atoms(10_000);
        let (mut x1, mut v1) = (x.clone(), v.clone());
        let (mut x2, mut v2) = (x, v);
        stages::drift(&mut x1, &v1, 0.005);
        let d = drift_watched(&mut x2, &v2, 0.005);
        assert_eq!(x1, x2);
        let fastest = v2
            .iter()
            .map(|v| v[0] * v[0] + v[1] * v[1] + v[2] * v[2])
            .fold(0.0, f64::max);
        assert_eq!(d.max_speed2, fastest);
        assert!(!d.non_finite);
        stages::kick(&mut v1, &f, &t, &masses, 0.0025);
        let k = kick_watched(&mut v2, &f, &t, &masses, 0.0025, &mut Vec::new());
        assert_eq!(v1, v2);
        let plain = kinetic_energy(&v1, &t, &masses);
        assert!(
            (k.kinetic - plain).abs() <= 1e-12 * plain,
            "{} vs {plain}",
            k.kinetic
        );
        assert_eq!(k.max_force2, 25.0 + 1.0 + 0.25);
        assert_eq!(measure(&x2, &v2, &f, &t, &masses), k);
    }

    #[test]
    fn a_non_finite_value_is_flagged_and_never_becomes_the_maximum() {
        let masses = [1.0, 2.5];
        let (mut x, mut v, mut f, t) = atoms(100);
        v[40] = [f64::NAN, 0.0, 0.0];
        let d = drift_watched(&mut x, &v, 0.01);
        assert!(d.non_finite && d.max_speed2.is_finite());
        v[40] = [0.0; 3];
        f[3] = [f64::NAN, 0.0, 0.0];
        let k = kick_watched(&mut v.clone(), &f, &t, &masses, 0.01, &mut Vec::new());
        assert!(k.non_finite && k.max_force2.is_finite());
        f[3] = [f64::INFINITY, 0.0, 0.0];
        assert!(kick_watched(&mut v, &f, &t, &masses, 0.01, &mut Vec::new()).non_finite);
    }

    #[test]
    fn movers_are_ranked_by_distance_and_merged() {
        let mut v = vec![[0.0; 3]; 6];
        v[4] = [30.0, 0.0, 0.0];
        v[1] = [0.0, 50.0, 0.0];
        v[2] = [0.0, 0.0, 30.0];
        let mut movers = vec![];
        collect_movers(&v, 0.01, 0.2, &mut movers);
        assert_eq!(movers.iter().map(|m| m.0).collect::<Vec<_>>(), [1, 2, 4]);
        v[4] = [80.0, 0.0, 0.0];
        collect_movers(&v, 0.01, 0.2, &mut movers);
        assert_eq!(movers.iter().map(|m| m.0).collect::<Vec<_>>(), [4, 1, 2]);
    }
}
