//! Statistics of one series after an equilibration start: the automatically detected start on
//! a bounded set of candidates, the mean with its standard error from the statistical
//! inefficiency, the block-averaging curve and the stationarity check of its thirds.

use super::blocking::Estimate;
use super::equilibration::LagSchedule;
use super::suffix::RunningSums;
use serde::{Deserialize, Serialize};

/// Candidate starts tried by the detection. Trying every sample costs O(n²); pymbar's
/// `nskip` exists for that, and 40–100 candidate origins are said to be enough (common
/// practice, from the pymbar authors' discussion of `nskip`). 100 keeps the start within 1 %
/// of the run.
pub const CANDIDATE_STARTS: usize = 100;
/// The first 1 % of samples is never a candidate start: a lattice start's first sample lies
/// so far from the rest that the maximum-effective-samples rule can keep everything (reported
/// on pymbar's tracker; openmmtools discards the first 1 % by default for that reason).
pub const DISCARDED_FRACTION: f64 = 0.01;
/// Blocks used to estimate g at each candidate start (see [`RunningSums::inefficiency`]).
pub const SCAN_BLOCKS: usize = 4096;
/// Blocks used for the statistics at the chosen start.
pub const FINAL_BLOCKS: usize = 8192;
/// Blocks used for each third in the stationarity check.
pub const THIRD_BLOCKS: usize = 2048;
/// Lag schedule of the statistics at the chosen start: every lag up to 256 (pymbar's
/// `fast=False`, unbiased), then growing steps so that a strongly correlated or drifting
/// series costs at most about 500 lags.
pub const FINAL_SCHEDULE: LagSchedule = LagSchedule::EveryUpTo(256);
/// The thirds check calls a series "still drifting" when the means of its first and last
/// thirds differ by more than this many combined standard errors (common practice, no source).
pub const DRIFT_SIGMAS: f64 = 3.0;
/// Block-averaging levels are shown down to this many blocks.
pub const MIN_BLOCKS_SHOWN: usize = 4;
/// The plateau of the block-averaging curve is read over levels with at least this many blocks
/// (common practice: fewer blocks make the error of the error too large).
pub const MIN_BLOCKS_PLATEAU: usize = 16;

/// The start detected on one series.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct DetectedStart {
    /// First sample counted as equilibrated.
    pub index: usize,
    /// Statistical inefficiency (samples) from there on.
    pub inefficiency: f64,
    /// Effective samples from there on, counted as pymbar does: (n − t₀ + 1)/g.
    pub effective_samples: f64,
}

/// The start t₀ that maximises the effective samples (n − t₀ + 1)/g(t₀) (Chodera, J. Chem.
/// Theory Comput. 12, 1799, 2016), trying t₀ = `first`, `first` + `stride`, … below n − 1.
/// Equivalent to `pymbar.timeseries.detect_equilibration(x[first..], fast=True, nskip=stride)`
/// (in float64) when n − `first` ≤ `max_blocks`.
///
/// Longer series are first averaged in blocks of b = ⌈(n − first)/max_blocks⌉ samples on one
/// grid from `first`, the stride is rounded up to whole blocks, and the detection runs on the
/// block means, with each g(t₀) = b · g_b · σ_b² / σ² (see [`RunningSums::inefficiency`]). One
/// grid for every candidate means neighbouring candidates share their blocks, so the noise in
/// g moves them together and the chosen start does not jump between refreshes.
pub fn detect_start(
    x: &[f64],
    sums: &RunningSums,
    first: usize,
    stride: usize,
    max_blocks: usize,
) -> DetectedStart {
    let n = x.len();
    let first = first.min(n);
    let mut best = DetectedStart {
        index: first.min(n.saturating_sub(1)),
        inefficiency: 1.0,
        effective_samples: (n - first) as f64,
    };
    if n < 2 || first + 1 >= n {
        return best;
    }
    if x[first..].iter().all(|&v| v == x[first]) {
        // A constant series (pymbar's special case): start at the first candidate, g = 1.
        best.effective_samples = 1.0;
        return best;
    }
    let size = (n - first).div_ceil(max_blocks.max(1)).max(1);
    let count = (n - first) / size;
    let blocks = if size > 1 {
        sums.block_means(first, size, count)
    } else {
        Vec::new()
    };
    let stride = stride.max(1).div_ceil(size) * size;
    let mut found = false;
    let mut t0 = first;
    while t0 < n - 1 {
        let g = if size == 1 {
            super::equilibration::statistical_inefficiency(&x[t0..], true)
        } else {
            let k = (t0 - first) / size;
            let end = first + count * size;
            if count - k < 2 {
                break;
            }
            let var = sums.variance(t0, end);
            let b = &blocks[k..];
            let m = b.iter().sum::<f64>() / b.len() as f64;
            let var_b = b.iter().map(|v| (v - m) * (v - m)).sum::<f64>() / b.len() as f64;
            if var <= 0.0 {
                None
            } else if var_b <= 0.0 {
                Some(1.0)
            } else {
                let g_b = super::equilibration::statistical_inefficiency(b, true).unwrap_or(1.0);
                Some((size as f64 * g_b * var_b / var).max(1.0))
            }
        }
        .unwrap_or((n - t0 + 1) as f64);
        let neff = (n - t0 + 1) as f64 / g;
        if !found || neff > best.effective_samples {
            best = DetectedStart {
                index: t0,
                inefficiency: g,
                effective_samples: neff,
            };
            found = true;
        }
        t0 += stride;
    }
    best
}

/// The detection as the program runs it: the first 1 % left out, at most
/// [`CANDIDATE_STARTS`] candidates, g from at most [`SCAN_BLOCKS`] blocks.
pub fn detect_start_bounded(x: &[f64], sums: &RunningSums) -> DetectedStart {
    let n = x.len();
    let first = (n as f64 * DISCARDED_FRACTION).ceil() as usize;
    let stride = n.saturating_sub(first).div_ceil(CANDIDATE_STARTS).max(1);
    detect_start(x, sums, first, stride, SCAN_BLOCKS)
}

/// One level of the block-averaging curve.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct BlockLevel {
    /// Samples per block.
    pub block_size: usize,
    pub blocks: usize,
    /// Standard error of the mean read at this level, √(s²/m) over the m block means.
    pub stderr: f64,
}

/// The first and last thirds of the averaged part, compared.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct ThirdsCheck {
    pub first: Estimate,
    pub last: Estimate,
    /// |mean₁ − mean₃| / √(se₁² + se₃²).
    pub separation: f64,
    /// True when `separation` exceeds [`DRIFT_SIGMAS`].
    pub drifting: bool,
}

/// Statistics of samples `start..` of one series.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct SeriesStatistics {
    pub start: usize,
    pub samples: usize,
    pub mean: f64,
    /// √(σ² g / n).
    pub stderr: f64,
    /// Statistical inefficiency g, in samples of the series.
    pub inefficiency: f64,
    /// n / g.
    pub effective_samples: f64,
    /// Block-averaging curve (Flyvbjerg & Petersen, J. Chem. Phys. 91, 461, 1989).
    pub blocks: Vec<BlockLevel>,
    /// The curve's plateau: the largest error over levels with at least
    /// [`MIN_BLOCKS_PLATEAU`] blocks (a slightly conservative reading); NaN when no level has.
    pub block_plateau: f64,
    /// `None` with fewer than 6 samples.
    pub thirds: Option<ThirdsCheck>,
}

/// Mean and standard error of `a..b` from its statistical inefficiency.
fn estimate(x: &[f64], sums: &RunningSums, a: usize, b: usize, max_blocks: usize) -> (Estimate, f64) {
    let n = b - a;
    let mean = sums.mean(a, b);
    match sums.inefficiency(x, a, b, max_blocks, FINAL_SCHEDULE) {
        Some(g) => (
            Estimate {
                mean,
                stderr: (sums.variance(a, b) * g / n as f64).sqrt(),
            },
            g,
        ),
        None => (Estimate { mean, stderr: 0.0 }, 1.0),
    }
}

/// The block-averaging curve of `a..b`: block sizes 1, 2, 4, … while at least
/// [`MIN_BLOCKS_SHOWN`] blocks remain.
pub fn block_curve(sums: &RunningSums, a: usize, b: usize) -> Vec<BlockLevel> {
    let n = b - a;
    let mut out = Vec::new();
    let mut size = 1;
    while n / size >= MIN_BLOCKS_SHOWN {
        let m = n / size;
        let stderr = if size == 1 {
            // The sums give the count-divided variance σ²; s²/m = σ²/(m − 1).
            (sums.variance(a, a + m) / (m - 1) as f64).sqrt()
        } else {
            let means = sums.block_means(a, size, m);
            let mu = means.iter().sum::<f64>() / m as f64;
            let s2 = means.iter().map(|v| (v - mu) * (v - mu)).sum::<f64>() / (m - 1) as f64;
            (s2 / m as f64).sqrt()
        };
        out.push(BlockLevel {
            block_size: size,
            blocks: m,
            stderr,
        });
        size *= 2;
    }
    out
}

/// Statistics of `x[start..]`, using running sums `sums` of all of `x`.
pub fn statistics_from(x: &[f64], sums: &RunningSums, start: usize) -> SeriesStatistics {
    let n = x.len();
    let start = start.min(n);
    let samples = n - start;
    if samples == 0 {
        return SeriesStatistics {
            start,
            samples,
            mean: f64::NAN,
            stderr: f64::NAN,
            inefficiency: f64::NAN,
            effective_samples: 0.0,
            blocks: Vec::new(),
            block_plateau: f64::NAN,
            thirds: None,
        };
    }
    let (est, g) = estimate(x, sums, start, n, FINAL_BLOCKS);
    let blocks = block_curve(sums, start, n);
    let block_plateau = blocks
        .iter()
        .filter(|l| l.blocks >= MIN_BLOCKS_PLATEAU)
        .map(|l| l.stderr)
        .fold(f64::NAN, f64::max);
    let thirds = (samples >= 6).then(|| {
        let third = samples / 3;
        let (first, _) = estimate(x, sums, start, start + third, THIRD_BLOCKS);
        let (last, _) = estimate(x, sums, n - third, n, THIRD_BLOCKS);
        let combined = (first.stderr.powi(2) + last.stderr.powi(2)).sqrt();
        let diff = (first.mean - last.mean).abs();
        let separation = if combined > 0.0 {
            diff / combined
        } else if diff > 0.0 {
            f64::INFINITY
        } else {
            0.0
        };
        ThirdsCheck {
            first,
            last,
            separation,
            drifting: separation > DRIFT_SIGMAS,
        }
    });
    SeriesStatistics {
        start,
        samples,
        mean: est.mean,
        stderr: est.stderr,
        inefficiency: g,
        effective_samples: samples as f64 / g,
        blocks,
        block_plateau,
        thirds,
    }
}
