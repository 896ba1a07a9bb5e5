//! Lennard-Jones forces, potential energy and virial over the half neighbour list.

use super::neighbours::{separation, NeighbourList};
use super::parallel::SharedMut;
use super::potential::{PairTable, PotentialMode};
use rayon::prelude::*;

/// Sums of one force evaluation.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct ForceSums {
    /// Σ pair energies of the potential mode (no tail correction).
    pub potential: f64,
    /// Σ r_ij · f_ij over pairs.
    pub virial: f64,
}

/// Scratch for per-slab sums, owned by the caller so a step allocates nothing.
#[derive(Clone, Debug, Default)]
pub struct ForceScratch {
    slab_sums: Vec<ForceSums>,
}

/// Computes forces into `forces` and returns the summed energy and virial.
///
/// Slabs are processed in three phases (see [`super::neighbours`]); each slab's atoms are visited
/// in ascending order, and per-slab sums are added in slab order, so the result is bitwise the
/// same for any number of threads.
pub fn compute(
    positions: &[[f64; 3]],
    types: &[u8],
    box_length: f64,
    table: &PairTable,
    list: &NeighbourList,
    forces: &mut [[f64; 3]],
    scratch: &mut ForceScratch,
) -> ForceSums {
    forces.par_iter_mut().with_min_len(4096).for_each(|f| *f = [0.0; 3]);
    let slabs = list.slabs();
    scratch.slab_sums.clear();
    scratch.slab_sums.resize(slabs, ForceSums::default());
    let mixed = table.types() > 1;
    let shifted_force = table.mode() == PotentialMode::ShiftedForce;
    let out = SharedMut(forces.as_mut_ptr());
    let ctx = Ctx { positions, types, l: box_length, inv_l: 1.0 / box_length, table, list, out };
    let group = slabs.min(3);
    for phase in 0..group {
        scratch.slab_sums.par_chunks_mut(group).enumerate().for_each(|(k, chunk)| {
            let s = k * group + phase;
            chunk[phase] = match (shifted_force, mixed) {
                (false, false) => ctx.slab::<false, false>(s),
                (false, true) => ctx.slab::<false, true>(s),
                (true, false) => ctx.slab::<true, false>(s),
                (true, true) => ctx.slab::<true, true>(s),
            };
        });
    }
    let mut total = ForceSums::default();
    for s in &scratch.slab_sums {
        total.potential += s.potential;
        total.virial += s.virial;
    }
    total
}

struct Ctx<'a> {
    positions: &'a [[f64; 3]],
    types: &'a [u8],
    l: f64,
    inv_l: f64,
    table: &'a PairTable,
    list: &'a NeighbourList,
    out: SharedMut<[f64; 3]>,
}

impl Ctx<'_> {
    #[inline(never)]
    fn slab<const SHIFTED_FORCE: bool, const MIXED: bool>(&self, s: usize) -> ForceSums {
        let rc2 = self.table.cutoff2();
        let rc = self.table.cutoff();
        // Single-species runs keep the parameters in registers.
        let p0 = *self.table.pair(0, 0);
        let (mut energy, mut virial) = (0.0, 0.0);
        for &i in self.list.slab(s) {
            let i = i as usize;
            let pi = self.positions[i];
            let ti = if MIXED { self.types[i] as usize } else { 0 };
            let mut fi = [0.0; 3];
            for &j in self.list.partners(i) {
                let j = j as usize;
                let (d, r2) = separation(&pi, &self.positions[j], self.l, self.inv_l);
                if r2 >= rc2 {
                    continue;
                }
                let p = if MIXED { self.table.pair(ti, self.types[j] as usize) } else { &p0 };
                let inv_r2 = 1.0 / r2;
                let s2 = p.sigma2() * inv_r2;
                let s6 = s2 * s2 * s2;
                let s12 = s6 * s6;
                let mut e = p.eps4() * (s12 - s6) - p.energy_shift();
                let mut f_over_r = 6.0 * p.eps4() * (2.0 * s12 - s6) * inv_r2;
                if SHIFTED_FORCE {
                    let r = r2.sqrt();
                    e += (r - rc) * p.force_at_cutoff();
                    f_over_r -= p.force_at_cutoff() / r;
                }
                energy += e;
                virial += f_over_r * r2;
                let f = [f_over_r * d[0], f_over_r * d[1], f_over_r * d[2]];
                fi[0] += f[0];
                fi[1] += f[1];
                fi[2] += f[2];
                // SAFETY: j lies in slab s or a neighbouring slab, which no other slab of this
                // phase touches (slabs of a phase are three apart).
                let fj = unsafe { self.out.at(j) };
                fj[0] -= f[0];
                fj[1] -= f[1];
                fj[2] -= f[2];
            }
            // SAFETY: i lies in slab s.
            let f = unsafe { self.out.at(i) };
            f[0] += fi[0];
            f[1] += fi[1];
            f[2] += fi[2];
        }
        ForceSums { potential: energy, virial }
    }
}

/// All-pairs reference evaluation (O(N²), minimum image); for tests and tiny systems.
pub fn brute_force(positions: &[[f64; 3]], types: &[u8], box_length: f64, table: &PairTable) -> (Vec<[f64; 3]>, ForceSums) {
    let n = positions.len();
    let mut forces = vec![[0.0; 3]; n];
    let mut sums = ForceSums::default();
    for i in 0..n {
        for j in i + 1..n {
            let (d, r2) = separation(&positions[i], &positions[j], box_length, 1.0 / box_length);
            if r2 >= table.cutoff2() {
                continue;
            }
            let (e, f_over_r) = table.evaluate(types[i] as usize, types[j] as usize, r2);
            sums.potential += e;
            sums.virial += f_over_r * r2;
            for k in 0..3 {
                forces[i][k] += f_over_r * d[k];
                forces[j][k] -= f_over_r * d[k];
            }
        }
    }
    (forces, sums)
}
