//! Running sums of a series, so that the mean, the variance and block means of any stretch
//! cost O(1) each, and the statistical inefficiency of a long stretch is estimated from a
//! bounded number of block means.

use super::equilibration::{LagSchedule, statistical_inefficiency_with};

/// Prefix sums of a series (shifted by its first value, which keeps the sums small).
pub struct RunningSums {
    offset: f64,
    s1: Vec<f64>,
    s2: Vec<f64>,
}

impl RunningSums {
    /// Sums of `x`; O(n).
    pub fn new(x: &[f64]) -> RunningSums {
        let offset = x.first().copied().unwrap_or(0.0);
        let mut s1 = Vec::with_capacity(x.len() + 1);
        let mut s2 = Vec::with_capacity(x.len() + 1);
        let (mut a, mut b) = (0.0, 0.0);
        s1.push(0.0);
        s2.push(0.0);
        for &v in x {
            let d = v - offset;
            a += d;
            b += d * d;
            s1.push(a);
            s2.push(b);
        }
        RunningSums { offset, s1, s2 }
    }

    /// Length of the series.
    pub fn len(&self) -> usize {
        self.s1.len() - 1
    }

    /// True for an empty series.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// Mean of samples `a..b`.
    pub fn mean(&self, a: usize, b: usize) -> f64 {
        self.offset + (self.s1[b] - self.s1[a]) / (b - a) as f64
    }

    /// Variance (divided by the count) of samples `a..b`, never negative.
    pub fn variance(&self, a: usize, b: usize) -> f64 {
        let n = (b - a) as f64;
        let m = (self.s1[b] - self.s1[a]) / n;
        ((self.s2[b] - self.s2[a]) / n - m * m).max(0.0)
    }

    /// Means of the `count` consecutive blocks of `size` samples starting at `a`.
    pub fn block_means(&self, a: usize, size: usize, count: usize) -> Vec<f64> {
        (0..count)
            .map(|k| {
                let lo = a + k * size;
                (self.s1[lo + size] - self.s1[lo]) / size as f64
            })
            .collect()
    }

    /// Statistical inefficiency g (in samples) of the stretch `a..b`, `None` when it has zero
    /// variance.
    ///
    /// Up to `max_blocks` samples, g is that of Chodera et al. (J. Chem. Theory Comput. 3, 26,
    /// 2007) with the lag `schedule`, as `pymbar.timeseries.statistical_inefficiency` computes
    /// it (`Every` is its `fast=False`, `Fast` its `fast=True`). Longer stretches are cut into at most `max_blocks` blocks of b samples, and
    /// g = b · g_b · σ_b² / σ², where g_b and σ_b² are the inefficiency and variance of the block
    /// means and σ² the variance of the samples. Both sides give the same variance of the mean,
    /// σ²g/n = σ_b² g_b / (n/b), which is what blocking preserves (Flyvbjerg & Petersen, J.
    /// Chem. Phys. 91, 461, 1989). The up to b − 1 samples left over at the end are not used.
    pub fn inefficiency(
        &self,
        x: &[f64],
        a: usize,
        b: usize,
        max_blocks: usize,
        schedule: LagSchedule,
    ) -> Option<f64> {
        let n = b - a;
        if n <= max_blocks {
            return statistical_inefficiency_with(&x[a..b], schedule);
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
    fn sums_give_the_direct_mean_and_variance() {
        let x: Vec<f64> = (0..500).map(|i| -5.5 + ((i * 13) % 17) as f64 * 0.01).collect();
        let s = RunningSums::new(&x);
        let (a, b) = (37, 411);
        let m = x[a..b].iter().sum::<f64>() / (b - a) as f64;
        let v = x[a..b].iter().map(|y| (y - m) * (y - m)).sum::<f64>() / (b - a) as f64;
        assert!((s.mean(a, b) - m).abs() < 1e-12);
        assert!((s.variance(a, b) - v).abs() < 1e-12);
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
            .inefficiency(&x, 0, x.len(), 8192, LagSchedule::EveryUpTo(256))
            .unwrap();
        assert!((g / 39.0 - 1.0).abs() < 0.15, "g = {g}");
    }
}
