//! Small helpers for parallel loops whose results must not depend on the number of threads.

use rayon::prelude::*;

/// Fixed chunk length for ordered reductions; independent of the thread count by design.
pub const CHUNK: usize = 4096;

/// Σ f(i) for i in 0..n, summed chunk by chunk in index order so the rounding is always the same.
pub fn ordered_sum<F: Fn(usize) -> f64 + Sync>(n: usize, f: F) -> f64 {
    let chunks = n.div_ceil(CHUNK);
    let partial: Vec<f64> = (0..chunks)
        .into_par_iter()
        .map(|c| {
            let mut s = 0.0;
            for i in c * CHUNK..((c + 1) * CHUNK).min(n) {
                s += f(i);
            }
            s
        })
        .collect();
    partial.iter().sum()
}

/// A raw pointer that may be shared between threads which write disjoint elements.
#[derive(Clone, Copy)]
pub(crate) struct SharedMut<T>(pub *mut T);
// SAFETY: users guarantee that concurrent writes go to disjoint indices.
unsafe impl<T> Send for SharedMut<T> {}
unsafe impl<T> Sync for SharedMut<T> {}

impl<T> SharedMut<T> {
    /// # Safety
    /// `i` must be in bounds and no other thread may access element `i` at the same time.
    #[inline(always)]
    #[allow(clippy::mut_from_ref)]
    pub(crate) unsafe fn at(&self, i: usize) -> &mut T {
        unsafe { &mut *self.0.add(i) }
    }
}
