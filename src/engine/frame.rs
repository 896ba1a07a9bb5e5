//! Particle frames and the one-slot mailbox that hands the latest one to the window.
//!
//! The engine fills the slot only when the window has taken the previous frame, so at most one
//! frame is made per displayed frame; an untaken frame is overwritten in place, never queued.
//! Both sides swap buffers instead of allocating, so steady-state frames allocate nothing.

use crate::physics::{Simulation, Species};
use std::sync::Mutex;
use std::sync::atomic::{AtomicBool, Ordering};

/// What the particle views draw: folded positions, species and per-atom kinetic energy.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Frame {
    pub step: u64,
    /// Simulated time, τ.
    pub time_tau: f64,
    /// Box edge in σ.
    pub box_length: f32,
    /// Positions folded into [0, L)³, in σ.
    pub positions: Vec<[f32; 3]>,
    /// Species index of each atom into `kinds`.
    pub types: Vec<u8>,
    /// Kinetic energy of each atom in ε.
    pub kinetic: Vec<f32>,
    /// Speed of each atom in σ/τ.
    pub speed: Vec<f32>,
    pub kinds: Vec<Species>,
    /// σ of each species in reference σ (sphere sizes).
    pub sigmas: Vec<f32>,
}

impl Frame {
    /// Overwrites this frame with the simulation's present state, reusing the buffers.
    pub fn fill_from(&mut self, sim: &Simulation) {
        let s = sim.system();
        let l = s.box_length;
        self.step = sim.step_count();
        self.time_tau = sim.time();
        self.box_length = l as f32;
        self.positions.clear();
        self.positions.extend(s.positions.iter().map(|p| {
            let w = |x: f64| (x - l * (x / l).floor()) as f32;
            [w(p[0]), w(p[1]), w(p[2])]
        }));
        self.types.clear();
        self.types.extend_from_slice(&s.types);
        self.kinetic.clear();
        self.kinetic.extend((0..s.len()).map(|i| s.kinetic_of(i) as f32));
        self.speed.clear();
        self.speed.extend(
            s.velocities
                .iter()
                .map(|v| (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt() as f32),
        );
        self.kinds.clear();
        self.kinds.extend_from_slice(&s.kinds);
        let s0 = s.kinds[0].params().sigma_angstrom;
        self.sigmas.clear();
        self.sigmas
            .extend(s.kinds.iter().map(|k| (k.params().sigma_angstrom / s0) as f32));
    }

    /// Number of atoms.
    pub fn len(&self) -> usize {
        self.positions.len()
    }

    /// Heap bytes a frame of `atoms` atoms holds (positions, types, kinetic energy, speed).
    pub fn bytes_for(atoms: usize) -> usize {
        atoms * (12 + 1 + 4 + 4) + 128
    }

    /// Whether the frame holds no atoms.
    pub fn is_empty(&self) -> bool {
        self.positions.is_empty()
    }
}

/// A one-frame mailbox between the engine (writer) and the window (reader).
#[derive(Debug, Default)]
pub struct FrameMailbox {
    slot: Mutex<(Frame, bool)>,
    wanted: AtomicBool,
}

impl FrameMailbox {
    /// A mailbox that wants its first frame.
    pub fn new() -> Self {
        FrameMailbox {
            slot: Mutex::new((Frame::default(), false)),
            wanted: AtomicBool::new(true),
        }
    }

    /// Whether the reader has taken the last frame (the writer should make a new one).
    pub fn wants_frame(&self) -> bool {
        self.wanted.load(Ordering::Acquire)
    }

    /// Writes a frame into the slot with `fill`, replacing any frame not yet taken.
    pub fn publish(&self, fill: impl FnOnce(&mut Frame)) {
        let mut slot = self.slot.lock().unwrap_or_else(|p| p.into_inner());
        fill(&mut slot.0);
        slot.1 = true;
        self.wanted.store(false, Ordering::Release);
    }

    /// Swaps the newest frame into `into` if there is one not yet taken; returns whether it did.
    /// The reader's old buffers go back to the writer for reuse.
    pub fn take(&self, into: &mut Frame) -> bool {
        let mut slot = self.slot.lock().unwrap_or_else(|p| p.into_inner());
        let fresh = slot.1;
        if fresh {
            std::mem::swap(&mut slot.0, into);
            slot.1 = false;
        }
        self.wanted.store(true, Ordering::Release);
        fresh
    }
}
