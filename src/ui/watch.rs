//! Scripted watching: open the window on a setup, optionally run it for a number of displayed
//! frames, then write a report (frame times, simulation speed while displayed) and a picture,
//! and close. Used by `noblescope watch` and the screenshot script.

use std::path::PathBuf;
use std::time::Instant;

/// Which part of the window to show first.
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum StartView {
    /// The box in 3D with the plots.
    #[value(name = "3d")]
    Box3d,
    /// The flat slab with the plots.
    Slab,
    /// The setup form opened beside the view.
    Setup,
    /// The tuning panel beside the view, with a scan of its default lists started at once.
    Tuning,
}

/// What a scripted watch does.
#[derive(Clone, Debug, PartialEq)]
pub struct WatchPlan {
    /// Start the run at once.
    pub run: bool,
    /// Close after this many displayed frames.
    pub frames: Option<u32>,
    /// Write the report JSON here.
    pub report: Option<PathBuf>,
    /// Save a PNG of the last frame here.
    pub screenshot: Option<PathBuf>,
}

impl WatchPlan {
    /// Whether the plan ends the program by itself.
    pub fn scripted(&self) -> bool {
        self.frames.is_some()
    }
}

/// The report a scripted watch writes.
#[derive(Clone, Debug, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct WatchReport {
    pub atoms: usize,
    /// Displayed frames counted (after the warm-up frames).
    pub frames: usize,
    /// Frames at the start left out of the statistics (shader compile, first upload).
    pub warmup_frames: usize,
    pub frame_time_p50_ms: f64,
    pub frame_time_p95_ms: f64,
    pub frame_time_max_ms: f64,
    pub frame_time_mean_ms: f64,
    /// Time spent building the UI each frame (before the GPU or software rasteriser draws it).
    pub ui_build_p50_ms: f64,
    pub ui_build_p95_ms: f64,
    /// Simulation speed over the displayed frames, from the engine's step counter.
    pub atom_steps_per_second: f64,
    pub steps_advanced: u64,
    pub wall_seconds: f64,
    pub view: String,
    pub screenshot: Option<String>,
}

/// Frames left out at the start.
pub const WARMUP_FRAMES: usize = 5;

/// Measures the real time between displayed frames and the steps the engine made meanwhile.
#[derive(Debug, Default)]
pub struct WatchRecorder {
    last: Option<Instant>,
    frames_seen: usize,
    /// Frame intervals in ms after warm-up.
    intervals: Vec<f64>,
    /// UI build times in ms after warm-up.
    builds: Vec<f64>,
    /// First and latest (time, step) seen from the engine while measuring.
    first_step: Option<(Instant, u64)>,
    last_step: Option<(Instant, u64)>,
}

impl WatchRecorder {
    /// A recorder that has seen nothing.
    pub fn new() -> Self {
        Self::default()
    }

    /// Call once per displayed frame.
    pub fn frame(&mut self, now: Instant) {
        if let Some(prev) = self.last
            && self.frames_seen > WARMUP_FRAMES
        {
            self.intervals.push((now - prev).as_secs_f64() * 1e3);
        }
        self.last = Some(now);
        self.frames_seen += 1;
    }

    /// Call with the time one UI build took.
    pub fn build_time(&mut self, d: std::time::Duration) {
        if self.frames_seen > WARMUP_FRAMES {
            self.builds.push(d.as_secs_f64() * 1e3);
        }
    }

    /// Call with every engine status step while measuring.
    pub fn step(&mut self, now: Instant, step: u64) {
        if self.frames_seen > WARMUP_FRAMES {
            if self.first_step.is_none() {
                self.first_step = Some((now, step));
            }
            self.last_step = Some((now, step));
        }
    }

    /// Frame intervals measured so far.
    pub fn measured(&self) -> usize {
        self.intervals.len()
    }

    /// The report for `atoms` atoms.
    pub fn report(&self, atoms: usize, view: &str, screenshot: Option<String>) -> WatchReport {
        let sorted = |x: &[f64]| {
            let mut v = x.to_vec();
            v.sort_by(|a, b| a.partial_cmp(b).unwrap_or(std::cmp::Ordering::Equal));
            v
        };
        let at = |v: &[f64], p: f64| -> f64 {
            if v.is_empty() {
                return 0.0;
            }
            let k = ((p / 100.0) * (v.len() - 1) as f64).round() as usize;
            v[k.min(v.len() - 1)]
        };
        let v = sorted(&self.intervals);
        let b = sorted(&self.builds);
        let pct = |p: f64| at(&v, p);
        let (steps, secs) = match (self.first_step, self.last_step) {
            (Some((t0, s0)), Some((t1, s1))) if t1 > t0 => (s1.saturating_sub(s0), (t1 - t0).as_secs_f64()),
            _ => (0, 0.0),
        };
        WatchReport {
            atoms,
            frames: v.len(),
            warmup_frames: WARMUP_FRAMES,
            frame_time_p50_ms: pct(50.0),
            frame_time_p95_ms: pct(95.0),
            frame_time_max_ms: v.last().copied().unwrap_or(0.0),
            ui_build_p50_ms: at(&b, 50.0),
            ui_build_p95_ms: at(&b, 95.0),
            frame_time_mean_ms: if v.is_empty() {
                0.0
            } else {
                v.iter().sum::<f64>() / v.len() as f64
            },
            atom_steps_per_second: if secs > 0.0 {
                steps as f64 * atoms as f64 / secs
            } else {
                0.0
            },
            steps_advanced: steps,
            wall_seconds: secs,
            view: view.into(),
            screenshot,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::time::Duration;

    #[test]
    fn measures_intervals_after_warmup_and_rates_from_steps() {
        let mut r = WatchRecorder::new();
        let t0 = Instant::now();
        for i in 0..(WARMUP_FRAMES + 21) {
            let t = t0 + Duration::from_millis(20 * i as u64 + if i >= WARMUP_FRAMES + 10 { 30 } else { 0 });
            r.frame(t);
            r.step(t, 100 * i as u64);
        }
        let rep = r.report(1000, "3d", None);
        assert_eq!(rep.frames, 20);
        assert!((rep.frame_time_p50_ms - 20.0).abs() < 1e-6, "{rep:?}");
        assert!((rep.frame_time_max_ms - 50.0).abs() < 1e-6, "{rep:?}");
        // 100 steps per 20 ms of 1000 atoms = 5e6 atom-steps/s.
        assert!((rep.atom_steps_per_second - 5e6).abs() / 5e6 < 0.1, "{rep:?}");
    }

    #[test]
    fn empty_recorder_reports_zeros() {
        let rep = WatchRecorder::new().report(10, "slab", None);
        assert_eq!(rep.frames, 0);
        assert_eq!(rep.frame_time_p95_ms, 0.0);
    }
}
