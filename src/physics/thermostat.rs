//! Thermostats: the kinds, and the stochastic-rescaling draw with its random stream (the thermostat
//! stages that apply them, the rescale half-step and the Langevin O-step, are in [`super::stages`]).

use super::random::{Purpose, Stream};
use serde::{Deserialize, Serialize};

/// How (and whether) the temperature is controlled, in reduced units.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub enum Thermostat {
    /// Plain velocity Verlet, constant energy (NVE).
    None,
    /// Stochastic velocity rescaling (Bussi, Donadio & Parrinello, J. Chem. Phys. 126, 014101,
    /// 2007) with relaxation time `tau`, applied as two half-steps around velocity Verlet.
    StochasticRescale { target: f64, tau: f64 },
    /// Langevin dynamics with friction `gamma`, integrated by the BAOAB splitting (Leimkuhler &
    /// Matthews, Appl. Math. Res. Express 2013, 34).
    Langevin { target: f64, gamma: f64 },
}

impl Thermostat {
    /// Target temperature, if any.
    pub fn target(&self) -> Option<f64> {
        match *self {
            Thermostat::None => None,
            Thermostat::StochasticRescale { target, .. } | Thermostat::Langevin { target, .. } => {
                Some(target)
            }
        }
    }
}

/// New kinetic energy drawn by stochastic velocity rescaling over a time `dt`.
///
/// `kinetic` is the present kinetic energy, `target` the kinetic energy at the target
/// temperature (dof·T/2), `dof` the degrees of freedom. This is Eq. (A7) of Bussi et al. (2007):
/// K' = K + (1−c)(K̄ (R₁² + S)/N_f − K) + 2R₁ √(K K̄ c(1−c)/N_f), c = exp(−dt/τ), where S is a
/// sum of N_f − 1 squared normals, drawn as 2·Gamma((N_f−1)/2).
pub fn rescaled_kinetic(kinetic: f64, target: f64, dof: f64, dt: f64, tau: f64, stream: &mut Stream) -> f64 {
    let c = (-dt / tau).exp();
    let r1 = stream.normal();
    let rest = dof - 1.0;
    let s = if rest >= 2.0 {
        2.0 * stream.gamma(rest / 2.0)
    } else {
        (0..rest as usize).map(|_| stream.normal().powi(2)).sum()
    };
    kinetic
        + (1.0 - c) * (target * (r1 * r1 + s) / dof - kinetic)
        + 2.0 * r1 * (kinetic * target / dof * (1.0 - c) * c).sqrt()
}

/// The random stream of the rescaling half-step `half` (0 or 1) of step `step`.
pub fn rescale_stream(seed: u64, step: u64, half: u64) -> Stream {
    Stream::new(seed, Purpose::Rescale, step, half)
}
