//! Neighbour search: a cell list feeding a Verlet list with a skin, plus the slab schedule that
//! lets the force loop run in parallel without races and without thread-dependent rounding.
//!
//! The Verlet list is a *half* list: each pair within r_c + skin is stored once, with the atom
//! that owns it. Atoms are also sorted into slabs along z, each at least r_c + skin thick, so a
//! pair only touches its owner's slab and the two next to it. The force loop processes slabs
//! s ≡ 0, 1, 2 (mod 3) in three phases: within a phase no two slabs write the same atom, and the
//! order of additions into every atom is fixed by geometry alone, never by the thread count.
//!
//! Memory is O(N) at any density: cells are at least r_c + skin wide, and in a dilute box they
//! grow wider still so that there are at most [`MAX_CELLS_PER_ATOM`] cells per atom (the grid
//! costs 4 bytes a cell). The search stays exact: a cell wider than the reach only means more
//! distances tested. The slab schedule does not depend on the cell grid (slabs are cut from the
//! box edge and the reach alone), and there are at most L / (r_c + skin) slabs of a few bytes each.

use super::geometry::{fold, separation};
use super::parallel::{ELEMENTWISE_TASK, SharedMut};
use rayon::prelude::*;

/// Most cells per atom in the cell grid. Where cells r_c + skin wide would outnumber the atoms
/// more than twice, the cells are made wider. A cell costs 4 bytes, so the grid stays under 8
/// bytes an atom; twice rather than once leaves the grid (and so the run, bit for bit) as it was
/// for vapours down to ρ (r_c + skin)³ = 1/2, e.g. ρ* ≈ 0.023 at r_c + skin = 2.8 σ.
pub const MAX_CELLS_PER_ATOM: usize = 2;

/// Atoms per storage chunk of the list; each chunk is built by one task, in one pass.
const CHUNK_SHIFT: usize = 10;
const CHUNK: usize = 1 << CHUNK_SHIFT;

/// Half neighbour list with its build positions and slab schedule.
#[derive(Clone, Debug, Default)]
pub struct NeighbourList {
    reach: f64,
    skin: f64,
    /// Partner lists of atoms [k·CHUNK, (k+1)·CHUNK), concatenated.
    chunks: Vec<Vec<u32>>,
    /// End of atom i's partners within its chunk's list.
    ends: Vec<u32>,
    /// Positions at the last build, folded into the box and rounded to single precision. The
    /// whole list is a function of these alone, so a checkpoint that stores them rebuilds the
    /// identical list; they also serve the half-skin rebuild rule.
    reference: Vec<[f32; 3]>,
    slab_starts: Vec<u32>,
    slab_atoms: Vec<u32>,
    /// Cell-sort scratch kept between builds: atoms by cell, and their folded positions in
    /// single precision (the list search only needs to be conservative, see `build`).
    cell_starts: Vec<u32>,
    cell_atoms: Vec<u32>,
    cell_pos: CellPositions,
    /// Cells per box edge at the last build (0 when the all-pairs search was used).
    cells: usize,
    box_length: f64,
    builds: u64,
}

/// Folded positions in cell order, single precision, one array per axis (so the distance
/// test over a cell vectorises).
#[derive(Clone, Debug, Default)]
struct CellPositions {
    x: Vec<f32>,
    y: Vec<f32>,
    z: Vec<f32>,
}

/// The 13 forward cell offsets of the half shell (the other 13 are their negatives).
const HALF_SHELL: [[i32; 3]; 13] = [
    [1, 0, 0],
    [1, 1, 0],
    [1, -1, 0],
    [0, 1, 0],
    [1, 0, 1],
    [1, 1, 1],
    [1, -1, 1],
    [0, 1, 1],
    [1, 0, -1],
    [1, 1, -1],
    [1, -1, -1],
    [0, 1, -1],
    [0, 0, 1],
];

/// Bin of a folded coordinate among `n` equal bins of [0, l).
#[inline]
fn bin(x: f32, l: f64, n: usize) -> usize {
    ((x as f64 / l * n as f64) as isize).clamp(0, n as isize - 1) as usize
}

/// Cell of a folded position.
#[inline]
fn cell_of(p: &[f32; 3], l: f64, cells: usize) -> usize {
    (bin(p[0], l, cells) * cells + bin(p[1], l, cells)) * cells + bin(p[2], l, cells)
}

/// Cells per box edge for `atoms` atoms in a box of edge `l`: as many as fit at least `reach`
/// wide, but no more than [`MAX_CELLS_PER_ATOM`] cells per atom in all (cells may be wider than
/// the reach, never narrower). Below 3 the list is built by the all-pairs search.
pub fn cells_per_edge(l: f64, reach: f64, atoms: usize) -> usize {
    let fit = (l / reach).floor();
    // `as` saturates (and maps NaN to 0); the cap below bounds the result anyway.
    let fit = if fit >= 1.0 { fit.min(1e9) as usize } else { 0 };
    let most = atoms.saturating_mul(MAX_CELLS_PER_ATOM);
    let mut cap = (most as f64).cbrt().floor() as usize;
    while (cap + 1).saturating_pow(3) <= most {
        cap += 1;
    }
    while cap > 0 && cap.saturating_pow(3) > most {
        cap -= 1;
    }
    fit.min(cap)
}

/// Extra reach that covers single-precision rounding of coordinates up to the box edge.
#[inline]
fn margin(l: f64) -> f64 {
    1e-4 + l * 1e-6
}

/// The first atom farther from its list reference position than a list rebuilt from the
/// references allows (half the skin, plus the search margin for single-precision rounding), with
/// its distance; `None` when every atom is within. A state whose atoms all pass was saved by a
/// run that kept its list current, so the list rebuilt from the references holds every pair
/// within the cutoff. Positions and references must have the same length.
pub fn first_beyond_half_skin(
    positions: &[[f64; 3]],
    reference: &[[f32; 3]],
    box_length: f64,
    skin: f64,
) -> Option<(usize, f64)> {
    let limit = 0.5 * skin + margin(box_length);
    let inv_l = 1.0 / box_length;
    positions
        .iter()
        .zip(reference)
        .enumerate()
        .find_map(|(i, (p, r))| {
            let r = [r[0] as f64, r[1] as f64, r[2] as f64];
            let d = separation(p, &r, box_length, inv_l).1.sqrt();
            (d.is_nan() || d > limit).then_some((i, d))
        })
}

impl NeighbourList {
    /// An empty list for the given cutoff and skin; call [`NeighbourList::build`] before use.
    pub fn new(cutoff: f64, skin: f64) -> Self {
        NeighbourList {
            reach: cutoff + skin,
            skin,
            ..Default::default()
        }
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

    /// Folded single-precision positions at the last build.
    pub fn reference(&self) -> &[[f32; 3]] {
        &self.reference
    }

    /// Number of stored pairs.
    pub fn pairs(&self) -> usize {
        self.chunks.iter().map(|c| c.len()).sum()
    }

    /// Partners owned by atom `i`. Every pair closer than r_c + skin at the last build is owned
    /// by exactly one of its two atoms; a few pairs slightly beyond may be listed too.
    #[inline(always)]
    pub fn partners(&self, i: usize) -> &[u32] {
        let lo = if i & (CHUNK - 1) == 0 {
            0
        } else {
            self.ends[i - 1] as usize
        };
        &self.chunks[i >> CHUNK_SHIFT][lo..self.ends[i] as usize]
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
        4 * (self.chunks.iter().map(|c| c.capacity()).sum::<usize>()
            + self.ends.capacity()
            + self.slab_starts.capacity()
            + self.slab_atoms.capacity()
            + self.cell_starts.capacity()
            + self.cell_atoms.capacity())
            + 4 * (self.cell_pos.x.capacity() + self.cell_pos.y.capacity() + self.cell_pos.z.capacity())
            + 12 * self.reference.capacity()
            + self.chunks.capacity() * std::mem::size_of::<Vec<u32>>()
    }

    /// Cells per box edge of the grid at the last build (0 if all pairs were searched).
    pub fn cells_per_edge(&self) -> usize {
        self.cells
    }

    /// Whether some atom moved more than half the skin since the last build.
    pub fn needs_rebuild(&self, positions: &[[f64; 3]]) -> bool {
        if self.reference.len() != positions.len() {
            return true;
        }
        let limit = 0.25 * self.skin * self.skin;
        let (l, inv_l) = (self.box_length, 1.0 / self.box_length);
        positions
            .par_iter()
            .zip(self.reference.par_iter())
            .with_min_len(ELEMENTWISE_TASK)
            .any(|(p, r)| {
                let r = [r[0] as f64, r[1] as f64, r[2] as f64];
                // Not finite (a blown-up run) also counts as moved.
                let d2 = separation(p, &r, l, inv_l).1;
                d2.is_nan() || d2 > limit
            })
    }

    /// Rebuilds the list from `positions` in a periodic cube of edge `box_length`.
    ///
    /// With three or more cells per edge the search runs over a cell list in single precision
    /// with a margin of 1e-4 σ on the reach, so it may list a pair a hair beyond r_c + skin but
    /// never misses one within it; the force loop tests r_c in double precision. The result
    /// depends only on the positions, never on the thread count.
    pub fn build(&mut self, positions: &[[f64; 3]], box_length: f64) {
        let l = box_length;
        self.reference.clear();
        self.reference.par_extend(
            positions
                .par_iter()
                .with_min_len(ELEMENTWISE_TASK)
                .map(|p| [fold(p[0], l) as f32, fold(p[1], l) as f32, fold(p[2], l) as f32]),
        );
        self.build_from_reference(l);
    }

    /// Rebuilds the list from saved folded reference positions (see [`NeighbourList::reference`]).
    pub fn build_from(&mut self, reference: &[[f32; 3]], box_length: f64) {
        self.reference.clear();
        self.reference.extend_from_slice(reference);
        self.build_from_reference(box_length);
    }

    fn build_from_reference(&mut self, l: f64) {
        let n = self.reference.len();
        self.box_length = l;
        self.builds += 1;
        let cells = cells_per_edge(l, self.reach, n);
        if cells >= 3 {
            self.sort_into_cells(l, cells);
            self.cells = cells;
        } else {
            self.cells = 0;
        }
        self.ends.clear();
        self.ends.resize(n, 0);
        let chunk_count = n.div_ceil(CHUNK);
        self.chunks.resize_with(chunk_count, Vec::new);
        self.chunks.truncate(chunk_count);
        let ends = SharedMut(self.ends.as_mut_ptr());
        let positions = &self.reference;
        let grid = Grid {
            l,
            cells,
            reach: self.reach,
            starts: &self.cell_starts,
            atoms: &self.cell_atoms,
            pos: &self.cell_pos,
        };
        // Expected partners per atom of a uniform fluid, (2/3)π ρ reach³: the first build
        // reserves near the final size instead of growing step by step.
        let uniform = 2.0 / 3.0 * std::f64::consts::PI * n as f64 / (l * l * l) * self.reach.powi(3);
        let per_atom = uniform.ceil() as usize + 1;
        self.chunks.par_iter_mut().enumerate().for_each(|(k, list)| {
            let atoms = ((k + 1) * CHUNK).min(n) - k * CHUNK;
            let expected = if list.is_empty() {
                atoms * per_atom
            } else {
                list.len() + list.len() / 32 + 32
            };
            list.clear();
            if list.capacity() < expected {
                list.reserve_exact(expected);
            }
            for i in k * CHUNK..((k + 1) * CHUNK).min(n) {
                if cells >= 3 {
                    grid.partners(positions, i, list);
                } else {
                    brute_partners(positions, l, grid.reach, i, list);
                }
                // SAFETY: chunk k alone writes the ends of its own atoms.
                unsafe { *ends.at(i) = list.len() as u32 };
            }
            // Give back capacity beyond 8% of what this build needed (memory per atom is tight).
            if list.capacity() > list.len() + list.len() / 12 + 64 {
                list.shrink_to(list.len() + list.len() / 32 + 32);
            }
        });
        self.build_slabs(l);
    }

    /// Counting sort of atom indices by cell (stable: ascending within each cell), with the
    /// folded positions stored alongside in cell order.
    fn sort_into_cells(&mut self, l: f64, cells: usize) {
        let pos = &self.reference;
        counting_sort(
            pos.len(),
            cells * cells * cells,
            |i| cell_of(&pos[i], l, cells),
            &mut self.cell_starts,
            &mut self.cell_atoms,
        );
        let cp = &mut self.cell_pos;
        for v in [&mut cp.x, &mut cp.y, &mut cp.z] {
            v.clear();
            // Exactly one slot an atom (pushing alone would double up to 2×).
            v.reserve_exact(pos.len());
        }
        for &j in &self.cell_atoms {
            let p = pos[j as usize];
            cp.x.push(p[0]);
            cp.y.push(p[1]);
            cp.z.push(p[2]);
        }
    }

    fn build_slabs(&mut self, l: f64) {
        // Slabs at least the reach plus twice the search margin thick: a pair listed a hair
        // beyond the reach (the search is conservative) must still join adjacent slabs only,
        // or two slabs of one phase could write the same atom.
        let fit = (l / (self.reach + 2.0 * margin(l))).floor() as usize;
        let slabs = if fit >= 3 { fit - fit % 3 } else { 1 };
        let pos = &self.reference;
        counting_sort(
            pos.len(),
            slabs,
            |i| bin(pos[i][2], l, slabs),
            &mut self.slab_starts,
            &mut self.slab_atoms,
        );
    }
}

/// Appends the partners owned by atom i, all-pairs search (boxes under three cells per edge).
fn brute_partners(pos: &[[f32; 3]], l: f64, reach: f64, i: usize, list: &mut Vec<u32>) {
    let reach = reach + margin(l);
    let reach2 = reach * reach;
    let inv_l = 1.0 / l;
    let wide = |p: &[f32; 3]| [p[0] as f64, p[1] as f64, p[2] as f64];
    let pi = wide(&pos[i]);
    for (j, pj) in pos.iter().enumerate().skip(i + 1) {
        if separation(&pi, &wide(pj), l, inv_l).1 < reach2 {
            push_tight(list, j as u32);
        }
    }
}

/// The cell list as the search sees it.
struct Grid<'a> {
    l: f64,
    cells: usize,
    reach: f64,
    starts: &'a [u32],
    atoms: &'a [u32],
    pos: &'a CellPositions,
}

impl Grid<'_> {
    /// Appends the partners owned by atom i: later atoms of its own cell, then the atoms of the
    /// 13 forward cells of the half shell, each cell's periodic shift applied once.
    /// (Measured: an AVX2 build of this search is slower than the baseline one, so there is
    /// no dispatch here, unlike the force kernel.)
    #[inline]
    fn partners(&self, pos: &[[f32; 3]], i: usize, list: &mut Vec<u32>) {
        let reach = self.reach + margin(self.l);
        let reach2 = (reach * reach) as f32;
        let n = self.cells;
        let here = [
            bin(pos[i][0], self.l, n),
            bin(pos[i][1], self.l, n),
            bin(pos[i][2], self.l, n),
        ];
        let own = (here[0] * n + here[1]) * n + here[2];
        let (lo, hi) = (self.starts[own] as usize, self.starts[own + 1] as usize);
        let slot = lo
            + self.atoms[lo..hi]
                .iter()
                .position(|&a| a as usize == i)
                .expect("atom is in its own cell");
        let pi = [self.pos.x[slot], self.pos.y[slot], self.pos.z[slot]];
        self.scan(pi, slot + 1, hi, reach2, list);
        let (nc, lf) = (n as i32, self.l as f32);
        for off in &HALF_SHELL {
            // The neighbour cell and, across a box face, the shift of its image by one box edge
            // (computed here rather than stored per cell: a table would cost 208 bytes a cell).
            let mut shift = [0f32; 3];
            let mut idx = [0usize; 3];
            for a in 0..3 {
                let x = here[a] as i32 + off[a];
                shift[a] = if x >= nc {
                    lf
                } else if x < 0 {
                    -lf
                } else {
                    0.0
                };
                idx[a] = x.rem_euclid(nc) as usize;
            }
            let c = (idx[0] * n + idx[1]) * n + idx[2];
            let q = [pi[0] - shift[0], pi[1] - shift[1], pi[2] - shift[2]];
            self.scan(
                q,
                self.starts[c] as usize,
                self.starts[c + 1] as usize,
                reach2,
                list,
            );
        }
    }

    /// Appends the atoms in cell slots lo..hi that lie within √reach2 of `p`: distances for the
    /// whole cell first (a loop the compiler vectorises), then a branch-free compaction.
    #[inline(always)]
    fn scan(&self, p: [f32; 3], lo: usize, hi: usize, reach2: f32, list: &mut Vec<u32>) {
        const MAX: usize = 64;
        let mut start = lo;
        while start < hi {
            let end = (start + MAX).min(hi);
            let m = end - start;
            let (xs, ys, zs) = (
                &self.pos.x[start..end],
                &self.pos.y[start..end],
                &self.pos.z[start..end],
            );
            let mut inside = [0u32; MAX];
            for k in 0..m {
                let (dx, dy, dz) = (p[0] - xs[k], p[1] - ys[k], p[2] - zs[k]);
                inside[k] = (dx * dx + dy * dy + dz * dz < reach2) as u32;
            }
            if list.capacity() - list.len() < m {
                list.reserve_exact((list.len() / 8).max(m) + 64);
            }
            let atoms = &self.atoms[start..end];
            let base = list.len();
            // SAFETY: capacity for m more entries was reserved above; every slot written below
            // base + m, and the length only covers slots that were written.
            unsafe {
                let out = list.as_mut_ptr().add(base);
                let mut n = 0usize;
                for k in 0..m {
                    *out.add(n) = atoms[k];
                    n += inside[k] as usize;
                }
                list.set_len(base + n);
            }
            start = end;
        }
    }
}

/// Pushes with growth of one eighth instead of doubling, to keep the list near its true size.
#[inline(always)]
fn push_tight(list: &mut Vec<u32>, a: u32) {
    if list.len() == list.capacity() {
        list.reserve_exact(list.len() / 8 + 64);
    }
    list.push(a);
}

/// Stable counting sort of 0..n into `bins` by `key`, written as CSR (`starts`, `items`).
fn counting_sort<K: Fn(usize) -> usize>(
    n: usize,
    bins: usize,
    key: K,
    starts: &mut Vec<u32>,
    items: &mut Vec<u32>,
) {
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
}
