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
    /// The "Structure and motion" panel over the view, its analyses running.
    Structure,
    /// The averages panel beside the view.
    Averages,
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

/// What a scripted watch wants done after this frame.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum WatchNext {
    /// Nothing yet.
    Wait,
    /// Take the picture into this file; the watch finishes once it is written.
    Screenshot(PathBuf),
    /// Write the report and close the window.
    Finish,
}

/// A scripted watch in progress: its plan, its measurements and whether it is done.
#[derive(Debug)]
pub struct Watching {
    plan: WatchPlan,
    recorder: WatchRecorder,
    /// The first view's name, for the report.
    view: String,
    done: bool,
}

impl Watching {
    /// Starts watching by `plan`, on the view named `view` ("3d", "slab", …).
    pub fn new(plan: WatchPlan, view: &str) -> Self {
        Watching {
            plan,
            recorder: WatchRecorder::new(),
            view: view.into(),
            done: false,
        }
    }

    /// Whether the last step was taken (the picture is asked for or the report written).
    pub fn done(&self) -> bool {
        self.done
    }

    /// The measurements.
    pub fn recorder_mut(&mut self) -> &mut WatchRecorder {
        &mut self.recorder
    }

    /// Whether to start the run on this frame (the first one drawn, if the plan says so).
    pub fn starts_run_now(&self, frames_drawn: u64) -> bool {
        !self.done && self.plan.run && frames_drawn == 1
    }

    /// Counts the frame drawn at `now` and says what comes next. `waiting`: something the
    /// picture must wait for is not there yet (a picture being taken, a tuning scan);
    /// `has_atoms`: the engine has sent a frame of atoms.
    pub fn step(&mut self, now: Instant, waiting: bool, has_atoms: bool) -> WatchNext {
        if self.done {
            return WatchNext::Wait;
        }
        let Some(n) = self.plan.frames else {
            return WatchNext::Wait;
        };
        self.recorder.frame(now);
        if waiting || self.recorder.measured() < n as usize {
            return WatchNext::Wait;
        }
        match &self.plan.screenshot {
            Some(p) if has_atoms => {
                self.done = true;
                WatchNext::Screenshot(p.clone())
            }
            Some(_) => WatchNext::Wait,
            None => {
                self.done = true;
                WatchNext::Finish
            }
        }
    }

    /// Prints the report's summary and writes the report if the plan asks for it; `shot` is
    /// the picture written (its path) or why it could not be.
    pub fn finish(&self, atoms: usize, shot: Option<Result<String, String>>) {
        let shot_name = match shot {
            Some(Ok(p)) => Some(p),
            Some(Err(e)) => {
                eprintln!("error: screenshot: {e}");
                None
            }
            None => None,
        };
        let report = self.recorder.report(atoms, &self.view, shot_name);
        eprintln!(
            "watch: {} frames, frame time p50 {:.1} ms, p95 {:.1} ms, max {:.1} ms; {:.3e} atom-steps/s while displayed",
            report.frames,
            report.frame_time_p50_ms,
            report.frame_time_p95_ms,
            report.frame_time_max_ms,
            report.atom_steps_per_second
        );
        if let Some(path) = &self.plan.report {
            let text = serde_json::to_string_pretty(&report).expect("a report serialises");
            if let Err(e) = std::fs::write(path, text) {
                eprintln!("error: {}: {e}", path.display());
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::time::Duration;

    fn plan(frames: Option<u32>, screenshot: Option<&str>) -> WatchPlan {
        WatchPlan {
            run: true,
            frames,
            report: None,
            screenshot: screenshot.map(PathBuf::from),
        }
    }

    #[test]
    fn a_watch_takes_its_picture_once_enough_frames_are_measured() {
        let mut w = Watching::new(plan(Some(2), Some("/tmp/shot.png")), "3d");
        assert!(w.starts_run_now(1) && !w.starts_run_now(2));
        let t0 = Instant::now();
        let at = |i: u64| t0 + Duration::from_millis(20 * i);
        let mut i = 0;
        while w.recorder.measured() < 2 {
            i += 1;
            assert_eq!(w.step(at(i), true, true), WatchNext::Wait, "frame {i} waits");
        }
        i += 1;
        assert_eq!(w.step(at(i), false, false), WatchNext::Wait, "waits for atoms");
        i += 1;
        assert_eq!(
            w.step(at(i), false, true),
            WatchNext::Screenshot("/tmp/shot.png".into())
        );
        assert!(w.done());
        assert_eq!(w.step(at(i + 1), false, true), WatchNext::Wait, "only once");
        assert!(!w.starts_run_now(1));
    }

    #[test]
    fn a_watch_without_picture_finishes_and_one_without_frames_never_does() {
        let mut w = Watching::new(plan(Some(0), None), "slab");
        assert_eq!(w.step(Instant::now(), false, false), WatchNext::Finish);
        let mut open_ended = Watching::new(plan(None, None), "3d");
        for _ in 0..50 {
            assert_eq!(open_ended.step(Instant::now(), false, true), WatchNext::Wait);
        }
        assert!(!open_ended.done());
    }

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
