//! Log-spaced lags and the rule for which time origins to keep, shared by the mean squared
//! displacement and the velocity autocorrelation ([`crate::analysis::SelfMotion`]).
//!
//! Time is counted in samples. Level 0 holds the lags 0, 1, …, P; level k ≥ 1 the lags
//! P·2^(k−1) + j·2^k for j = 1 … P/2, so lags are spaced evenly on a log scale (P/2 per
//! doubling) up to P·2^K. An origin taken at sample s is kept while some level still needs it:
//! the largest k ≤ K with 2^k dividing s sets how long, P·2^k samples. So each level keeps about
//! P/2 origins of its own and at most P + 1 + K·P/2 origins are alive at any time, however long
//! the run: the memory is bounded by the schedule, not by the run length.

/// The lag schedule: P lags per level below the first doubling, K doubling levels.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct LagSchedule {
    /// Lags at level 0 (an even number ≥ 2).
    pub per_level: u64,
    /// Doubling levels above level 0.
    pub levels: u32,
}

impl Default for LagSchedule {
    /// 16 lags at level 0, 8 per doubling, 10 doublings: lags up to 16,384 samples, at most 97
    /// stored origins.
    fn default() -> Self {
        LagSchedule {
            per_level: 16,
            levels: 10,
        }
    }
}

impl LagSchedule {
    /// Number of lags in the schedule (lag 0 included).
    pub fn len(&self) -> usize {
        (self.per_level + 1 + self.levels as u64 * self.per_level / 2) as usize
    }

    /// Whether the schedule has no lags (never: lag 0 is always there).
    pub fn is_empty(&self) -> bool {
        false
    }

    /// Longest lag, in samples.
    pub fn max_lag(&self) -> u64 {
        self.per_level << self.levels
    }

    /// Most origins alive at once.
    pub fn max_origins(&self) -> usize {
        (self.per_level + 1 + self.levels as u64 * self.per_level / 2) as usize
    }

    /// Every lag, ascending, in samples.
    pub fn lags(&self) -> Vec<u64> {
        let p = self.per_level;
        let mut out: Vec<u64> = (0..=p).collect();
        for k in 1..=self.levels {
            let step = 1u64 << k;
            let base = p << (k - 1);
            out.extend((1..=p / 2).map(|j| base + j * step));
        }
        out
    }

    /// Position of `lag` in [`Self::lags`], or None when the schedule does not hold it.
    pub fn index(&self, lag: u64) -> Option<usize> {
        let p = self.per_level;
        if lag <= p {
            return Some(lag as usize);
        }
        if lag > self.max_lag() {
            return None;
        }
        // Smallest k with lag ≤ P·2^k.
        let mut k = 1u32;
        while lag > p << k {
            k += 1;
        }
        let step = 1u64 << k;
        let base = p << (k - 1);
        if !(lag - base).is_multiple_of(step) {
            return None;
        }
        Some((p + 1 + (k as u64 - 1) * p / 2 + (lag - base) / step - 1) as usize)
    }

    /// Whether the origin taken at sample `origin` is still needed at sample `now`.
    pub fn keeps(&self, origin: u64, now: u64) -> bool {
        let k = origin.trailing_zeros().min(self.levels);
        now - origin <= self.per_level << k
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn indices_match_the_lag_list() {
        let s = LagSchedule::default();
        let lags = s.lags();
        assert_eq!(lags.len(), s.len());
        assert_eq!(*lags.last().unwrap(), s.max_lag());
        for (i, &l) in lags.iter().enumerate() {
            assert_eq!(s.index(l), Some(i), "lag {l}");
        }
        let held = (0..=s.max_lag() + 3).filter(|&l| s.index(l).is_some()).count();
        assert_eq!(held, lags.len());
        assert!(lags.windows(2).all(|w| w[0] < w[1]));
    }

    #[test]
    fn every_lag_is_reached_from_kept_origins_and_memory_stays_bounded() {
        // Simulate the origin store over a run much longer than the longest lag: every lag of
        // the schedule gets pairs, and the store never exceeds its bound.
        let s = LagSchedule {
            per_level: 8,
            levels: 4,
        };
        let mut alive: Vec<u64> = Vec::new();
        let mut hits = vec![0u64; s.len()];
        let mut most = 0;
        for now in 0..2000u64 {
            alive.push(now);
            for &o in &alive {
                if let Some(i) = s.index(now - o) {
                    hits[i] += 1;
                }
            }
            alive.retain(|&o| s.keeps(o, now + 1));
            most = most.max(alive.len());
        }
        assert!(most <= s.max_origins(), "{most} > {}", s.max_origins());
        assert!(hits.iter().all(|&h| h > 0), "{hits:?}");
        // Level k lags get one new pair every 2^k samples at least.
        let last = s.index(s.max_lag()).unwrap();
        assert!(
            hits[last] >= (2000 - s.max_lag()) / (1 << s.levels),
            "{}",
            hits[last]
        );
    }
}
