//! The integrator's stages as free functions over the arrays they touch.
//!
//! [`super::Simulation::step`] composes these with the neighbour-list stages
//! ([`super::neighbours::NeighbourList::needs_rebuild`], [`super::neighbours::NeighbourList::build`])
//! and the force stage ([`super::forces::compute`]); see [`super::stage_clock::Stage`] for the
//! names. Each function is element-wise or an ordered sum, so its result does not depend on the
//! number of threads, and none allocates.

use super::parallel::ELEMENTWISE_TASK;
use super::random::{Purpose, Stream};
use super::system::kinetic_energy;
use super::thermostat;
use rayon::prelude::*;

/// h/m and m of each type, divided once per kick instead of once per atom (the same
/// division, so the same bits).
pub struct KickFactors {
    factors: [(f64, f64); 256],
}

impl KickFactors {
    /// The factors of a kick of `h` for atoms of `masses` (at most 256 types).
    pub fn new(masses: &[f64], h: f64) -> KickFactors {
        let mut factors = [(0.0, 0.0); 256];
        for (f, &m) in factors.iter_mut().zip(masses) {
            *f = (h / m, m);
        }
        KickFactors { factors }
    }

    /// h/m and m of type `t`.
    #[inline(always)]
    pub fn get(&self, t: u8) -> (f64, f64) {
        self.factors[t as usize]
    }
}

/// B: v ← v + h F/m for every atom (`masses` per type, `types` per atom).
pub fn kick(velocities: &mut [[f64; 3]], forces: &[[f64; 3]], types: &[u8], masses: &[f64], h: f64) {
    let per_type = KickFactors::new(masses, h);
    velocities
        .par_iter_mut()
        .zip(forces.par_iter())
        .zip(types.par_iter())
        .with_min_len(ELEMENTWISE_TASK)
        .for_each(|((v, f), &t)| {
            let a = per_type.get(t).0;
            v[0] += a * f[0];
            v[1] += a * f[1];
            v[2] += a * f[2];
        });
}

/// A: x ← x + h v for every atom.
pub fn drift(positions: &mut [[f64; 3]], velocities: &[[f64; 3]], h: f64) {
    positions
        .par_iter_mut()
        .zip(velocities.par_iter())
        .with_min_len(ELEMENTWISE_TASK)
        .for_each(|(x, v)| {
            x[0] += h * v[0];
            x[1] += h * v[1];
            x[2] += h * v[2];
        });
}

/// One Langevin O-step: friction `gamma` and noise at temperature `target` over `dt`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LangevinO {
    pub dt: f64,
    pub gamma: f64,
    pub target: f64,
    /// Seed of the run and the step being taken: they key the atoms' random streams.
    pub seed: u64,
    pub step: u64,
}

/// O: v ← c₁ v + √((1 − c₁²) T/m) R with c₁ = exp(−γ dt) and R standard normal per component,
/// the exact solution of the Ornstein–Uhlenbeck part of BAOAB. Adds the kinetic energy it
/// changed to `heat`.
pub fn langevin_o(velocities: &mut [[f64; 3]], types: &[u8], masses: &[f64], o: &LangevinO, heat: &mut f64) {
    let before = kinetic_energy(velocities, types, masses);
    let c1 = (-o.gamma * o.dt).exp();
    let noise = (1.0 - c1 * c1).sqrt();
    let (seed, step, target) = (o.seed, o.step, o.target);
    velocities
        .par_iter_mut()
        .zip(types.par_iter())
        .enumerate()
        .with_min_len(ELEMENTWISE_TASK / 8)
        .for_each(|(i, (v, &t))| {
            let mut rng = Stream::new(seed, Purpose::Langevin, step, i as u64);
            let w = noise * (target / masses[t as usize]).sqrt();
            for x in v.iter_mut() {
                *x = c1 * *x + w * rng.normal();
            }
        });
    *heat += kinetic_energy(velocities, types, masses) - before;
}

/// One stochastic velocity-rescaling half-step: relaxation time `tau` towards temperature
/// `target` over `dt` (half the timestep), with `dof` degrees of freedom.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RescaleHalf {
    pub dt: f64,
    pub tau: f64,
    pub target: f64,
    pub dof: f64,
    /// Seed of the run, the step being taken and which half-step (0 before, 1 after): they key
    /// the random stream.
    pub seed: u64,
    pub step: u64,
    pub half: u64,
}

/// Draws a new kinetic energy ([`thermostat::rescaled_kinetic`]) and scales every velocity to
/// it; adds the kinetic energy it changed to `heat` and returns the new kinetic energy. Does
/// nothing when the atoms are at rest.
pub fn rescale_half(
    velocities: &mut [[f64; 3]],
    types: &[u8],
    masses: &[f64],
    r: &RescaleHalf,
    heat: &mut f64,
) -> f64 {
    let k = kinetic_energy(velocities, types, masses);
    if k <= 0.0 {
        return k;
    }
    let mut rng = thermostat::rescale_stream(r.seed, r.step, r.half);
    let k_new =
        thermostat::rescaled_kinetic(k, 0.5 * r.dof * r.target, r.dof, r.dt, r.tau, &mut rng).max(0.0);
    let alpha = (k_new / k).sqrt();
    velocities
        .par_iter_mut()
        .with_min_len(ELEMENTWISE_TASK)
        .for_each(|v| {
            for x in v.iter_mut() {
                *x *= alpha;
            }
        });
    *heat += k_new - k;
    k_new
}
