//! Conservative occlusion culling for the 3D view.
//!
//! Software OpenGL spends most of its time per primitive, and in a dense liquid seen from
//! outside most atoms are hidden behind the surface layers. This pass drops atoms that are
//! certainly hidden, so the picture is unchanged: the screen is split into cells; a cell that
//! lies wholly inside an atom's disc is occluded at that atom's centre depth (its front surface
//! there is nearer still); an atom is dropped only if every cell its disc touches is occluded
//! nearer than the atom's front point. Atoms wholly off screen or behind the camera are dropped
//! too. Buffers are kept between frames, so steady state allocates nothing.

/// One atom as seen by the camera.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Projected {
    /// Screen position of the centre in pixels (y down).
    pub x: f32,
    pub y: f32,
    /// Radius on screen in pixels.
    pub r: f32,
    /// Distance of the centre in front of the camera, world units.
    pub depth: f32,
    /// Radius in world units.
    pub radius: f32,
}

/// Discs larger than this many pixels are always kept and never occlude (rare, and costly).
const MAX_DISC_PX: f32 = 160.0;
/// Most cells along one screen axis.
const MAX_CELLS: usize = 640;

/// The culling pass with its reusable buffers.
#[derive(Debug, Default)]
pub struct Culler {
    occluder: Vec<f32>,
    seen: Vec<Option<Projected>>,
    cols: usize,
    rows: usize,
    cell: f32,
}

impl Culler {
    /// A culler with empty buffers.
    pub fn new() -> Self {
        Self::default()
    }

    /// Calls `keep(i)` for every atom `i < n` that may be visible on a `width`×`height` pixel
    /// view, in index order. `project(i)` gives the atom on screen, or `None` if it is behind the
    /// camera. `cell` is the cell edge in pixels (about half a typical disc radius).
    pub fn run(&mut self, n: usize, width: f32, height: f32, cell: f32, project: impl Fn(usize) -> Option<Projected>, mut keep: impl FnMut(usize)) {
        let cell = cell.max(width / MAX_CELLS as f32).max(height / MAX_CELLS as f32).max(1.0);
        self.cell = cell;
        self.cols = (width / cell).ceil().max(1.0) as usize;
        self.rows = (height / cell).ceil().max(1.0) as usize;
        self.occluder.clear();
        self.occluder.resize(self.cols * self.rows, f32::INFINITY);
        self.seen.clear();
        self.seen.extend((0..n).map(|i| project(i).filter(|p| p.x + p.r >= 0.0 && p.x - p.r <= width && p.y + p.r >= 0.0 && p.y - p.r <= height)));
        for p in self.seen.iter().flatten() {
            if p.r <= MAX_DISC_PX {
                Self::occlude(&mut self.occluder, self.cols, self.rows, cell, p);
            }
        }
        for (i, p) in self.seen.iter().enumerate() {
            if let Some(p) = p {
                if p.r > MAX_DISC_PX || Self::maybe_visible(&self.occluder, self.cols, self.rows, cell, p) {
                    keep(i);
                }
            }
        }
    }

    fn span(lo: f32, hi: f32, cell: f32, count: usize) -> (usize, usize) {
        let a = (lo / cell).floor().max(0.0) as usize;
        let b = ((hi / cell).floor().max(0.0) as usize).min(count - 1);
        (a.min(count - 1), b)
    }

    fn occlude(occ: &mut [f32], cols: usize, rows: usize, cell: f32, p: &Projected) {
        let (c0, c1) = Self::span(p.x - p.r, p.x + p.r, cell, cols);
        let (r0, r1) = Self::span(p.y - p.r, p.y + p.r, cell, rows);
        let r2 = p.r * p.r;
        for row in r0..=r1 {
            let y0 = row as f32 * cell - p.y;
            let y1 = y0 + cell;
            let dy = y0.abs().max(y1.abs());
            for col in c0..=c1 {
                let x0 = col as f32 * cell - p.x;
                let x1 = x0 + cell;
                let dx = x0.abs().max(x1.abs());
                // The farthest corner inside the disc: the whole cell is covered.
                if dx * dx + dy * dy <= r2 {
                    let o = &mut occ[row * cols + col];
                    if p.depth < *o {
                        *o = p.depth;
                    }
                }
            }
        }
    }

    fn maybe_visible(occ: &[f32], cols: usize, rows: usize, cell: f32, p: &Projected) -> bool {
        let front = p.depth - p.radius;
        let (c0, c1) = Self::span(p.x - p.r, p.x + p.r, cell, cols);
        let (r0, r1) = Self::span(p.y - p.r, p.y + p.r, cell, rows);
        for row in r0..=r1 {
            for col in c0..=c1 {
                if occ[row * cols + col] >= front {
                    return true;
                }
            }
        }
        false
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn at(x: f32, y: f32, r: f32, depth: f32) -> Option<Projected> {
        Some(Projected { x, y, r, depth, radius: 0.5 })
    }

    fn kept(atoms: &[Option<Projected>]) -> Vec<usize> {
        let mut c = Culler::new();
        let mut out = Vec::new();
        c.run(atoms.len(), 200.0, 200.0, 3.0, |i| atoms[i], |i| out.push(i));
        out
    }

    #[test]
    fn drops_an_atom_right_behind_another() {
        assert_eq!(kept(&[at(100.0, 100.0, 20.0, 5.0), at(100.0, 100.0, 8.0, 9.0)]), vec![0]);
    }

    #[test]
    fn keeps_an_atom_that_peeks_out() {
        assert_eq!(kept(&[at(100.0, 100.0, 20.0, 5.0), at(118.0, 100.0, 8.0, 9.0)]), vec![0, 1]);
    }

    #[test]
    fn keeps_the_nearer_of_two_and_a_touching_neighbour() {
        // Index order does not matter: the far atom is hidden either way.
        assert_eq!(kept(&[at(100.0, 100.0, 8.0, 9.0), at(100.0, 100.0, 20.0, 5.0)]), vec![1]);
        // Same depth: the front point of the second is nearer than the first's centre.
        assert_eq!(kept(&[at(100.0, 100.0, 20.0, 5.0), at(100.0, 100.0, 20.0, 5.0)]), vec![0, 1]);
    }

    #[test]
    fn drops_atoms_off_screen_or_behind_the_camera() {
        assert_eq!(kept(&[at(-50.0, 100.0, 10.0, 5.0), None, at(5.0, 5.0, 10.0, 5.0)]), vec![2]);
    }
}
