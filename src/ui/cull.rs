//! Occlusion culling for the 3D view.
//!
//! Software OpenGL spends most of its time per primitive, and in a dense liquid seen from
//! outside most atoms are hidden behind the surface layers. The sphere shader draws each atom
//! as a disc at the depth of its centre, nearest first with a depth test, so a pixel shows the
//! nearest disc that covers it. This pass works out the same thing on the CPU, one bit per
//! pixel: atoms are taken nearest first; an atom is kept if its disc covers a pixel that no
//! nearer disc has covered, and then marks its pixels as covered. Only the kept atoms are sent
//! to OpenGL, which draws the same picture from them.
//!
//! Pixel edges are treated with a margin so rounding can only keep an atom too many, never
//! drop a visible one: an atom counts as visible if any pixel within `MARGIN_PX` outside its
//! disc is still open, and it covers only the pixels at least `MARGIN_PX` inside its disc.
//! Atoms wholly off screen or behind the camera are dropped. Buffers are kept between frames,
//! so steady state allocates nothing.

/// One atom as seen by the camera.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Projected {
    /// Screen position of the centre in pixels (y down; pixel `i` spans `i..i+1`).
    pub x: f32,
    pub y: f32,
    /// Radius of the disc on screen in pixels.
    pub r: f32,
    /// Distance of the centre in front of the camera, world units (smaller is nearer; may be
    /// negative for orthographic views).
    pub depth: f32,
}

/// Safety margin at disc edges, in pixels.
pub const MARGIN_PX: f32 = 0.1;

/// Rows per coverage tile; a tile is one 64-pixel word wide.
const TILE_ROWS: usize = 8;

/// The culling pass with its reusable buffers.
#[derive(Debug, Default)]
pub struct Culler {
    cover: Coverage,
    /// Depth key (high half) and slot in `discs` (low half) of the atoms on screen; sorted
    /// nearest first in `run`.
    order: Vec<u64>,
    /// Screen disc and atom index of each atom on screen.
    discs: Vec<(Projected, u32)>,
}

impl Culler {
    /// A culler with empty buffers.
    pub fn new() -> Self {
        Self::default()
    }

    /// Calls `keep(i)` for every atom `i < n` that shows at least one pixel of a
    /// `width`×`height` pixel view, nearest first (smallest `depth` first). `project(i)` gives
    /// the atom on screen, or `None` if it is not drawn (behind the camera, outside a slab).
    /// Returns how many atoms `project` placed (on screen or not).
    pub fn run(
        &mut self,
        n: usize,
        width: usize,
        height: usize,
        project: impl Fn(usize) -> Option<Projected>,
        mut keep: impl FnMut(usize),
    ) -> usize {
        let (w, h) = (width.max(1), height.max(1));
        self.cover.reset(w, h);
        self.order.clear();
        self.discs.clear();
        let (wf, hf) = (w as f32, h as f32);
        let mut placed = 0;
        for i in 0..n {
            let Some(p) = project(i) else { continue };
            placed += 1;
            if p.depth.is_finite()
                && p.r > 0.0
                && p.x + p.r >= 0.0
                && p.x - p.r <= wf
                && p.y + p.r >= 0.0
                && p.y - p.r <= hf
            {
                self.order
                    .push((order_key(p.depth) as u64) << 32 | self.discs.len() as u64);
                self.discs.push((p, i as u32));
            }
        }
        self.order.sort_unstable();
        for &key in &self.order {
            let (p, atom) = self.discs[key as u32 as usize];
            if self.cover.sweep(&p) {
                keep(atom as usize);
            }
        }
        placed
    }
}

/// A key that orders finite floats as `f32::total_cmp` does.
fn order_key(v: f32) -> u32 {
    let b = v.to_bits();
    if b >> 31 == 1 { !b } else { b | 0x8000_0000 }
}

/// Which pixels nearer discs already cover: one bit per pixel, plus a flag per tile (one word
/// by `TILE_ROWS` rows) that is set once every pixel of the tile is covered, so discs deep
/// inside a covered area are rejected after a look at one or two flags.
#[derive(Debug, Default)]
struct Coverage {
    bits: Vec<u64>,
    full: Vec<bool>,
    words: usize,
    w: usize,
    h: usize,
}

impl Coverage {
    fn reset(&mut self, w: usize, h: usize) {
        self.w = w;
        self.h = h;
        self.words = w.div_ceil(64);
        self.bits.clear();
        self.bits.resize(self.words * h, 0);
        // Bits past the right edge count as covered, so edge tiles can fill up.
        if !w.is_multiple_of(64) {
            let pad = u64::MAX << (w % 64);
            for row in 0..h {
                self.bits[row * self.words + self.words - 1] = pad;
            }
        }
        self.full.clear();
        self.full.resize(self.words * h.div_ceil(TILE_ROWS), false);
    }

    /// Whether every tile under rows `r0..=r1`, columns `c0..=c1` is full.
    fn all_full(&self, r0: usize, r1: usize, c0: usize, c1: usize) -> bool {
        (r0 / TILE_ROWS..=r1 / TILE_ROWS).all(|t| (c0 / 64..=c1 / 64).all(|k| self.full[t * self.words + k]))
    }

    /// Whether disc `p` shows an open pixel; if so, marks the pixels it covers. Pixels count by
    /// their centres, as in OpenGL's rasterisation.
    fn sweep(&mut self, p: &Projected) -> bool {
        let (w, h, words) = (self.w, self.h, self.words);
        let outer = p.r + MARGIN_PX;
        let inner = p.r - MARGIN_PX;
        let Some((r0, r1)) = span(p.y, outer, h) else {
            return false;
        };
        let Some((c0, c1)) = span(p.x, outer, w) else {
            return false;
        };
        if self.all_full(r0, r1, c0, c1) {
            return false;
        }
        let bits = &mut self.bits;
        let open = disc_rows(p, outer, w, h, |row, c0, c1| {
            let line = &bits[row * words..(row + 1) * words];
            for_words(c0, c1, |k, m| line[k] & m != m)
        });
        if !open {
            return false;
        }
        if inner > 0.0 {
            let (mut k0, mut k1) = (usize::MAX, 0);
            disc_rows(p, inner, w, h, |row, c0, c1| {
                k0 = k0.min(c0 / 64);
                k1 = k1.max(c1 / 64);
                let line = &mut bits[row * words..(row + 1) * words];
                for_words(c0, c1, |k, m| {
                    line[k] |= m;
                    false
                })
            });
            if let Some((r0, r1)) = span(p.y, inner, h) {
                for t in r0 / TILE_ROWS..=r1 / TILE_ROWS {
                    for k in k0..=k1.min(words - 1) {
                        let rows = t * TILE_ROWS..((t + 1) * TILE_ROWS).min(h);
                        self.full[t * words + k] =
                            rows.into_iter().all(|row| bits[row * words + k] == u64::MAX);
                    }
                }
            }
        }
        true
    }
}

/// Calls `f(row, c0, c1)` for each row of a `w`×`h` view whose pixel centres `c0..=c1` lie
/// within `radius` of the centre of `p`, until `f` returns true; returns whether it did.
fn disc_rows(
    p: &Projected,
    radius: f32,
    w: usize,
    h: usize,
    mut f: impl FnMut(usize, usize, usize) -> bool,
) -> bool {
    let Some((r0, r1)) = span(p.y, radius, h) else {
        return false;
    };
    for row in r0..=r1 {
        let dy = row as f32 + 0.5 - p.y;
        let s = radius * radius - dy * dy;
        if s < 0.0 {
            continue;
        }
        if let Some((c0, c1)) = span(p.x, s.sqrt(), w)
            && f(row, c0, c1)
        {
            return true;
        }
    }
    false
}

/// Smallest integer ≥ `v` (for |v| < 2³¹; without SSE4.1 `f32::ceil` is a library call).
fn ceil_i(v: f32) -> i64 {
    let t = v as i64;
    if (t as f32) < v { t + 1 } else { t }
}

/// Largest integer ≤ `v` (for |v| < 2³¹).
fn floor_i(v: f32) -> i64 {
    let t = v as i64;
    if (t as f32) > v { t - 1 } else { t }
}

/// Pixels `lo..=hi` whose centres lie within `half` of `c`, clamped to `0..count`.
fn span(c: f32, half: f32, count: usize) -> Option<(usize, usize)> {
    let lo = ceil_i(c - half - 0.5).max(0);
    let hi = floor_i(c + half - 0.5).min(count as i64 - 1);
    (hi >= lo).then_some((lo as usize, hi as usize))
}

/// Calls `f(word, mask)` for the words of one row that columns `c0..=c1` touch, until `f`
/// returns true; returns whether it did.
fn for_words(c0: usize, c1: usize, mut f: impl FnMut(usize, u64) -> bool) -> bool {
    let (w0, w1) = (c0 / 64, c1 / 64);
    for word in w0..=w1 {
        let lo = if word == w0 { c0 % 64 } else { 0 };
        let hi = if word == w1 { c1 % 64 } else { 63 };
        let mask = (u64::MAX >> (63 - hi)) & (u64::MAX << lo);
        if f(word, mask) {
            return true;
        }
    }
    false
}

#[cfg(test)]
mod tests {
    use super::*;

    fn at(x: f32, y: f32, r: f32, depth: f32) -> Option<Projected> {
        Some(Projected { x, y, r, depth })
    }

    fn kept(atoms: &[Option<Projected>]) -> Vec<usize> {
        let mut c = Culler::new();
        let mut out = Vec::new();
        let placed = c.run(atoms.len(), 200, 200, |i| atoms[i], |i| out.push(i));
        assert_eq!(placed, atoms.iter().flatten().count());
        out
    }

    #[test]
    fn drops_an_atom_right_behind_another() {
        assert_eq!(
            kept(&[at(100.0, 100.0, 20.0, 5.0), at(100.0, 100.0, 8.0, 9.0)]),
            vec![0]
        );
    }

    #[test]
    fn keeps_an_atom_that_peeks_out() {
        assert_eq!(
            kept(&[at(100.0, 100.0, 20.0, 5.0), at(118.0, 100.0, 8.0, 9.0)]),
            vec![0, 1]
        );
    }

    #[test]
    fn reports_nearest_first_whatever_the_index_order() {
        assert_eq!(
            kept(&[at(100.0, 100.0, 8.0, 9.0), at(100.0, 100.0, 20.0, 5.0)]),
            vec![1]
        );
        assert_eq!(
            kept(&[
                at(10.0, 10.0, 5.0, 9.0),
                at(100.0, 100.0, 5.0, 5.0),
                at(150.0, 10.0, 5.0, 7.0)
            ]),
            vec![1, 2, 0]
        );
    }

    #[test]
    fn a_disc_hidden_by_several_nearer_ones_is_dropped() {
        // Four overlapping discs in front cover the one behind them together, none alone.
        let front = [
            at(95.0, 95.0, 9.0, 5.0),
            at(105.0, 95.0, 9.0, 5.0),
            at(95.0, 105.0, 9.0, 5.0),
            at(105.0, 105.0, 9.0, 5.0),
        ];
        let mut atoms = front.to_vec();
        atoms.push(at(100.0, 100.0, 7.0, 8.0));
        assert_eq!(kept(&atoms), vec![0, 1, 2, 3]);
        // Pull one away: the far disc shows through the gap.
        atoms[3] = at(125.0, 125.0, 9.0, 5.0);
        assert!(kept(&atoms).contains(&4));
    }

    #[test]
    fn drops_atoms_off_screen_or_not_drawn() {
        assert_eq!(
            kept(&[
                at(-50.0, 100.0, 10.0, 5.0),
                None,
                at(5.0, 5.0, 10.0, 5.0),
                at(100.0, 300.0, 10.0, 1.0)
            ]),
            vec![2]
        );
    }

    #[test]
    fn negative_depths_order_too() {
        // Orthographic views measure depth from the slab centre.
        assert_eq!(
            kept(&[at(100.0, 100.0, 8.0, 0.5), at(100.0, 100.0, 20.0, -0.5)]),
            vec![1]
        );
        assert_eq!(
            kept(&[
                at(100.0, 100.0, 8.0, -0.7),
                at(100.0, 100.0, 20.0, -0.5),
                at(130.0, 100.0, 5.0, -2.0)
            ]),
            vec![2, 0, 1]
        );
    }

    #[test]
    fn a_fully_covered_screen_hides_everything_behind_it() {
        // A wall of large discs covers every pixel (several tiles), then deep atoms follow.
        let mut atoms = Vec::new();
        for y in 0..6 {
            for x in 0..6 {
                atoms.push(at(x as f32 * 40.0, y as f32 * 40.0, 30.0, 1.0));
            }
        }
        let wall = atoms.len();
        for k in 0..50 {
            atoms.push(at(3.0 + k as f32 * 3.9, 7.0 + k as f32 * 3.7, 2.5, 5.0));
        }
        let out = kept(&atoms);
        assert!(out.iter().all(|&i| i < wall), "{out:?}");
    }

    #[test]
    fn wide_views_use_several_words_per_row() {
        let mut c = Culler::new();
        let mut out = Vec::new();
        let atoms = [
            at(130.0, 10.0, 60.0, 5.0),
            at(130.0, 10.0, 30.0, 6.0),
            at(300.0, 10.0, 3.0, 6.0),
        ];
        c.run(atoms.len(), 400, 40, |i| atoms[i], |i| out.push(i));
        assert_eq!(out, vec![0, 2]);
    }

    /// The culler against a plain per-pixel depth buffer of flat discs, as OpenGL draws them:
    /// every atom that owns a pixel there must be kept.
    #[test]
    fn keeps_every_atom_that_owns_a_pixel() {
        let (w, h) = (97usize, 61usize);
        let mut s = 12345u64;
        let mut rnd = || {
            s ^= s << 13;
            s ^= s >> 7;
            s ^= s << 17;
            (s >> 11) as f32 / (1u64 << 53) as f32
        };
        let atoms: Vec<Option<Projected>> = (0..600)
            .map(|_| {
                at(
                    rnd() * 110.0 - 5.0,
                    rnd() * 70.0 - 5.0,
                    0.7 + rnd() * 5.0,
                    1.0 + rnd() * 10.0,
                )
            })
            .collect();
        let mut owner = vec![(f32::INFINITY, usize::MAX); w * h];
        for (i, a) in atoms.iter().enumerate() {
            let p = a.unwrap();
            for y in 0..h {
                for x in 0..w {
                    let (dx, dy) = (x as f32 + 0.5 - p.x, y as f32 + 0.5 - p.y);
                    if dx * dx + dy * dy <= p.r * p.r && p.depth < owner[y * w + x].0 {
                        owner[y * w + x] = (p.depth, i);
                    }
                }
            }
        }
        let mut c = Culler::new();
        let mut out = Vec::new();
        c.run(atoms.len(), w, h, |i| atoms[i], |i| out.push(i));
        let visible: std::collections::BTreeSet<usize> =
            owner.iter().filter(|o| o.1 != usize::MAX).map(|o| o.1).collect();
        for v in &visible {
            assert!(out.contains(v), "atom {v} owns a pixel but was dropped");
        }
        // And the pass does cull: most of a crowded field is hidden.
        assert!(
            out.len() < atoms.len() * 3 / 4,
            "{} of {} kept",
            out.len(),
            atoms.len()
        );
        assert!(
            out.len() <= visible.len() + visible.len() / 2,
            "{} kept, {} visible",
            out.len(),
            visible.len()
        );
    }
}
