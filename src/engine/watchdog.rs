//! The blow-up watchdog: catches non-finite energies, overlapping atoms and energy drift.

use crate::physics::{Blowup, Observables, Simulation};

/// Why the watchdog stopped a run.
#[derive(Clone, Debug, PartialEq)]
pub enum Alarm {
    /// Energy or forces became non-finite.
    NonFinite { step: u64, atoms: Vec<usize> },
    /// Some atom feels a force beyond the limit: atoms overlap, the run is about to explode.
    HugeForce {
        step: u64,
        force: f64,
        atoms: Vec<usize>,
    },
    /// The conserved energy drifted beyond the limit since the start.
    Drift { step: u64, drift: f64, limit: f64 },
}

impl Alarm {
    /// Step at which the alarm fired.
    pub fn step(&self) -> u64 {
        match *self {
            Alarm::NonFinite { step, .. } | Alarm::HugeForce { step, .. } | Alarm::Drift { step, .. } => step,
        }
    }

    /// One sentence for people.
    pub fn describe(&self) -> String {
        match self {
            Alarm::NonFinite { step, atoms } => format!(
                "step {step}: energy is no longer finite (atoms {atoms:?}); the run blew up. Rewind and lower the timestep."
            ),
            Alarm::HugeForce { step, force, atoms } => format!(
                "step {step}: force {force:.3e} ε/σ on atoms {atoms:?}: atoms overlap. Rewind and lower the timestep."
            ),
            Alarm::Drift { step, drift, limit } => format!(
                "step {step}: conserved energy drifted by {:.3}% (limit {:.3}%). Lower the timestep or use ShiftedForce.",
                drift * 100.0,
                limit * 100.0
            ),
        }
    }
}

/// Limits the watchdog enforces.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Watchdog {
    /// Largest force on one atom (ε/σ) before atoms are taken to overlap. At 1e5 two LJ atoms
    /// are closer than about 0.58 σ, which no thermal state reaches (common practice).
    pub force_limit: f64,
    /// |relative drift| of the conserved energy that raises an alarm; doubles after each alarm
    /// so a user who chooses to continue is not stopped again at once.
    pub drift_limit: f64,
}

impl Default for Watchdog {
    fn default() -> Self {
        Watchdog {
            force_limit: 1e5,
            drift_limit: 0.05,
        }
    }
}

impl Watchdog {
    /// Turns a blow-up into an alarm.
    pub fn blowup(b: &Blowup) -> Alarm {
        Alarm::NonFinite {
            step: b.step,
            atoms: b.atoms.clone(),
        }
    }

    /// Checks a sample; call at sample steps.
    pub fn check(&mut self, sim: &Simulation, o: &Observables) -> Option<Alarm> {
        if !(o.kinetic.is_finite() && o.potential.is_finite() && o.pressure.is_finite()) {
            return Some(Alarm::NonFinite {
                step: o.step,
                atoms: sim.strongest_forces(8),
            });
        }
        let f = sim.max_force();
        // Written so that a NaN force also trips the alarm.
        if f.is_nan() || f > self.force_limit {
            return Some(Alarm::HugeForce {
                step: o.step,
                force: f,
                atoms: sim.strongest_forces(4),
            });
        }
        if o.drift.abs() > self.drift_limit {
            let limit = self.drift_limit;
            self.drift_limit *= 2.0;
            return Some(Alarm::Drift {
                step: o.step,
                drift: o.drift,
                limit,
            });
        }
        None
    }
}
