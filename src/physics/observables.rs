//! What is measured at each sample, in reduced units.

use serde::{Deserialize, Serialize};

/// One sample of the thermodynamic state. Energies are per atom.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct Observables {
    pub step: u64,
    /// Simulated time since step 0.
    pub time: f64,
    pub kinetic: f64,
    /// Pair energies of the potential mode plus the tail correction when enabled.
    pub potential: f64,
    pub total: f64,
    /// Total energy minus the heat the thermostat took out; constant in exact dynamics.
    pub conserved: f64,
    pub temperature: f64,
    /// Virial pressure (N k_B T + W/3)/V plus the tail correction when enabled.
    pub pressure: f64,
    /// (E_cons − E_cons(0)) / max(|E_cons(0)|, K(0)): relative drift of the conserved energy.
    pub drift: f64,
    /// Estimate of the potential energy per atom of the full, untruncated potential: the pair
    /// energies with the shift added back plus the tail correction (whether or not the run
    /// applies it). NaN for `ShiftedForce`, whose forces inside the cutoff differ too.
    #[serde(default)]
    pub full_potential: f64,
    /// Estimate of the pressure of the full potential: the virial pressure plus the tail
    /// correction. NaN for `ShiftedForce`.
    #[serde(default)]
    pub full_pressure: f64,
}
