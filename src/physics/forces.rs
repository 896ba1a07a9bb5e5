//! Lennard-Jones forces, potential energy and virial over the half neighbour list.

use super::geometry::{nearest_integer, separation};
use super::neighbours::NeighbourList;
use super::parallel::{ELEMENTWISE_TASK, SharedMut};
use super::potential::{PairTable, PotentialMode};
use rayon::prelude::*;

/// Sums of one force evaluation.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct ForceSums {
    /// Σ pair energies of the potential mode (no tail correction).
    pub potential: f64,
    /// Σ r_ij · f_ij over pairs.
    pub virial: f64,
    /// Σ of the energy shifts taken off the pairs inside the cutoff (zero for `Truncated`):
    /// `potential + shift_removed` is the truncated, unshifted pair energy.
    pub shift_removed: f64,
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
    forces
        .par_iter_mut()
        .with_min_len(ELEMENTWISE_TASK)
        .for_each(|f| *f = [0.0; 3]);
    let slabs = list.slabs();
    scratch.slab_sums.clear();
    scratch.slab_sums.resize(slabs, ForceSums::default());
    let mixed = table.types() > 1;
    let shifted_force = table.mode() == PotentialMode::ShiftedForce;
    let out = SharedMut(forces.as_mut_ptr());
    let ctx = Ctx {
        positions,
        types,
        l: box_length,
        inv_l: 1.0 / box_length,
        table,
        list,
        out,
    };
    let group = slabs.min(3);
    for phase in 0..group {
        scratch
            .slab_sums
            .par_chunks_mut(group)
            .enumerate()
            .for_each(|(k, chunk)| {
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
        total.shift_removed += s.shift_removed;
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

/// Partners handled per gather–compute–scatter block.
const BLOCK: usize = 64;

/// Per-block buffers: separations gathered, then F/r and energies computed in a loop the
/// compiler can vectorise, then scattered.
struct Block {
    dx: [f64; BLOCK],
    dy: [f64; BLOCK],
    dz: [f64; BLOCK],
    r2: [f64; BLOCK],
    eps4: [f64; BLOCK],
    sigma2: [f64; BLOCK],
    shift: [f64; BLOCK],
    fc: [f64; BLOCK],
    energy: [f64; BLOCK],
    f_over_r: [f64; BLOCK],
}

impl Ctx<'_> {
    /// One slab, with the widest vector instructions the processor has. Rust never fuses a
    /// multiply and an add on its own, so the AVX2 and baseline versions round identically:
    /// results do not depend on the processor either.
    #[inline(never)]
    fn slab<const SHIFTED_FORCE: bool, const MIXED: bool>(&self, s: usize) -> ForceSums {
        #[cfg(target_arch = "x86_64")]
        if std::arch::is_x86_feature_detected!("avx2") {
            // SAFETY: the processor supports AVX2, checked just above.
            return unsafe { self.slab_avx2::<SHIFTED_FORCE, MIXED>(s) };
        }
        self.slab_body::<SHIFTED_FORCE, MIXED>(s)
    }

    #[cfg(target_arch = "x86_64")]
    #[target_feature(enable = "avx2")]
    unsafe fn slab_avx2<const SHIFTED_FORCE: bool, const MIXED: bool>(&self, s: usize) -> ForceSums {
        self.slab_body::<SHIFTED_FORCE, MIXED>(s)
    }

    #[inline(always)]
    fn slab_body<const SHIFTED_FORCE: bool, const MIXED: bool>(&self, s: usize) -> ForceSums {
        let rc2 = self.table.cutoff2();
        let rc = self.table.cutoff();
        let (l, inv_l) = (self.l, self.inv_l);
        let p0 = *self.table.pair(0, 0);
        let mut b = Block {
            dx: [0.0; BLOCK],
            dy: [0.0; BLOCK],
            dz: [0.0; BLOCK],
            r2: [0.0; BLOCK],
            eps4: [p0.eps4(); BLOCK],
            sigma2: [p0.sigma2(); BLOCK],
            shift: [p0.energy_shift(); BLOCK],
            fc: [p0.force_at_cutoff(); BLOCK],
            energy: [0.0; BLOCK],
            f_over_r: [0.0; BLOCK],
        };
        let (mut energy, mut virial, mut shift_removed) = (0.0, 0.0, 0.0);
        for &i in self.list.slab(s) {
            let i = i as usize;
            let pi = self.positions[i];
            let ti = if MIXED { self.types[i] as usize } else { 0 };
            let mut fi = [0.0; 3];
            for block in self.list.partners(i).chunks(BLOCK) {
                let m = block.len();
                // Gather: minimum-image separations (and pair parameters for mixtures).
                for (k, &j) in block.iter().enumerate() {
                    let pj = self.positions[j as usize];
                    b.dx[k] = pi[0] - pj[0];
                    b.dy[k] = pi[1] - pj[1];
                    b.dz[k] = pi[2] - pj[2];
                    if MIXED {
                        let p = self.table.pair(ti, self.types[j as usize] as usize);
                        b.eps4[k] = p.eps4();
                        b.sigma2[k] = p.sigma2();
                        b.shift[k] = p.energy_shift();
                        b.fc[k] = p.force_at_cutoff();
                    }
                }
                // Compute: branch-free over the block; pairs beyond r_c contribute zero.
                for k in 0..m {
                    // Minimum image, here where the compiler can vectorise it.
                    let dx = b.dx[k] - l * nearest_integer(b.dx[k] * inv_l);
                    let dy = b.dy[k] - l * nearest_integer(b.dy[k] * inv_l);
                    let dz = b.dz[k] - l * nearest_integer(b.dz[k] * inv_l);
                    b.dx[k] = dx;
                    b.dy[k] = dy;
                    b.dz[k] = dz;
                    let r2 = dx * dx + dy * dy + dz * dz;
                    b.r2[k] = r2;
                    let inside = r2 < rc2;
                    let r2s = if inside { r2 } else { 1.0 };
                    let inv_r2 = 1.0 / r2s;
                    let s2 = b.sigma2[k] * inv_r2;
                    let s6 = s2 * s2 * s2;
                    let s12 = s6 * s6;
                    let mut e = b.eps4[k] * (s12 - s6) - b.shift[k];
                    let mut f = 6.0 * b.eps4[k] * (2.0 * s12 - s6) * inv_r2;
                    if SHIFTED_FORCE {
                        let r = r2s.sqrt();
                        e += (r - rc) * b.fc[k];
                        f -= b.fc[k] / r;
                    }
                    b.energy[k] = if inside { e } else { 0.0 };
                    b.f_over_r[k] = if inside { f } else { 0.0 };
                }
                // Sums in a fixed order: the same rounding on every run.
                for k in 0..m {
                    energy += b.energy[k];
                    virial += b.f_over_r[k] * b.r2[k];
                    shift_removed += if b.r2[k] < rc2 { b.shift[k] } else { 0.0 };
                }
                // Scatter: Newton's third law onto the partners.
                for (k, &j) in block.iter().enumerate() {
                    let fr = b.f_over_r[k];
                    let f = [fr * b.dx[k], fr * b.dy[k], fr * b.dz[k]];
                    fi[0] += f[0];
                    fi[1] += f[1];
                    fi[2] += f[2];
                    // SAFETY: j lies in slab s or a neighbouring slab, which no other slab of
                    // this phase touches (slabs of a phase are three apart).
                    let fj = unsafe { self.out.at(j as usize) };
                    fj[0] -= f[0];
                    fj[1] -= f[1];
                    fj[2] -= f[2];
                }
            }
            // SAFETY: i lies in slab s.
            let f = unsafe { self.out.at(i) };
            f[0] += fi[0];
            f[1] += fi[1];
            f[2] += fi[2];
        }
        ForceSums {
            potential: energy,
            virial,
            shift_removed,
        }
    }
}

/// All-pairs reference evaluation (O(N²), minimum image); for tests and tiny systems.
pub fn brute_force(
    positions: &[[f64; 3]],
    types: &[u8],
    box_length: f64,
    table: &PairTable,
) -> (Vec<[f64; 3]>, ForceSums) {
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
            sums.shift_removed += table.pair(types[i] as usize, types[j] as usize).energy_shift();
            for k in 0..3 {
                forces[i][k] += f_over_r * d[k];
                forces[j][k] -= f_over_r * d[k];
            }
        }
    }
    (forces, sums)
}
