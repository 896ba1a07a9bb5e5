//! A bounded store of the followed quantities over a whole run.
//!
//! A run of 10⁸ steps sampled every 10 steps makes 10⁷ samples; keeping them all would grow
//! without bound. The store keeps at most `capacity` entries per quantity. When it is full,
//! neighbouring entries are averaged pairwise and each entry from then on stands for twice as
//! many raw samples (its `width`). Averaging neighbours is the blocking transformation of
//! Flyvbjerg & Petersen (J. Chem. Phys. 91, 461, 1989): it keeps the mean exactly and the
//! standard error of the mean, and the statistical inefficiency in raw samples is the stored
//! one times the width. What is lost is resolution in time: the equilibration start can only
//! fall on an entry boundary, `width` raw samples apart.

use super::quantity::{QUANTITIES, Quantity};
use super::suffix::{KeptSums, RunningSums};
use crate::physics::Observables;

/// Entries kept per quantity by default: 2²⁰, so at most 72 MiB for the seven series with
/// their steps and times, and one refresh of the statistics stays under 50 ms (see
/// `noblescope bench --statistics`).
pub const DEFAULT_CAPACITY: usize = 1 << 20;

/// Raw samples still being averaged into the next entry.
#[derive(Clone, Debug, Default, PartialEq)]
struct Pending {
    step: u64,
    time: f64,
    sums: [f64; QUANTITIES],
    count: u64,
}

/// The followed quantities of every sample so far, coarsened pairwise when full.
#[derive(Clone, Debug, PartialEq)]
pub struct SampleStore {
    capacity: usize,
    /// Raw samples per finished entry.
    width: u64,
    /// Raw samples pushed, including those still pending.
    raw: u64,
    /// Step and time of each entry's first raw sample.
    steps: Vec<u64>,
    times: Vec<f64>,
    /// Entry means, one vector per quantity in [`Quantity::ALL`] order.
    values: [Vec<f64>; QUANTITIES],
    pending: Pending,
    /// Running sums of each quantity's entries, kept up to date as entries arrive.
    sums: [KeptSums; QUANTITIES],
}

impl Default for SampleStore {
    fn default() -> Self {
        SampleStore::new(DEFAULT_CAPACITY)
    }
}

impl SampleStore {
    /// An empty store of at most `capacity` entries (rounded up to an even number, at least 4).
    pub fn new(capacity: usize) -> SampleStore {
        let capacity = (capacity.max(4) + 1) & !1;
        SampleStore {
            capacity,
            width: 1,
            raw: 0,
            steps: Vec::new(),
            times: Vec::new(),
            values: Default::default(),
            pending: Pending::default(),
            sums: Default::default(),
        }
    }

    /// Adds one sample.
    pub fn push(&mut self, o: &Observables) {
        if self.pending.count == 0 {
            self.pending.step = o.step;
            self.pending.time = o.time;
        }
        for q in Quantity::ALL {
            self.pending.sums[q.index()] += q.of(o);
        }
        self.pending.count += 1;
        self.raw += 1;
        if self.pending.count == self.width {
            let p = std::mem::take(&mut self.pending);
            self.steps.push(p.step);
            self.times.push(p.time);
            for (v, s) in self.values.iter_mut().zip(p.sums) {
                v.push(s / self.width as f64);
            }
            if self.steps.len() >= self.capacity {
                self.coarsen();
            }
            if self.steps.len().is_multiple_of(super::suffix::STRIDE) {
                for (k, v) in self.sums.iter_mut().zip(&self.values) {
                    k.extend(v);
                }
            }
        }
    }

    /// Averages neighbouring entries pairwise; the width doubles.
    fn coarsen(&mut self) {
        let half = self.steps.len() / 2;
        for i in 0..half {
            self.steps[i] = self.steps[2 * i];
            self.times[i] = self.times[2 * i];
            for v in self.values.iter_mut() {
                v[i] = 0.5 * (v[2 * i] + v[2 * i + 1]);
            }
        }
        self.steps.truncate(half);
        self.times.truncate(half);
        for v in self.values.iter_mut() {
            v.truncate(half);
        }
        self.width *= 2;
        for (k, v) in self.sums.iter_mut().zip(&self.values) {
            k.rebuild(v);
        }
    }

    /// Finished entries.
    pub fn len(&self) -> usize {
        self.steps.len()
    }

    /// True before the first finished entry.
    pub fn is_empty(&self) -> bool {
        self.steps.is_empty()
    }

    /// Raw samples pushed so far.
    pub fn raw_samples(&self) -> u64 {
        self.raw
    }

    /// Raw samples per entry.
    pub fn width(&self) -> u64 {
        self.width
    }

    /// Largest number of entries kept.
    pub fn capacity(&self) -> usize {
        self.capacity
    }

    /// Entry means of `q`.
    pub fn values(&self, q: Quantity) -> &[f64] {
        &self.values[q.index()]
    }

    /// Running sums of `q`'s entries (O(1): kept up to date as entries arrive).
    pub fn sums(&self, q: Quantity) -> RunningSums<'_> {
        RunningSums::from_kept(&self.values[q.index()], &self.sums[q.index()])
    }

    /// Step of each entry's first sample.
    pub fn steps(&self) -> &[u64] {
        &self.steps
    }

    /// Time (τ) of each entry's first sample.
    pub fn times(&self) -> &[f64] {
        &self.times
    }

    /// First entry whose time is at or after `time` (τ); `len()` when none is.
    pub fn index_at_time(&self, time: f64) -> usize {
        self.times.partition_point(|&t| t < time)
    }

    /// Bytes held (for display).
    pub fn bytes(&self) -> usize {
        self.steps.capacity() * 8
            + self.times.capacity() * 8
            + self.values.iter().map(|v| v.capacity() * 8).sum::<usize>()
            + self.sums.iter().map(KeptSums::bytes).sum::<usize>()
    }
}

/// A store's contents, field by field, for writing into and reading from checkpoints.
#[derive(Clone, Debug, PartialEq)]
pub struct StoreParts {
    pub capacity: usize,
    pub width: u64,
    pub raw: u64,
    pub steps: Vec<u64>,
    pub times: Vec<f64>,
    pub values: [Vec<f64>; QUANTITIES],
    pub pending_step: u64,
    pub pending_time: f64,
    pub pending_sums: [f64; QUANTITIES],
    pub pending_count: u64,
}

impl SampleStore {
    /// The contents, to be written elsewhere.
    pub fn to_parts(&self) -> StoreParts {
        StoreParts {
            capacity: self.capacity,
            width: self.width,
            raw: self.raw,
            steps: self.steps.clone(),
            times: self.times.clone(),
            values: self.values.clone(),
            pending_step: self.pending.step,
            pending_time: self.pending.time,
            pending_sums: self.pending.sums,
            pending_count: self.pending.count,
        }
    }

    /// A store from its contents, refused (with the reason) unless they are consistent: an even
    /// capacity of 4 to [`DEFAULT_CAPACITY`], a power-of-two width, fewer entries than the
    /// capacity, arrays of one length, steps that do not decrease, fewer pending samples than
    /// the width, and a raw count that adds up.
    pub fn from_parts(p: StoreParts) -> Result<SampleStore, String> {
        let n = p.steps.len();
        if !(4..=DEFAULT_CAPACITY).contains(&p.capacity) || !p.capacity.is_multiple_of(2) {
            return Err(format!(
                "capacity {} (allowed: an even number from 4 to {DEFAULT_CAPACITY})",
                p.capacity
            ));
        }
        if !p.width.is_power_of_two() || p.width > 1 << 40 {
            return Err(format!("width {} (allowed: a power of two up to 2^40)", p.width));
        }
        if n >= p.capacity || p.times.len() != n || p.values.iter().any(|v| v.len() != n) {
            return Err(format!(
                "{n} entries (allowed: fewer than the capacity {}, one per array)",
                p.capacity
            ));
        }
        if p.steps.windows(2).any(|w| w[1] < w[0]) {
            return Err("steps that go back".into());
        }
        if p.pending_count >= p.width
            || (n as u64)
                .checked_mul(p.width)
                .and_then(|c| c.checked_add(p.pending_count))
                != Some(p.raw)
        {
            return Err(format!(
                "raw count {} (allowed: entries × width + pending = {} × {} + {})",
                p.raw, n, p.width, p.pending_count
            ));
        }
        let mut sums: [KeptSums; QUANTITIES] = Default::default();
        for (k, v) in sums.iter_mut().zip(&p.values) {
            k.rebuild(v);
        }
        Ok(SampleStore {
            capacity: p.capacity,
            width: p.width,
            raw: p.raw,
            steps: p.steps,
            times: p.times,
            values: p.values,
            pending: Pending {
                step: p.pending_step,
                time: p.pending_time,
                sums: p.pending_sums,
                count: p.pending_count,
            },
            sums,
        })
    }

    /// Forgets the entries that start after `step` and any pending samples (a rewind to
    /// `step`). An entry that starts at or before `step` but stands for later samples too is
    /// kept whole.
    pub fn truncate_after(&mut self, step: u64) {
        let keep = self.steps.partition_point(|&s| s <= step);
        self.steps.truncate(keep);
        self.times.truncate(keep);
        for v in self.values.iter_mut() {
            v.truncate(keep);
        }
        self.pending = Pending::default();
        self.raw = keep as u64 * self.width;
        for (k, v) in self.sums.iter_mut().zip(&self.values) {
            k.rebuild(v);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sample(step: u64, v: f64) -> Observables {
        Observables {
            step,
            time: step as f64 * 0.005,
            kinetic: 0.0,
            potential: v,
            total: 2.0 * v,
            conserved: -v,
            temperature: 1.0 + v,
            pressure: v * v,
            ..Default::default()
        }
    }

    #[test]
    fn keeps_the_mean_exactly_and_stays_within_capacity() {
        let mut s = SampleStore::new(8);
        let n = 1000u64;
        let mut sum = 0.0;
        for i in 0..n {
            let v = ((i * 37) % 101) as f64 / 7.0;
            sum += v;
            s.push(&sample(i * 10, v));
        }
        assert!(s.len() <= 8 && s.len() >= 4, "{}", s.len());
        assert_eq!(s.raw_samples(), n);
        // Entries cover whole widths from sample 0 on; the pending rest is not in them.
        let covered = s.len() as u64 * s.width();
        let mean_full: f64 =
            (0..covered).map(|i| ((i * 37) % 101) as f64 / 7.0).sum::<f64>() / covered as f64;
        let stored = s.values(Quantity::PotentialEnergy).iter().sum::<f64>() / s.len() as f64;
        assert!((stored - mean_full).abs() < 1e-12, "{stored} vs {mean_full}");
        assert!(sum > 0.0);
        assert_eq!(s.steps()[0], 0);
        assert_eq!(s.steps()[1], s.width() * 10);
    }

    #[test]
    fn parts_round_trip_and_inconsistent_parts_are_refused() {
        let mut s = SampleStore::new(8);
        for i in 0..21 {
            s.push(&sample(i * 10, i as f64));
        }
        let back = SampleStore::from_parts(s.to_parts()).unwrap();
        assert_eq!(back, s);
        let mut bad = s.to_parts();
        bad.raw += 1;
        assert!(SampleStore::from_parts(bad).unwrap_err().contains("raw count"));
        let mut bad = s.to_parts();
        bad.width = 3;
        assert!(SampleStore::from_parts(bad).is_err());
    }

    #[test]
    fn index_at_time_finds_the_first_entry_at_or_after() {
        let mut s = SampleStore::new(64);
        for i in 0..10 {
            s.push(&sample(i * 10, 0.0));
        }
        assert_eq!(s.index_at_time(0.0), 0);
        assert_eq!(s.index_at_time(0.05), 1);
        assert_eq!(s.index_at_time(0.051), 2);
        assert_eq!(s.index_at_time(1e9), 10);
    }
}
