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
/// Candidate starts lie in the first half of the samples (common practice): a start later than
/// that leaves too few samples to decide, and on the short stretches near the end g is often
/// estimated far too low, which makes a late candidate look best and keeps a run that has
/// equilibrated at "not yet" (seen on an 864-atom argon liquid: starts found at 91–95 % of runs
/// of 30,000 and 40,000 steps). A series that changes late is caught by the thirds check.
pub const LAST_CANDIDATE_FRACTION: f64 = 0.5;
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
    detect_start_up_to(x, sums, first, stride, max_blocks, usize::MAX)
}

/// [`detect_start`] with candidates only below `last`.
pub fn detect_start_up_to(
    x: &[f64],
    sums: &RunningSums,
    first: usize,
    stride: usize,
    max_blocks: usize,
    last: usize,
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
    let y: Vec<f64> = if size > 1 {
        sums.block_means(first, size, count)
    } else {
        x[first..].to_vec()
    };
    let stride_blocks = stride.max(1).div_ceil(size);
    // Candidate starts, in blocks from `first`: pymbar's `range(0, T - 1, nskip)` on the blocks
    // (and at least two blocks after each).
    let starts: Vec<usize> = (0..)
        .map(|j| j * stride_blocks)
        .take_while(|&c| {
            if size == 1 {
                c + first < n - 1
            } else {
                c + 2 <= count
            }
        })
        .take_while(|&c| first + c * size < last)
        .collect();
    let g_blocks = inefficiencies_fast(&y, &starts);
    let mut found = false;
    for (&c, g_b) in starts.iter().zip(g_blocks) {
        let t0 = first + c * size;
        let g = if size == 1 {
            g_b
        } else {
            let end = first + count * size;
            let var = sums.variance(t0, end);
            let yb = &y[c..];
            let m = yb.iter().sum::<f64>() / yb.len() as f64;
            let var_b = yb.iter().map(|v| (v - m) * (v - m)).sum::<f64>() / yb.len() as f64;
            if var <= 0.0 {
                None
            } else if var_b <= 0.0 {
                Some(1.0)
            } else {
                g_b.map(|g_b| (size as f64 * g_b * var_b / var).max(1.0))
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
    }
    best
}

/// The statistical inefficiency of `y[c..]` for every start `c` in `starts`, with pymbar's fast
/// lag schedule (as [`super::equilibration::statistical_inefficiency`] with `fast`), `None`
/// where the suffix has zero variance.
///
/// All suffixes share one pass over the series per lag: Σ_{i ≥ c} (y_i − m)(y_{i+t} − m) is
/// expanded into the suffix sum of y_i y_{i+t}, taken for every start in one backward sweep,
/// and suffix sums of y. The cost is O(n) per lag instead of O(n) per lag and start.
fn inefficiencies_fast(y: &[f64], starts: &[usize]) -> Vec<Option<f64>> {
    let n = y.len();
    // Shift by the mean: keeps the expanded products well conditioned.
    let shift = y.iter().sum::<f64>() / n as f64;
    let z: Vec<f64> = y.iter().map(|v| v - shift).collect();
    // suffix[k] = Σ_{i ≥ k} z_i.
    let mut suffix = vec![0.0; n + 1];
    for i in (0..n).rev() {
        suffix[i] = suffix[i + 1] + z[i];
    }
    struct State {
        c: usize,
        len: usize,
        mean: f64,
        var: f64,
        g: f64,
        active: bool,
    }
    let mut states: Vec<State> = starts
        .iter()
        .map(|&c| {
            let len = n - c;
            let mean = suffix[c] / len as f64;
            let var = z[c..].iter().map(|v| (v - mean) * (v - mean)).sum::<f64>() / len as f64;
            State {
                c,
                len,
                mean,
                var,
                g: 1.0,
                active: var > 0.0 && len >= 2,
            }
        })
        .collect();
    let mut partial = vec![0.0; starts.len()];
    let (mut t, mut step) = (1usize, 1usize);
    while states.iter().any(|s| s.active && t < s.len - 1) {
        // Σ_{i ≥ c, i + t < n} z_i z_{i+t} for each start c (starts ascend).
        let mut acc = 0.0;
        let mut j = starts.len();
        let mut i = n - t;
        while j > 0 {
            j -= 1;
            let c = starts[j];
            while i > c {
                i -= 1;
                acc += z[i] * z[i + t];
            }
            partial[j] = if c < n - t { acc } else { 0.0 };
        }
        for (s, &q) in states.iter_mut().zip(&partial) {
            if !s.active || t >= s.len - 1 {
                s.active = false;
                continue;
            }
            let m = s.mean;
            let pairs = (s.len - t) as f64;
            // Σ (z_i − m)(z_{i+t} − m) over i = c … n − 1 − t.
            let head = suffix[s.c] - suffix[n - t];
            let tail = suffix[s.c + t] - suffix[n];
            let cov = q - m * head - m * tail + pairs * m * m;
            let ct = cov / (pairs * s.var);
            if ct <= 0.0 && t > 3 {
                s.active = false;
                continue;
            }
            s.g += 2.0 * ct * (1.0 - t as f64 / s.len as f64) * step as f64;
        }
        t += step;
        step += 1;
    }
    states
        .iter()
        .map(|s| (s.var > 0.0).then_some(s.g.max(1.0)))
        .collect()
}

/// The detection as the program runs it: the first 1 % left out, candidates 1/[`CANDIDATE_STARTS`]
/// of the run apart in its first half ([`LAST_CANDIDATE_FRACTION`]; about 50 of them), g from
/// at most [`SCAN_BLOCKS`] blocks.
pub fn detect_start_bounded(x: &[f64], sums: &RunningSums) -> DetectedStart {
    let n = x.len();
    let first = (n as f64 * DISCARDED_FRACTION).ceil() as usize;
    let last = ((n as f64 * LAST_CANDIDATE_FRACTION) as usize).max(first + 1);
    // The stride of 100 candidates over the whole run, of which the first half is tried.
    let stride = n.saturating_sub(first).div_ceil(CANDIDATE_STARTS).max(1);
    detect_start_up_to(x, sums, first, stride, SCAN_BLOCKS, last)
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
fn estimate(sums: &RunningSums, a: usize, b: usize, max_blocks: usize) -> (Estimate, f64) {
    let n = b - a;
    let mean = sums.mean(a, b);
    match sums.inefficiency(a, b, max_blocks, FINAL_SCHEDULE) {
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

/// Sum and sum of squares of `v − shift`, in four independent lanes.
fn sums_of(v: &[f64], shift: f64) -> (f64, f64) {
    let (mut a, mut b) = ([0.0f64; 4], [0.0f64; 4]);
    let chunks = v.chunks_exact(4);
    let rest = chunks.remainder();
    for q in chunks {
        for k in 0..4 {
            let d = q[k] - shift;
            a[k] += d;
            b[k] += d * d;
        }
    }
    for &x in rest {
        let d = x - shift;
        a[0] += d;
        b[0] += d * d;
    }
    ((a[0] + a[1]) + (a[2] + a[3]), (b[0] + b[1]) + (b[2] + b[3]))
}

/// The block-averaging curve of `a..b`: block sizes 1, 2, 4, … while at least
/// [`MIN_BLOCKS_SHOWN`] blocks remain. `scratch` (half the stretch at most) is reused between
/// calls, so a refresh of several series faults its memory in once.
pub fn block_curve(sums: &RunningSums, a: usize, b: usize, scratch: &mut Vec<f64>) -> Vec<BlockLevel> {
    let n = b - a;
    let mut out = Vec::new();
    if n < MIN_BLOCKS_SHOWN {
        return out;
    }
    let x = &sums.series()[a..b];
    let shift = x[0];
    let level = |means: &[f64], size: usize| {
        let m = means.len() as f64;
        let (s1, s2) = sums_of(means, shift);
        let mean = s1 / m;
        let var = ((s2 - m * mean * mean) / (m - 1.0)).max(0.0);
        BlockLevel {
            block_size: size,
            blocks: means.len(),
            stderr: (var / m).sqrt(),
        }
    };
    out.push(level(x, 1));
    scratch.clear();
    scratch.extend(x.chunks_exact(2).map(|p| 0.5 * (p[0] + p[1])));
    let mut size = 2;
    while scratch.len() >= MIN_BLOCKS_SHOWN {
        out.push(level(scratch, size));
        let half = scratch.len() / 2;
        for i in 0..half {
            scratch[i] = 0.5 * (scratch[2 * i] + scratch[2 * i + 1]);
        }
        scratch.truncate(half);
        size *= 2;
    }
    out
}

/// Statistics of `x[start..]`, using running sums `sums` of all of `x`.
pub fn statistics_from(x: &[f64], sums: &RunningSums, start: usize) -> SeriesStatistics {
    statistics_with_scratch(x, sums, start, &mut Vec::new())
}

/// [`statistics_from`] with a scratch buffer reused across calls (see [`block_curve`]).
pub fn statistics_with_scratch(
    x: &[f64],
    sums: &RunningSums,
    start: usize,
    scratch: &mut Vec<f64>,
) -> SeriesStatistics {
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
    let (est, g) = estimate(sums, start, n, FINAL_BLOCKS);
    let blocks = block_curve(sums, start, n, scratch);
    let block_plateau = blocks
        .iter()
        .filter(|l| l.blocks >= MIN_BLOCKS_PLATEAU)
        .map(|l| l.stderr)
        .fold(f64::NAN, f64::max);
    let thirds = (samples >= 6).then(|| {
        let third = samples / 3;
        let (first, _) = estimate(sums, start, start + third, THIRD_BLOCKS);
        let (last, _) = estimate(sums, n - third, n, THIRD_BLOCKS);
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
