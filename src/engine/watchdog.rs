//! The blow-up watchdog: catches non-finite energies, overlapping atoms and energy drift.

use super::protocol::Alarm;
use crate::physics::{Blowup, Observables, Simulation};

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
