//! The cost of one refresh of the equilibration evidence, for `noblescope bench --statistics`.

use crate::analysis::{SampleStore, StartChoice, analyse};
use crate::physics::Observables;
use crate::physics::random::{Purpose, Stream};
use serde::Serialize;
use std::time::Instant;

/// One refresh of all quantities, timed on one core.
#[derive(Clone, Debug, Serialize)]
pub struct StatisticsBench {
    pub samples: usize,
    /// Series shape: "relaxing" (a transient into correlated noise) or "drifting" (a steady
    /// trend, the costly case: its correlations never decay within the lags summed).
    pub shape: &'static str,
    /// Fastest and median of the timed refreshes, milliseconds.
    pub best_ms: f64,
    pub median_ms: f64,
    /// Bytes the store holds.
    pub store_bytes: usize,
}

/// A store of `samples` samples whose every quantity is AR(1) noise (φ = 0.95) plus a decaying
/// transient, or plus a steady drift.
fn store(samples: usize, drifting: bool) -> SampleStore {
    let mut r = Stream::new(5, Purpose::Rescale, 0, 0);
    let phi: f64 = 0.95;
    let kick = (1.0 - phi * phi).sqrt();
    let mut noise = [0.0f64; 7];
    let mut s = SampleStore::default();
    for i in 0..samples {
        for n in noise.iter_mut() {
            *n = phi * *n + kick * r.normal();
        }
        let t = i as f64 / samples as f64;
        let shape = if drifting {
            5.0 * t
        } else {
            5.0 * (-t * 50.0).exp()
        };
        s.push(&Observables {
            step: 10 * i as u64,
            time: 0.05 * i as f64,
            temperature: 1.0 + 0.01 * (noise[0] + shape),
            pressure: 0.5 + 0.05 * (noise[1] + shape),
            potential: -5.0 + 0.01 * (noise[2] + shape),
            total: -3.0 + 0.01 * (noise[3] + shape),
            conserved: -3.0 + 1e-5 * (noise[4] + shape),
            full_potential: -5.2 + 0.01 * (noise[5] + shape),
            full_pressure: 0.4 + 0.05 * (noise[6] + shape),
            ..Default::default()
        });
    }
    s
}

/// Times `repeats` refreshes of a store of `samples` samples of each shape.
pub fn measure(samples: usize, repeats: usize) -> Vec<StatisticsBench> {
    [false, true]
        .into_iter()
        .map(|drifting| {
            let s = store(samples, drifting);
            let mut times: Vec<f64> = (0..repeats.max(1))
                .map(|_| {
                    let t = Instant::now();
                    std::hint::black_box(analyse(&s, StartChoice::Automatic, true));
                    t.elapsed().as_secs_f64() * 1e3
                })
                .collect();
            times.sort_by(f64::total_cmp);
            StatisticsBench {
                samples,
                shape: if drifting { "drifting" } else { "relaxing" },
                best_ms: times[0],
                median_ms: times[times.len() / 2],
                store_bytes: s.bytes(),
            }
        })
        .collect()
}
