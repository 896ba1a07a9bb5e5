//! Running sums of a series, so that the mean, the variance and block means of any stretch
//! cost O(1) each, and the statistical inefficiency of a long stretch is estimated from a
//! bounded number of block means.
//!
//! The sums are kept at every [`STRIDE`]-th sample only, with the series itself for the rest:
//! a sum up to any index costs at most `STRIDE` − 1 additions, and the sums take 1/8 of the
//! series' memory instead of twice it (a refresh at 10⁶ samples used to spend most of its time
//! faulting in fresh pages for full-length sums).

use super::equilibration::{LagSchedule, statistical_inefficiency_with};
use std::borrow::Cow;

/// Samples between kept running sums.
pub const STRIDE: usize = 16;

/// Running sums of a series (shifted by its first value, which keeps the sums small).
pub struct RunningSums<'a> {
    x: &'a [f64],
    offset: f64,
    /// Σ (x − offset) and Σ (x − offset)² over the first `STRIDE · k` samples, k = 0, 1, …
    s1: Cow<'a, [f64]>,
    s2: Cow<'a, [f64]>,
}

/// Running sums kept beside a growing series ([`super::SampleStore`] keeps one per quantity),
/// so a refresh need not pass over the whole series to build them.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct KeptSums {
    offset: f64,
    s1: Vec<f64>,
    s2: Vec<f64>,
}

impl KeptSums {
    /// Brings the sums up to date with `x`, which has only grown since the last call (or call
    /// [`KeptSums::rebuild`] after it changed otherwise).
    pub fn extend(&mut self, x: &[f64]) {
        if self.s1.is_empty() {
            self.offset = x.first().copied().unwrap_or(0.0);
            self.s1.push(0.0);
            self.s2.push(0.0);
        }
        let done = (self.s1.len() - 1) * STRIDE;
        let (mut a, mut b) = (*self.s1.last().unwrap(), *self.s2.last().unwrap());
        for c in x[done.min(x.len())..].chunks_exact(STRIDE) {
            let (ca, cb) = chunk_sums(c, self.offset);
            a += ca;
            b += cb;
            self.s1.push(a);
            self.s2.push(b);
        }
    }

    /// Forgets the sums and builds them anew for `x`.
    pub fn rebuild(&mut self, x: &[f64]) {
        self.s1.clear();
        self.s2.clear();
        self.extend(x);
    }

    /// Bytes held.
    pub fn bytes(&self) -> usize {
        (self.s1.capacity() + self.s2.capacity()) * 8
    }
}

/// Σ (v − offset) and Σ (v − offset)² of one stride, in four independent lanes.
fn chunk_sums(c: &[f64], offset: f64) -> (f64, f64) {
    let (mut la, mut lb) = ([0.0f64; 4], [0.0f64; 4]);
    for q in c.chunks_exact(4) {
        for k in 0..4 {
            let d = q[k] - offset;
            la[k] += d;
            lb[k] += d * d;
        }
    }
    (
        (la[0] + la[1]) + (la[2] + la[3]),
        (lb[0] + lb[1]) + (lb[2] + lb[3]),
    )
}

impl<'a> RunningSums<'a> {
    /// Sums of `x`; O(n) time, O(n / STRIDE) memory.
    pub fn new(x: &'a [f64]) -> RunningSums<'a> {
        let offset = x.first().copied().unwrap_or(0.0);
        let chunks = x.len() / STRIDE;
        let mut s1 = Vec::with_capacity(chunks + 1);
        let mut s2 = Vec::with_capacity(chunks + 1);
        let (mut a, mut b) = (0.0, 0.0);
        s1.push(0.0);
        s2.push(0.0);
        for c in x.chunks_exact(STRIDE) {
            let (ca, cb) = chunk_sums(c, offset);
            a += ca;
            b += cb;
            s1.push(a);
            s2.push(b);
        }
        RunningSums {
            x,
            offset,
            s1: Cow::Owned(s1),
            s2: Cow::Owned(s2),
        }
    }

    /// Sums of `x` from sums kept up to date beside it; O(1). `kept` must be current for `x`
    /// (one entry per whole stride of `x`).
    pub fn from_kept(x: &'a [f64], kept: &'a KeptSums) -> RunningSums<'a> {
        if kept.s1.len() != x.len() / STRIDE + 1 {
            return RunningSums::new(x);
        }
        RunningSums {
            x,
            offset: kept.offset,
            s1: Cow::Borrowed(&kept.s1),
            s2: Cow::Borrowed(&kept.s2),
        }
    }

    /// The series.
    pub fn series(&self) -> &'a [f64] {
        self.x
    }

    /// Length of the series.
    pub fn len(&self) -> usize {
        self.x.len()
    }

    /// True for an empty series.
    pub fn is_empty(&self) -> bool {
        self.x.is_empty()
    }

    /// Σ (x − offset) and Σ (x − offset)² over the first `i` samples.
    fn upto(&self, i: usize) -> (f64, f64) {
        let k = i / STRIDE;
        let (mut a, mut b) = (self.s1[k], self.s2[k]);
        for &v in &self.x[k * STRIDE..i] {
            let d = v - self.offset;
            a += d;
            b += d * d;
        }
        (a, b)
    }

    /// Mean of samples `a..b`.
    pub fn mean(&self, a: usize, b: usize) -> f64 {
        self.offset + (self.upto(b).0 - self.upto(a).0) / (b - a) as f64
    }

    /// Variance (divided by the count) of samples `a..b`, never negative.
    pub fn variance(&self, a: usize, b: usize) -> f64 {
        let n = (b - a) as f64;
        let (ua, va) = self.upto(a);
        let (ub, vb) = self.upto(b);
        let m = (ub - ua) / n;
        ((vb - va) / n - m * m).max(0.0)
    }

    /// Means of the `count` consecutive blocks of `size` samples starting at `a`.
    pub fn block_means(&self, a: usize, size: usize, count: usize) -> Vec<f64> {
        if size < 2 * STRIDE {
            return self.x[a..a + size * count]
                .chunks_exact(size)
                .map(|c| c.iter().sum::<f64>() / size as f64)
                .collect();
        }
        let mut lo = self.upto(a).0;
        (0..count)
            .map(|k| {
                let hi = self.upto(a + (k + 1) * size).0;
                let m = self.offset + (hi - lo) / size as f64;
                lo = hi;
                m
            })
            .collect()
    }

    /// Statistical inefficiency g (in samples) of the stretch `a..b`, `None` when it has zero
    /// variance.
    ///
    /// Up to `max_blocks` samples, g is that of Chodera et al. (J. Chem. Theory Comput. 3, 26,
    /// 2007) with the lag `schedule`, as `pymbar.timeseries.statistical_inefficiency` computes
    /// it (`Every` is its `fast=False`, `Fast` its `fast=True`). Longer stretches are cut into at
    /// most `max_blocks` blocks of b samples, and g = b · g_b · σ_b² / σ², where g_b and σ_b² are
    /// the inefficiency and variance of the block means and σ² the variance of the samples.
    /// Both sides give the same variance of the mean, σ²g/n = σ_b² g_b / (n/b), which is what
    /// blocking preserves (Flyvbjerg & Petersen, J. Chem. Phys. 91, 461, 1989). The up to b − 1
    /// samples left over at the end are not used.
    pub fn inefficiency(&self, a: usize, b: usize, max_blocks: usize, schedule: LagSchedule) -> Option<f64> {
        let n = b - a;
        if n <= max_blocks {
            return statistical_inefficiency_with(&self.x[a..b], schedule);
        }
        let size = n.div_ceil(max_blocks);
        let count = n / size;
        let var = self.variance(a, a + size * count);
        if var <= 0.0 {
            return None;
        }
        let blocks = self.block_means(a, size, count);
        let m = blocks.iter().sum::<f64>() / count as f64;
        let var_b = blocks.iter().map(|v| (v - m) * (v - m)).sum::<f64>() / count as f64;
        if var_b <= 0.0 {
            return Some(1.0);
        }
        let g_b = statistical_inefficiency_with(&blocks, schedule).unwrap_or(1.0);
        Some((size as f64 * g_b * var_b / var).max(1.0))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::random::{Purpose, Stream};

    #[test]
    fn sums_give_the_direct_mean_variance_and_block_means() {
        let x: Vec<f64> = (0..500).map(|i| -5.5 + ((i * 13) % 17) as f64 * 0.01).collect();
        let s = RunningSums::new(&x);
        for (a, b) in [(37, 411), (0, 500), (16, 32), (3, 4)] {
            let m = x[a..b].iter().sum::<f64>() / (b - a) as f64;
            let v = x[a..b].iter().map(|y| (y - m) * (y - m)).sum::<f64>() / (b - a) as f64;
            assert!((s.mean(a, b) - m).abs() < 1e-12);
            assert!((s.variance(a, b) - v).abs() < 1e-12);
        }
        for size in [3, 40] {
            let got = s.block_means(5, size, 7);
            for (k, g) in got.iter().enumerate() {
                let lo = 5 + k * size;
                let want = x[lo..lo + size].iter().sum::<f64>() / size as f64;
                assert!((g - want).abs() < 1e-12, "size {size} block {k}");
            }
        }
    }

    #[test]
    fn kept_sums_grown_piece_by_piece_are_the_sums_built_at_once() {
        let x: Vec<f64> = (0..1000).map(|i| ((i * 7919) % 101) as f64 * 0.1).collect();
        let mut kept = KeptSums::default();
        for n in [0, 5, 16, 17, 300, 1000] {
            kept.extend(&x[..n]);
        }
        let a = RunningSums::new(&x);
        let b = RunningSums::from_kept(&x, &kept);
        assert_eq!(a.s1, b.s1);
        assert_eq!(a.s2, b.s2);
    }

    #[test]
    fn blocked_inefficiency_of_ar1_is_near_the_analytic_value() {
        // AR(1) with φ = 0.95: g = (1 + φ)/(1 − φ) = 39 (standard result for AR(1)). pymbar
        // 4.0.3 gives 40.5 (fast=False) and 45.2 (fast=True) on such a series of this length.
        let mut r = Stream::new(11, Purpose::Rescale, 0, 0);
        let phi: f64 = 0.95;
        let mut y = 0.0;
        let x: Vec<f64> = (0..400_000)
            .map(|_| {
                y = phi * y + (1.0 - phi * phi).sqrt() * r.normal();
                y
            })
            .collect();
        let s = RunningSums::new(&x);
        let g = s
            .inefficiency(0, x.len(), 8192, LagSchedule::EveryUpTo(256))
            .unwrap();
        assert!((g / 39.0 - 1.0).abs() < 0.15, "g = {g}");
    }
}
