//! The periodic cube's geometry: minimum image and folding into the primary box.
//!
//! Positions are unwrapped (see [`super::system::System`]), so every distance goes through
//! [`separation`] and every picture of the box through [`fold`]. The neighbour search, the force
//! kernel and the analysis all use these, so they agree to the last bit on what a distance is.

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

/// A coordinate folded into [0, l).
#[inline]
pub fn fold(x: f64, l: f64) -> f64 {
    x - l * (x / l).floor()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn nearest_integer_rounds() {
        for &(t, r) in &[(0.4, 0.0), (0.6, 1.0), (-0.6, -1.0), (-2.4, -2.0), (7.51, 8.0)] {
            assert_eq!(nearest_integer(t), r);
        }
    }

    #[test]
    fn fold_lands_in_the_box() {
        for &x in &[-7.5, -0.25, 0.0, 3.0, 9.75, 21.0] {
            let f = fold(x, 4.0);
            assert!((0.0..4.0).contains(&f), "{x} folded to {f}");
        }
    }
}
