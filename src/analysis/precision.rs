//! Precision targets: a run may stop by itself once the standard errors it was asked for are
//! reached after the equilibration start.

use super::evidence::Evidence;
use super::quantity::Quantity;
use serde::{Deserialize, Serialize};

/// A wanted standard error of one quantity's mean, in reduced units.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct PrecisionTarget {
    pub quantity: Quantity,
    pub stderr: f64,
}

/// How far a target is from being met.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct TargetProgress {
    pub target: PrecisionTarget,
    /// The standard error now (NaN before there is one).
    pub stderr: f64,
    /// The standard error is at or below the target.
    pub met: bool,
    /// Raw samples still needed, predicted from the 1/√n law with the present statistical
    /// inefficiency: n_needed = n · (stderr / target)². `None` when unknown (no estimate yet).
    pub samples_needed: Option<u64>,
}

/// Progress of each target against the evidence.
pub fn progress(evidence: &Evidence, targets: &[PrecisionTarget]) -> Vec<TargetProgress> {
    targets
        .iter()
        .map(|&target| {
            let row = evidence.row(target.quantity);
            let stderr = row.stats.stderr;
            let met = stderr.is_finite() && stderr <= target.stderr;
            let raw_after = row.stats.samples as f64 * evidence.width as f64;
            let samples_needed = if met {
                Some(0)
            } else if stderr.is_finite() && raw_after > 0.0 {
                let ratio = stderr / target.stderr;
                Some((raw_after * (ratio * ratio - 1.0)).ceil().max(1.0) as u64)
            } else {
                None
            };
            TargetProgress {
                target,
                stderr,
                met,
                samples_needed,
            }
        })
        .collect()
}

/// True when there are targets, the run is called equilibrated, and every target is met. A run
/// that is not yet equilibrated or still drifting never stops for precision: its standard errors
/// describe a stretch that is not stationary.
pub fn all_met(evidence: &Evidence, progress: &[TargetProgress]) -> bool {
    !progress.is_empty() && evidence.overall.is_equilibrated() && progress.iter().all(|p| p.met)
}

/// Raw sample counts at which a run with targets checks them: 200, then every 200 samples or
/// 2 % more samples, whichever is more. The schedule depends on the sample count alone, so a
/// run continued from a checkpoint checks at the same counts, and stops at the same step, as
/// the run it continues. At 10⁶ samples a check (at most 50 ms) comes every 2·10⁴ samples.
pub fn is_check_point(raw_samples: u64) -> bool {
    let mut c = FIRST_CHECK;
    while c < raw_samples {
        c = next_check(c);
    }
    c == raw_samples
}

const FIRST_CHECK: u64 = 200;

fn next_check(c: u64) -> u64 {
    (c + 200).max(c + c / 50)
}

/// The check point after `raw_samples` (for schedules kept incrementally).
pub fn check_point_after(raw_samples: u64) -> u64 {
    let mut c = FIRST_CHECK;
    while c <= raw_samples {
        c = next_check(c);
    }
    c
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn check_points_are_200_apart_then_two_percent() {
        assert!(is_check_point(200));
        assert!(is_check_point(400));
        assert!(!is_check_point(401));
        assert_eq!(check_point_after(0), 200);
        assert_eq!(check_point_after(200), 400);
        let c = check_point_after(1_000_000);
        assert!(c > 1_000_000 && c <= 1_022_000, "{c}");
        assert!(is_check_point(c));
    }
}
