//! Bounded sample stores for long runs.
//!
//! [`EnvelopeSeries`] keeps a plotted quantity in at most a fixed number of buckets. When it is
//! full, neighbouring buckets merge pairwise, so old samples are coarsened while every bucket
//! still remembers its lowest and highest point: spikes never disappear from the plot.
//! [`ThinnedLog`] keeps raw samples for export, halving its density when full.

use egui_plot::PlotPoint;

/// One bucket: the first and last x it covers and its extreme points.
#[derive(Clone, Copy, Debug, PartialEq)]
struct Bucket {
    min: [f64; 2],
    max: [f64; 2],
    /// Raw points merged into this bucket.
    count: u64,
}

impl Bucket {
    fn single(p: [f64; 2]) -> Self {
        Bucket {
            min: p,
            max: p,
            count: 1,
        }
    }

    fn merge(a: Bucket, b: Bucket) -> Bucket {
        Bucket {
            min: if b.min[1] < a.min[1] { b.min } else { a.min },
            max: if b.max[1] > a.max[1] { b.max } else { a.max },
            count: a.count + b.count,
        }
    }
}

/// A plotted series whose memory is bounded, keeping the min/max envelope of what it has seen.
#[derive(Clone, Debug)]
pub struct EnvelopeSeries {
    buckets: Vec<Bucket>,
    /// The bucket still being filled.
    pending: Option<Bucket>,
    /// Raw points per finished bucket (doubles at each merge).
    width: u64,
    capacity: usize,
    /// Points for the plot, rebuilt only when the data changed.
    cache: Vec<PlotPoint>,
    dirty: bool,
}

impl EnvelopeSeries {
    /// A series of at most `capacity` buckets (at least 4); it plots at most twice that many points.
    pub fn new(capacity: usize) -> Self {
        let capacity = capacity.max(4) & !1;
        EnvelopeSeries {
            buckets: Vec::with_capacity(capacity + 1),
            pending: None,
            width: 1,
            capacity,
            cache: Vec::new(),
            dirty: true,
        }
    }

    /// Forgets every point.
    pub fn clear(&mut self) {
        self.buckets.clear();
        self.pending = None;
        self.width = 1;
        self.dirty = true;
    }

    /// Appends a point; x must not decrease.
    pub fn push(&mut self, x: f64, y: f64) {
        let p = Bucket::single([x, y]);
        let b = match self.pending.take() {
            Some(b) => Bucket::merge(b, p),
            None => p,
        };
        if b.count >= self.width {
            self.buckets.push(b);
            if self.buckets.len() >= self.capacity {
                self.halve();
            }
        } else {
            self.pending = Some(b);
        }
        self.dirty = true;
    }

    fn halve(&mut self) {
        let n = self.buckets.len() / 2;
        for i in 0..n {
            self.buckets[i] = Bucket::merge(self.buckets[2 * i], self.buckets[2 * i + 1]);
        }
        let odd = self.buckets.len() % 2 == 1;
        if odd {
            self.buckets[n] = self.buckets[2 * n];
        }
        self.buckets.truncate(n + odd as usize);
        self.width *= 2;
    }

    /// Drops every bucket that reaches past `x` (after a rewind). A bucket that straddles `x`
    /// goes too: the plot may lose a little just before the cut, never show data after it.
    pub fn cut_after(&mut self, x: f64) {
        let past = |b: &Bucket| b.min[0].max(b.max[0]) > x;
        if let Some(k) = self.buckets.iter().position(past) {
            self.buckets.truncate(k);
            self.pending = None;
        } else if self.pending.as_ref().is_some_and(past) {
            self.pending = None;
        }
        self.dirty = true;
    }

    /// Raw points seen since the last clear.
    pub fn seen(&self) -> u64 {
        self.buckets
            .iter()
            .chain(self.pending.iter())
            .map(|b| b.count)
            .sum()
    }

    /// Buckets held (bounded by the capacity).
    pub fn buckets(&self) -> usize {
        self.buckets.len() + self.pending.is_some() as usize
    }

    /// The smallest and largest y seen, if any.
    pub fn y_range(&self) -> Option<(f64, f64)> {
        let mut it = self.buckets.iter().chain(self.pending.iter());
        let first = it.next()?;
        Some(it.fold((first.min[1], first.max[1]), |(lo, hi), b| {
            (lo.min(b.min[1]), hi.max(b.max[1]))
        }))
    }

    /// The points to draw, in x order: each bucket's minimum and maximum.
    pub fn points(&mut self) -> &[PlotPoint] {
        if self.dirty {
            self.cache.clear();
            for b in self.buckets.iter().chain(self.pending.iter()) {
                let (a, c) = if b.min[0] <= b.max[0] {
                    (b.min, b.max)
                } else {
                    (b.max, b.min)
                };
                self.cache.push(PlotPoint::new(a[0], a[1]));
                if c != a {
                    self.cache.push(PlotPoint::new(c[0], c[1]));
                }
            }
            self.dirty = false;
        }
        &self.cache
    }
}

/// Raw samples kept for export, bounded: when full, every second sample is dropped and from
/// then on only every `stride`-th incoming sample is kept, so the log stays evenly spaced.
#[derive(Clone, Debug)]
pub struct ThinnedLog<T> {
    items: Vec<T>,
    capacity: usize,
    stride: u64,
    offered: u64,
}

impl<T: Copy> ThinnedLog<T> {
    /// A log of at most `capacity` samples (at least 2).
    pub fn new(capacity: usize) -> Self {
        ThinnedLog {
            items: Vec::new(),
            capacity: capacity.max(2),
            stride: 1,
            offered: 0,
        }
    }

    /// Forgets every sample.
    pub fn clear(&mut self) {
        self.items.clear();
        self.stride = 1;
        self.offered = 0;
    }

    /// Offers a sample; it is kept if it falls on the present stride.
    pub fn push(&mut self, item: T) {
        if self.offered.is_multiple_of(self.stride) {
            if self.items.len() >= self.capacity {
                let mut k = 0;
                for i in (0..self.items.len()).step_by(2) {
                    self.items[k] = self.items[i];
                    k += 1;
                }
                self.items.truncate(k);
                self.stride *= 2;
            }
            if self.offered.is_multiple_of(self.stride) {
                self.items.push(item);
            }
        }
        self.offered += 1;
    }

    /// Keeps the leading samples for which `keep` holds and drops the rest.
    pub fn keep_while(&mut self, keep: impl Fn(&T) -> bool) {
        let k = self
            .items
            .iter()
            .position(|t| !keep(t))
            .unwrap_or(self.items.len());
        self.items.truncate(k);
    }

    /// Kept samples, oldest first.
    pub fn items(&self) -> &[T] {
        &self.items
    }

    /// One kept sample per this many offered (1 until the log first filled).
    pub fn stride(&self) -> u64 {
        self.stride
    }

    /// Samples offered since the last clear.
    pub fn offered(&self) -> u64 {
        self.offered
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rewinding_cuts_points_after_the_cut() {
        let mut s = EnvelopeSeries::new(8);
        for i in 0..100 {
            s.push(i as f64, (i % 7) as f64);
        }
        s.cut_after(40.0);
        assert!(s.points().iter().all(|p| p.x <= 40.0));
        assert!(!s.points().is_empty());
        s.push(41.0, 3.0);
        assert_eq!(s.points().last().map(|p| p.x), Some(41.0));
        let mut log = ThinnedLog::new(10);
        for i in 0..8u32 {
            log.push(i);
        }
        log.keep_while(|&v| v <= 4);
        assert_eq!(log.items(), &[0, 1, 2, 3, 4]);
    }

    #[test]
    fn stays_bounded_over_a_long_run() {
        let mut s = EnvelopeSeries::new(64);
        for i in 0..1_000_000u64 {
            s.push(i as f64, (i as f64 * 0.01).sin());
        }
        assert!(s.buckets() <= 64, "{} buckets", s.buckets());
        assert!(s.points().len() <= 128);
        assert_eq!(s.seen(), 1_000_000);
    }

    #[test]
    fn keeps_a_single_spike_after_heavy_decimation() {
        let mut s = EnvelopeSeries::new(16);
        for i in 0..100_000u64 {
            let y = if i == 12_345 {
                50.0
            } else if i == 77_777 {
                -40.0
            } else {
                0.0
            };
            s.push(i as f64, y);
        }
        let pts = s.points();
        assert!(
            pts.iter().any(|p| p.y == 50.0 && p.x == 12_345.0),
            "the maximum is lost"
        );
        assert!(
            pts.iter().any(|p| p.y == -40.0 && p.x == 77_777.0),
            "the minimum is lost"
        );
        assert_eq!(s.y_range(), Some((-40.0, 50.0)));
    }

    #[test]
    fn points_come_out_in_x_order() {
        let mut s = EnvelopeSeries::new(8);
        for i in 0..1000u64 {
            s.push(i as f64, ((i * 7919) % 101) as f64);
        }
        let pts = s.points();
        assert!(pts.windows(2).all(|w| w[0].x <= w[1].x));
    }

    #[test]
    fn short_series_are_kept_exactly() {
        let mut s = EnvelopeSeries::new(100);
        for i in 0..10 {
            s.push(i as f64, i as f64 * 2.0);
        }
        let pts: Vec<(f64, f64)> = s.points().iter().map(|p| (p.x, p.y)).collect();
        assert_eq!(
            pts,
            (0..10).map(|i| (i as f64, i as f64 * 2.0)).collect::<Vec<_>>()
        );
        s.clear();
        assert!(s.points().is_empty());
    }

    #[test]
    fn thinned_log_is_bounded_and_evenly_spaced() {
        let mut log = ThinnedLog::new(100);
        for i in 0..10_000u64 {
            log.push(i);
        }
        assert!(log.items().len() <= 100);
        let stride = log.stride();
        assert!(stride > 1);
        assert!(
            log.items()
                .iter()
                .enumerate()
                .all(|(k, &v)| v == k as u64 * stride),
            "{:?}",
            &log.items()[..10]
        );
        assert_eq!(log.offered(), 10_000);
    }

    #[test]
    fn thinned_log_keeps_everything_below_capacity() {
        let mut log = ThinnedLog::new(100);
        for i in 0..100u64 {
            log.push(i);
        }
        assert_eq!(log.items().len(), 100);
        assert_eq!(log.stride(), 1);
    }
}
