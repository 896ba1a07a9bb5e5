//! Where a time series stops drifting: automated equilibration detection.
//!
//! Both functions follow the published methods as implemented in the `pymbar` package
//! (`pymbar.timeseries`, version 4), so that their results can be checked against it.

use serde::{Deserialize, Serialize};

/// The start of the production part of a series, and its statistics.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct Equilibration {
    /// First sample index taken as equilibrated.
    pub start: usize,
    /// Statistical inefficiency g of the samples from `start` on.
    pub inefficiency: f64,
    /// Effectively independent samples from `start` on.
    pub effective_samples: f64,
}

/// Lags at and below this are always summed, even where C(t) ≤ 0 (pymbar's `mintime`).
const MIN_LAGS: usize = 3;

/// Which lags the statistical inefficiency sums.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum LagSchedule {
    /// Every lag (pymbar's `fast=False`).
    Every,
    /// Lags 1, 2, 4, 7, 11, … each weighted by its step (pymbar's `fast=True`). Cheaper, and
    /// biased high where C(t) falls fast between the lags it skips (about +12 % for AR(1) with
    /// φ = 0.95, measured against `fast=False` with pymbar 4.0.3).
    Fast,
    /// Every lag up to this one, then growing steps as in `Fast`: bounds the cost of strongly
    /// correlated series while keeping the short-lag part exact.
    EveryUpTo(usize),
}

/// Statistical inefficiency g = 1 + 2 Σ_t (1 − t/N) C(t) of a series.
///
/// The normalised autocorrelation C(t) is summed until it first drops to zero or below past
/// lag 3; g is at least 1. With `fast`, lags grow as 1, 2, 4, 7, 11, … and each term is
/// weighted by its lag step. Method: Chodera, Swope, Pitera, Seok & Dill, J. Chem. Theory
/// Comput. 3, 26 (2007). Returns `None` for a series with zero variance.
pub fn statistical_inefficiency(x: &[f64], fast: bool) -> Option<f64> {
    statistical_inefficiency_with(
        x,
        if fast {
            LagSchedule::Fast
        } else {
            LagSchedule::Every
        },
    )
}

/// [`statistical_inefficiency`] with any [`LagSchedule`].
pub fn statistical_inefficiency_with(x: &[f64], schedule: LagSchedule) -> Option<f64> {
    let n = x.len();
    if n < 2 {
        return Some(1.0);
    }
    let mean = x.iter().sum::<f64>() / n as f64;
    let d: Vec<f64> = x.iter().map(|v| v - mean).collect();
    let var = d.iter().map(|v| v * v).sum::<f64>() / n as f64;
    if var == 0.0 {
        return None;
    }
    let mut g = 1.0;
    let (mut t, mut step) = (1usize, 1usize);
    while t < n - 1 {
        let c = d[..n - t].iter().zip(&d[t..]).map(|(a, b)| a * b).sum::<f64>() / ((n - t) as f64 * var);
        if c <= 0.0 && t > MIN_LAGS {
            break;
        }
        g += 2.0 * c * (1.0 - t as f64 / n as f64) * step as f64;
        t += step;
        match schedule {
            LagSchedule::Every => {}
            LagSchedule::Fast => step += 1,
            LagSchedule::EveryUpTo(limit) if t > limit => step += 1,
            LagSchedule::EveryUpTo(_) => {}
        }
    }
    Some(g.max(1.0))
}

/// Picks the start t₀ that maximises the effective number of samples (N − t₀ + 1) / g(t₀),
/// trying every `stride`-th sample (the fast lag schedule for g): pymbar's
/// `timeseries.detect_equilibration(x, fast=True, nskip=stride)`.
///
/// Method: Chodera, J. Chem. Theory Comput. 12, 1799 (2016); the count N − t₀ + 1 and the
/// tie rule (earliest start wins) are those of pymbar. The program's own detection,
/// [`super::series_statistics::detect_start`], does the work, unblocked, so the pymbar check
/// covers the code the program runs.
pub fn detect_equilibration(x: &[f64], stride: usize) -> Equilibration {
    if x.len() < 2 {
        return Equilibration {
            start: 0,
            inefficiency: 1.0,
            effective_samples: x.len() as f64,
        };
    }
    let sums = super::suffix::RunningSums::new(x);
    let d = super::series_statistics::detect_start(x, &sums, 0, stride, usize::MAX);
    Equilibration {
        start: d.index,
        inefficiency: d.inefficiency,
        effective_samples: d.effective_samples,
    }
}
