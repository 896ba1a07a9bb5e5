//! Mean and standard error of correlated time series by block averaging.

use serde::{Deserialize, Serialize};

/// A mean with its standard error.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct Estimate {
    pub mean: f64,
    pub stderr: f64,
}

/// Mean and standard error by the blocking transformation of Flyvbjerg & Petersen,
/// J. Chem. Phys. 91, 461 (1989).
///
/// The series is halved repeatedly by averaging neighbours; the naive error of the mean grows
/// until blocks are longer than the correlation time, then levels off. The estimate returned is
/// the largest error over the levels that keep at least 16 blocks (common practice: a slightly
/// conservative reading of the plateau). Fewer than two samples give a NaN error.
pub fn block_average(series: &[f64]) -> Estimate {
    let n = series.len();
    if n == 0 {
        return Estimate {
            mean: f64::NAN,
            stderr: f64::NAN,
        };
    }
    let mean = series.iter().sum::<f64>() / n as f64;
    if n < 2 {
        return Estimate {
            mean,
            stderr: f64::NAN,
        };
    }
    let mut blocks: Vec<f64> = series.to_vec();
    let mut best = 0.0f64;
    while blocks.len() >= 16 || best == 0.0 {
        let m = blocks.len();
        if m < 2 {
            break;
        }
        let bm = blocks.iter().sum::<f64>() / m as f64;
        let var = blocks.iter().map(|x| (x - bm).powi(2)).sum::<f64>() / (m - 1) as f64;
        best = best.max((var / m as f64).sqrt());
        blocks = blocks.chunks_exact(2).map(|p| 0.5 * (p[0] + p[1])).collect();
    }
    Estimate { mean, stderr: best }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::random::{Purpose, Stream};

    #[test]
    fn independent_samples_give_sigma_over_root_n() {
        let mut s = Stream::new(3, Purpose::Rescale, 0, 0);
        let x: Vec<f64> = (0..1 << 14).map(|_| s.normal()).collect();
        let e = block_average(&x);
        let expected = 1.0 / (x.len() as f64).sqrt();
        assert!(
            (e.stderr / expected - 1.0).abs() < 0.25,
            "{} vs {}",
            e.stderr,
            expected
        );
    }

    #[test]
    fn correlated_samples_give_larger_error() {
        // AR(1) with φ = 0.9: the error of the mean is √((1+φ)/(1−φ)) ≈ 4.36 × the naive one
        // (standard result for a first-order autoregressive process).
        let mut s = Stream::new(4, Purpose::Rescale, 0, 0);
        let phi: f64 = 0.9;
        let mut x = 0.0;
        let series: Vec<f64> = (0..1 << 16)
            .map(|_| {
                x = phi * x + (1.0 - phi * phi).sqrt() * s.normal();
                x
            })
            .collect();
        let e = block_average(&series);
        let expected = ((1.0 + phi) / (1.0 - phi)).sqrt() / (series.len() as f64).sqrt();
        assert!(
            (e.stderr / expected - 1.0).abs() < 0.3,
            "{} vs {}",
            e.stderr,
            expected
        );
    }
}
