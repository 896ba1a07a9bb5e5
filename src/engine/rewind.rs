//! The rewind buffer: a few exact snapshots of recent, healthy states.

use crate::physics::SimulationState;
use std::collections::VecDeque;

/// Snapshots taken every `every` steps, at most `capacity` of them.
#[derive(Clone, Debug)]
pub struct RewindBuffer {
    every: u64,
    capacity: usize,
    snapshots: VecDeque<SimulationState>,
}

/// Memory the buffer may use in all (common-practice budget for a desktop session).
pub const MEMORY_BUDGET_BYTES: usize = 512 * 1024 * 1024;

impl RewindBuffer {
    /// A buffer for `atoms` atoms: up to 8 snapshots within [`MEMORY_BUDGET_BYTES`].
    pub fn new(atoms: usize, every: u64) -> Self {
        let per = 73 * atoms.max(1) + 256;
        RewindBuffer {
            every: every.max(1),
            capacity: (MEMORY_BUDGET_BYTES / per).clamp(1, 8),
            snapshots: VecDeque::new(),
        }
    }

    /// Whether a snapshot is due at `step`.
    pub fn due(&self, step: u64) -> bool {
        step.is_multiple_of(self.every) && self.snapshots.back().is_none_or(|s| s.step != step)
    }

    /// Stores a snapshot, dropping the oldest beyond capacity.
    pub fn push(&mut self, state: SimulationState) {
        if self.snapshots.len() == self.capacity {
            self.snapshots.pop_front();
        }
        self.snapshots.push_back(state);
    }

    /// The newest snapshot strictly before `step`, dropping every newer one.
    pub fn rewind_before(&mut self, step: u64) -> Option<SimulationState> {
        while let Some(s) = self.snapshots.back() {
            if s.step < step {
                return Some(s.clone());
            }
            self.snapshots.pop_back();
        }
        None
    }

    /// The newest snapshot at or before `step` (exactly `step` when one is held there),
    /// dropping every newer one.
    pub fn rewind_to(&mut self, step: u64) -> Option<SimulationState> {
        self.rewind_before(step + 1)
    }

    /// Step and time of each snapshot held, oldest first.
    pub fn marks(&self) -> impl Iterator<Item = (u64, f64)> + '_ {
        self.snapshots.iter().map(|s| (s.step, s.time))
    }

    /// Heap bytes the snapshots hold (as [`RewindBuffer::new`] budgets them).
    pub fn bytes(&self) -> usize {
        self.snapshots.iter().map(|s| 73 * s.positions.len() + 256).sum()
    }

    /// Number of snapshots held.
    pub fn len(&self) -> usize {
        self.snapshots.len()
    }

    /// Whether no snapshot is held.
    pub fn is_empty(&self) -> bool {
        self.snapshots.is_empty()
    }
}
