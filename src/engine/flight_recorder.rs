//! The flight recorder: the last frames before an alarm, so the approach to a blow-up can be
//! played back in the window.
//!
//! While the window runs a simulation the engine records a [`Frame`] every [`SPACING`] steps
//! into a ring of at most [`MAX_FRAMES`] frames within [`MEMORY_BUDGET_BYTES`] (fewer frames for
//! large systems). On an alarm the ring, with the alarm's own state as its last frame, goes to
//! the window as one [`FlightRecord`]; recording starts afresh after a rewind. The ring reuses
//! its frames' buffers, so recording allocates nothing once it is full.

use super::frame::Frame;
use crate::physics::Simulation;
use std::collections::VecDeque;

/// Steps between recorded frames.
pub const SPACING: u64 = 2;
/// Most frames kept (with [`SPACING`], the last 200 steps).
pub const MAX_FRAMES: usize = 100;
/// Memory the recorded frames may use (our own budget for a desktop session: a frame of
/// 32,000 atoms is about 0.7 MB, so the whole ring fits there; at a million atoms three frames do).
pub const MEMORY_BUDGET_BYTES: usize = 64 << 20;

/// The frames before an alarm, oldest first; the last is the state the alarm saw.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct FlightRecord {
    pub frames: Vec<Frame>,
    /// Steps between frames (the last two may be closer: the alarm's step is added).
    pub spacing: u64,
}

impl FlightRecord {
    /// Heap bytes the frames hold.
    pub fn bytes(&self) -> usize {
        self.frames.iter().map(|f| Frame::bytes_for(f.len())).sum()
    }
}

/// The ring of recent frames.
#[derive(Debug, Default)]
pub struct FlightRecorder {
    capacity: usize,
    frames: VecDeque<Frame>,
}

impl FlightRecorder {
    /// A recorder for `atoms` atoms: at most [`MAX_FRAMES`] frames within the budget, at least 2.
    pub fn new(atoms: usize) -> Self {
        FlightRecorder {
            capacity: (MEMORY_BUDGET_BYTES / Frame::bytes_for(atoms)).clamp(2, MAX_FRAMES),
            frames: VecDeque::new(),
        }
    }

    /// Frames the ring holds at most.
    pub fn capacity(&self) -> usize {
        self.capacity
    }

    /// Frames held now.
    pub fn len(&self) -> usize {
        self.frames.len()
    }

    /// Whether no frame is held.
    pub fn is_empty(&self) -> bool {
        self.frames.is_empty()
    }

    /// Whether a frame is due after `step`.
    pub fn due(step: u64) -> bool {
        step.is_multiple_of(SPACING)
    }

    /// Records the present state, dropping the oldest frame (and reusing its buffers) when full.
    pub fn record(&mut self, sim: &Simulation) {
        let mut f = if self.frames.len() >= self.capacity {
            self.frames.pop_front().unwrap_or_default()
        } else {
            Frame::default()
        };
        f.fill_from(sim);
        self.frames.push_back(f);
    }

    /// Forgets every frame (a new start or a rewind: the old frames no longer lead anywhere).
    pub fn clear(&mut self) {
        self.frames.clear();
    }

    /// Hands over the frames, with the state of `sim` (the alarm's) as the last one.
    pub fn take(&mut self, sim: &Simulation) -> FlightRecord {
        if self.frames.back().is_none_or(|f| f.step != sim.step_count()) {
            self.record(sim);
        }
        FlightRecord {
            frames: self.frames.drain(..).collect(),
            spacing: SPACING,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::bench::standard_liquid;

    #[test]
    fn the_ring_keeps_the_last_frames_and_ends_with_the_alarm_state() {
        let mut sim = Simulation::new(standard_liquid(500)).unwrap();
        let mut r = FlightRecorder::new(500);
        assert_eq!(r.capacity(), MAX_FRAMES);
        for _ in 0..301 {
            sim.step().unwrap();
            if FlightRecorder::due(sim.step_count()) {
                r.record(&sim);
            }
        }
        assert_eq!(r.len(), MAX_FRAMES);
        let rec = r.take(&sim);
        assert!(r.is_empty());
        let steps: Vec<u64> = rec.frames.iter().map(|f| f.step).collect();
        assert_eq!(steps.first(), Some(&104));
        assert_eq!(steps[steps.len() - 2..], [300, 301]);
        assert_eq!(rec.bytes(), rec.frames.len() * Frame::bytes_for(500));
        assert_eq!(FlightRecorder::new(1_000_000).capacity(), 3);
    }
}
