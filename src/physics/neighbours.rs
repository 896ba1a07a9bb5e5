//! Neighbour search: a cell list feeding a Verlet list with a skin, plus the slab schedule that
//! lets the force loop run in parallel without races and without thread-dependent rounding.
//!
//! The Verlet list is a *half* list: each pair within r_c + skin is stored once, with the atom
//! that owns it. Atoms are also sorted into slabs along z, each at least r_c + skin thick, so a
//! pair only touches its owner's slab and the two next to it. The force loop processes slabs
//! s ≡ 0, 1, 2 (mod 3) in three phases: within a phase no two slabs write the same atom, and the
//! order of additions into every atom is fixed by geometry alone, never by the thread count.

use super::parallel::SharedMut;
use rayon::prelude::*;

/// Half neighbour list with its build positions and slab schedule.
#[derive(Clone, Debug, Default)]
pub struct NeighbourList {
    reach: f64,
    skin: f64,
    /// `list[starts[i]..starts[i+1]]` are the partners owned by atom i.
    starts: Vec<u32>,
    list: Vec<u32>,
    /// Positions at the last build, for the half-skin rebuild rule.
    reference: Vec<[f64; 3]>,
    slab_starts: Vec<u32>,
    slab_atoms: Vec<u32>,
    /// Cell-sort scratch, kept between builds.
    cell_starts: Vec<u32>,
    cell_atoms: Vec<u32>,
    builds: u64,
}

/// The 13 forward cell offsets of the half shell (the other 13 are their negatives).
const HALF_SHELL: [[i32; 3]; 13] = [
    [1, 0, 0], [1, 1, 0], [1, -1, 0], [0, 1, 0], [1, 0, 1], [1, 1, 1], [1, -1, 1],
    [0, 1, 1], [1, 0, -1], [1, 1, -1], [1, -1, -1], [0, 1, -1], [0, 0, 1],
];

/// Nearest integer for |t| < 2⁵¹ without a libm call (round-half-even via the FPU).
#[inline(always)]
pub fn nearest_integer(t: f64) -> f64 {
    const MAGIC: f64 = 6_755_399_441_055_744.0; // 1.5 · 2⁵²
    (t + MAGIC) - MAGIC
}

/// Minimum-image squared distance and separation vector r_i − r_j.
#[inline(always)]
pub fn separation(a: &[f64; 3], b: &[f64; 3], l: f64, inv_l: f64) -> ([f64; 3], f64) {
    let mut d = [a[0] - b[0], a[1] - b[1], a[2] - b[2]];
    for x in d.iter_mut() {
        *x -= l * nearest_integer(*x * inv_l);
    }
    (d, d[0] * d[0] + d[1] * d[1] + d[2] * d[2])
}

#[inline]
fn cell_index(x: f64, l: f64, n: usize) -> usize {
    let w = x - l * (x / l).floor();
    ((w / l * n as f64) as isize).clamp(0, n as isize - 1) as usize
}

impl NeighbourList {
    /// An empty list for the given cutoff and skin; call [`NeighbourList::build`] before use.
    pub fn new(cutoff: f64, skin: f64) -> Self {
        NeighbourList { reach: cutoff + skin, skin, ..Default::default() }
    }

    /// r_c + skin.
    pub fn reach(&self) -> f64 {
        self.reach
    }

    /// Skin width.
    pub fn skin(&self) -> f64 {
        self.skin
    }

    /// How many times the list has been built.
    pub fn builds(&self) -> u64 {
        self.builds
    }

    /// Sets the build count (restoring a checkpoint).
    pub fn set_builds(&mut self, builds: u64) {
        self.builds = builds;
    }

    /// Positions at the last build.
    pub fn reference(&self) -> &[[f64; 3]] {
        &self.reference
    }

    /// Number of stored pairs.
    pub fn pairs(&self) -> usize {
        self.list.len()
    }

    /// Partners owned by atom `i`.
    #[inline(always)]
    pub fn partners(&self, i: usize) -> &[u32] {
        &self.list[self.starts[i] as usize..self.starts[i + 1] as usize]
    }

    /// Number of slabs in the force schedule (1, or a multiple of 3).
    pub fn slabs(&self) -> usize {
        self.slab_starts.len().saturating_sub(1)
    }

    /// Atoms whose pairs slab `s` processes, in ascending order.
    #[inline]
    pub fn slab(&self, s: usize) -> &[u32] {
        &self.slab_atoms[self.slab_starts[s] as usize..self.slab_starts[s + 1] as usize]
    }

    /// Bytes held by the list and its scratch (for memory accounting).
    pub fn heap_bytes(&self) -> usize {
        4 * (self.starts.capacity() + self.list.capacity() + self.slab_starts.capacity()
            + self.slab_atoms.capacity() + self.cell_starts.capacity() + self.cell_atoms.capacity())
            + 24 * self.reference.capacity()
    }

    /// Whether some atom moved more than half the skin since the last build.
    pub fn needs_rebuild(&self, positions: &[[f64; 3]]) -> bool {
        if self.reference.len() != positions.len() {
            return true;
        }
        let limit = 0.25 * self.skin * self.skin;
        positions.par_iter().zip(self.reference.par_iter()).with_min_len(1024).any(|(p, r)| {
            let d = [p[0] - r[0], p[1] - r[1], p[2] - r[2]];
            d[0] * d[0] + d[1] * d[1] + d[2] * d[2] > limit
        })
    }

    /// Rebuilds the list from `positions` in a periodic cube of edge `box_length`.
    ///
    /// The result depends only on the positions, never on the thread count. All positions must be
    /// finite; the caller checks that first.
    pub fn build(&mut self, positions: &[[f64; 3]], box_length: f64) {
        let n = positions.len();
        let l = box_length;
        self.reference.clear();
        self.reference.extend_from_slice(positions);
        self.builds += 1;
        let cells = (l / self.reach).floor() as usize;
        let reach2 = self.reach * self.reach;
        let inv_l = 1.0 / l;

        // Pass 1: count partners per atom; pass 2: fill. Two passes keep the list exactly sized.
        self.starts.clear();
        self.starts.resize(n + 1, 0);
        if cells >= 3 {
            self.sort_into_cells(positions, l, cells);
        }
        let this = &*self;
        let counts: Vec<u32> = (0..n)
            .into_par_iter()
            .with_min_len(256)
            .map(|i| {
                let mut c = 0u32;
                this.for_each_partner(positions, l, inv_l, reach2, cells, i, |_| c += 1);
                c
            })
            .collect();
        let mut total = 0u32;
        for i in 0..n {
            self.starts[i] = total;
            total += counts[i];
        }
        self.starts[n] = total;
        drop(counts);
        let total = total as usize;
        if self.list.capacity() < total {
            self.list.reserve_exact(total - self.list.len());
        }
        self.list.resize(total, 0);
        let out = SharedMut(self.list.as_mut_ptr());
        let this = &*self;
        (0..n).into_par_iter().with_min_len(256).for_each(|i| {
            let mut k = this.starts[i] as usize;
            this.for_each_partner(positions, l, inv_l, reach2, cells, i, |j| {
                // SAFETY: atom i alone writes its own range starts[i]..starts[i+1].
                unsafe { *out.at(k) = j };
                k += 1;
            });
        });
        self.build_slabs(positions, l);
    }

    /// Calls `f(j)` for every partner j owned by atom i, in a fixed order.
    #[inline]
    #[allow(clippy::too_many_arguments)]
    fn for_each_partner<F: FnMut(u32)>(
        &self,
        pos: &[[f64; 3]],
        l: f64,
        inv_l: f64,
        reach2: f64,
        cells: usize,
        i: usize,
        mut f: F,
    ) {
        let pi = &pos[i];
        if cells < 3 {
            for (j, pj) in pos.iter().enumerate().skip(i + 1) {
                if separation(pi, pj, l, inv_l).1 < reach2 {
                    f(j as u32);
                }
            }
            return;
        }
        let c = [cell_index(pi[0], l, cells), cell_index(pi[1], l, cells), cell_index(pi[2], l, cells)];
        let own = (c[0] * cells + c[1]) * cells + c[2];
        // Same cell: partners listed after i (cells keep ascending atom order).
        for &j in self.cell(own) {
            if j as usize > i && separation(pi, &pos[j as usize], l, inv_l).1 < reach2 {
                f(j);
            }
        }
        let nc = cells as i32;
        for off in &HALF_SHELL {
            let x = (c[0] as i32 + off[0]).rem_euclid(nc) as usize;
            let y = (c[1] as i32 + off[1]).rem_euclid(nc) as usize;
            let z = (c[2] as i32 + off[2]).rem_euclid(nc) as usize;
            for &j in self.cell((x * cells + y) * cells + z) {
                if separation(pi, &pos[j as usize], l, inv_l).1 < reach2 {
                    f(j);
                }
            }
        }
    }

    #[inline]
    fn cell(&self, c: usize) -> &[u32] {
        &self.cell_atoms[self.cell_starts[c] as usize..self.cell_starts[c + 1] as usize]
    }

    /// Counting sort of atom indices by cell (stable: ascending within each cell).
    fn sort_into_cells(&mut self, pos: &[[f64; 3]], l: f64, cells: usize) {
        let cell_of = |p: &[f64; 3]| {
            (cell_index(p[0], l, cells) * cells + cell_index(p[1], l, cells)) * cells + cell_index(p[2], l, cells)
        };
        counting_sort(pos.len(), cells * cells * cells, |i| cell_of(&pos[i]), &mut self.cell_starts, &mut self.cell_atoms);
    }

    fn build_slabs(&mut self, pos: &[[f64; 3]], l: f64) {
        let fit = (l / self.reach).floor() as usize;
        let slabs = if fit >= 3 { fit - fit % 3 } else { 1 };
        counting_sort(pos.len(), slabs, |i| cell_index(pos[i][2], l, slabs), &mut self.slab_starts, &mut self.slab_atoms);
    }
}

/// Stable counting sort of 0..n into `bins` by `key`, written as CSR (`starts`, `items`).
fn counting_sort<K: Fn(usize) -> usize>(n: usize, bins: usize, key: K, starts: &mut Vec<u32>, items: &mut Vec<u32>) {
    starts.clear();
    starts.resize(bins + 1, 0);
    for i in 0..n {
        starts[key(i) + 1] += 1;
    }
    for b in 0..bins {
        starts[b + 1] += starts[b];
    }
    items.clear();
    items.resize(n, 0);
    // Place using a moving cursor per bin; starts[b] is advanced then restored from starts[b+1].
    for i in 0..n {
        let b = key(i);
        items[starts[b] as usize] = i as u32;
        starts[b] += 1;
    }
    for b in (1..=bins).rev() {
        starts[b] = starts[b - 1];
    }
    starts[0] = 0;
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn counting_sort_is_stable_csr() {
        let keys = [2usize, 0, 1, 2, 0];
        let (mut s, mut it) = (Vec::new(), Vec::new());
        counting_sort(5, 3, |i| keys[i], &mut s, &mut it);
        assert_eq!(s, vec![0, 2, 3, 5]);
        assert_eq!(it, vec![1, 4, 2, 0, 3]);
    }

    #[test]
    fn nearest_integer_rounds() {
        for &(t, r) in &[(0.4, 0.0), (0.6, 1.0), (-0.6, -1.0), (-2.4, -2.0), (7.51, 8.0)] {
            assert_eq!(nearest_integer(t), r);
        }
    }
}
