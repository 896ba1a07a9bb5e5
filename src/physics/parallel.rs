//! Small helpers for parallel loops whose results must not depend on the number of threads.

use rayon::prelude::*;

/// Fixed chunk length for ordered reductions; independent of the thread count by design.
pub const CHUNK: usize = 4096;

/// Fewest elements one task of a cheap element-by-element loop takes (kicks, drifts, the skin
/// check). Such a loop over 32,000 atoms takes tens of microseconds, about what handing work
/// to another thread and waiting for it back costs, and on a busy machine (beside the window)
/// that wait can be much longer; so loops this short run on one thread. Element-wise loops
/// give the same result however they are split.
pub const ELEMENTWISE_TASK: usize = 1 << 15;

/// Σ f(i) for i in 0..n, summed chunk by chunk in index order so the rounding is always the same.
pub fn ordered_sum<F: Fn(usize) -> f64 + Sync>(n: usize, f: F) -> f64 {
    let chunks = n.div_ceil(CHUNK);
    let partial: Vec<f64> = (0..chunks)
        .into_par_iter()
        .with_min_len(ELEMENTWISE_TASK / CHUNK)
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
