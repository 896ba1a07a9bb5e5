//! The Lennard-Jones pair potential: modes, per-pair tables and tail corrections.

use serde::{Deserialize, Serialize};
use std::f64::consts::PI;

/// How the pair potential is cut at the cutoff distance r_c.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default, Serialize, Deserialize)]
pub enum PotentialMode {
    /// U(r) for r < r_c, zero beyond: energy and force jump at r_c.
    Truncated,
    /// U(r) − U(r_c): continuous energy, force still jumps at r_c.
    #[default]
    TruncatedShifted,
    /// U(r) − U(r_c) − (r − r_c) U'(r_c): energy and force both go smoothly to zero.
    ShiftedForce,
}

impl PairParams {
    /// 4ε.
    #[inline(always)]
    pub fn eps4(&self) -> f64 {
        self.eps4
    }
    /// σ².
    #[inline(always)]
    pub fn sigma2(&self) -> f64 {
        self.sigma2
    }
    /// Energy subtracted inside the cutoff.
    #[inline(always)]
    pub fn energy_shift(&self) -> f64 {
        self.energy_shift
    }
    /// Force magnitude at the cutoff (ShiftedForce only, else 0).
    #[inline(always)]
    pub fn force_at_cutoff(&self) -> f64 {
        self.force_at_cutoff
    }
}

impl PotentialMode {
    /// Every mode, in the order the setup form lists them.
    pub const ALL: [PotentialMode; 3] = [
        PotentialMode::Truncated,
        PotentialMode::TruncatedShifted,
        PotentialMode::ShiftedForce,
    ];
}

/// Lennard-Jones parameters of one pair of species, in reduced units.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PairParams {
    pub epsilon: f64,
    pub sigma: f64,
    /// 4ε, the prefactor of the potential.
    eps4: f64,
    /// σ².
    sigma2: f64,
    /// Energy subtracted inside the cutoff (zero for `Truncated`).
    energy_shift: f64,
    /// For `ShiftedForce`: the force magnitude at r_c (F(r_c) = −U'(r_c)); zero otherwise.
    force_at_cutoff: f64,
}

/// The full Lennard-Jones potential U(r) = 4ε[(σ/r)¹² − (σ/r)⁶].
pub fn lj_energy(epsilon: f64, sigma: f64, r: f64) -> f64 {
    let s6 = (sigma / r).powi(6);
    4.0 * epsilon * (s6 * s6 - s6)
}

/// The full Lennard-Jones force magnitude F(r) = −dU/dr (positive is repulsive).
pub fn lj_force(epsilon: f64, sigma: f64, r: f64) -> f64 {
    let s6 = (sigma / r).powi(6);
    24.0 * epsilon * (2.0 * s6 * s6 - s6) / r
}

/// Pair parameters for every pair of species, with one global cutoff.
#[derive(Clone, Debug, PartialEq)]
pub struct PairTable {
    types: usize,
    pairs: Vec<PairParams>,
    mode: PotentialMode,
    cutoff: f64,
    cutoff2: f64,
}

impl PairTable {
    /// Builds the table from per-species ε and σ (reduced) with Lorentz–Berthelot combining
    /// rules: σ_ab = (σ_a + σ_b)/2, ε_ab = √(ε_a ε_b).
    pub fn lorentz_berthelot(epsilon: &[f64], sigma: &[f64], cutoff: f64, mode: PotentialMode) -> Self {
        let types = epsilon.len();
        let mut pairs = Vec::with_capacity(types * types);
        for a in 0..types {
            for b in 0..types {
                let eps = (epsilon[a] * epsilon[b]).sqrt();
                let sig = 0.5 * (sigma[a] + sigma[b]);
                let (energy_shift, force_at_cutoff) = match mode {
                    PotentialMode::Truncated => (0.0, 0.0),
                    PotentialMode::TruncatedShifted => (lj_energy(eps, sig, cutoff), 0.0),
                    PotentialMode::ShiftedForce => (lj_energy(eps, sig, cutoff), lj_force(eps, sig, cutoff)),
                };
                pairs.push(PairParams {
                    epsilon: eps,
                    sigma: sig,
                    eps4: 4.0 * eps,
                    sigma2: sig * sig,
                    energy_shift,
                    force_at_cutoff,
                });
            }
        }
        PairTable {
            types,
            pairs,
            mode,
            cutoff,
            cutoff2: cutoff * cutoff,
        }
    }

    /// Number of species.
    pub fn types(&self) -> usize {
        self.types
    }

    /// Potential mode.
    pub fn mode(&self) -> PotentialMode {
        self.mode
    }

    /// Cutoff distance r_c.
    pub fn cutoff(&self) -> f64 {
        self.cutoff
    }

    /// r_c².
    #[inline]
    pub fn cutoff2(&self) -> f64 {
        self.cutoff2
    }

    /// Parameters of pair (a, b).
    #[inline]
    pub fn pair(&self, a: usize, b: usize) -> &PairParams {
        &self.pairs[a * self.types + b]
    }

    /// Energy and F/r of a pair at squared distance `r2` (assumed below r_c²).
    ///
    /// The force on atom i from j is `f_over_r * (r_i − r_j)`; the pair's virial is `f_over_r * r2`.
    #[inline(always)]
    pub fn evaluate(&self, a: usize, b: usize, r2: f64) -> (f64, f64) {
        let p = &self.pairs[a * self.types + b];
        let inv_r2 = 1.0 / r2;
        let s2 = p.sigma2 * inv_r2;
        let s6 = s2 * s2 * s2;
        let s12 = s6 * s6;
        let mut energy = p.eps4 * (s12 - s6) - p.energy_shift;
        let mut f_over_r = 6.0 * p.eps4 * (2.0 * s12 - s6) * inv_r2;
        if self.mode == PotentialMode::ShiftedForce {
            let r = r2.sqrt();
            energy += (r - self.cutoff) * p.force_at_cutoff;
            f_over_r -= p.force_at_cutoff / r;
        }
        (energy, f_over_r)
    }

    /// Σ_ab x_a x_b ε_ab σ_ab³ g(σ_ab / r_c) over species pairs.
    fn pair_sum(&self, fractions: &[f64], g: impl Fn(f64) -> f64) -> f64 {
        let mut sum = 0.0;
        for a in 0..self.types {
            for b in 0..self.types {
                let p = self.pair(a, b);
                sum += fractions[a] * fractions[b] * p.epsilon * p.sigma.powi(3) * g(p.sigma / self.cutoff);
            }
        }
        sum
    }

    /// Analytic tail correction to the potential energy per atom, assuming g(r) = 1 beyond r_c:
    /// u_tail = (8/3) π ρ Σ_ab x_a x_b ε_ab σ_ab³ [ (1/3)(σ_ab/r_c)⁹ − (σ_ab/r_c)³ ].
    ///
    /// Source: Allen & Tildesley, *Computer Simulation of Liquids* (2nd ed., 2017), §2.8,
    /// extended to mixtures by the usual sum over species pairs.
    pub fn tail_energy_per_atom(&self, density: f64, fractions: &[f64]) -> f64 {
        8.0 / 3.0 * PI * density * self.pair_sum(fractions, |s| s.powi(9) / 3.0 - s.powi(3))
    }

    /// Analytic tail correction to the pressure, assuming g(r) = 1 beyond r_c:
    /// p_tail = (16/3) π ρ² Σ_ab x_a x_b ε_ab σ_ab³ [ (2/3)(σ_ab/r_c)⁹ − (σ_ab/r_c)³ ].
    ///
    /// Source: Allen & Tildesley (2017), §2.8.
    pub fn tail_pressure(&self, density: f64, fractions: &[f64]) -> f64 {
        16.0 / 3.0 * PI * density * density * self.pair_sum(fractions, |s| 2.0 / 3.0 * s.powi(9) - s.powi(3))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn minimum_of_lj_is_minus_epsilon_at_two_to_the_sixth() {
        // Textbook property of the 12-6 form: minimum −ε at r = 2^(1/6) σ.
        let r = 2f64.powf(1.0 / 6.0);
        assert!((lj_energy(1.0, 1.0, r) + 1.0).abs() < 1e-14);
        assert!(lj_force(1.0, 1.0, r).abs() < 1e-12);
    }

    #[test]
    fn modes_vanish_at_cutoff_as_documented() {
        let rc: f64 = 2.5;
        let r2 = (rc - 1e-9).powi(2);
        let ts = PairTable::lorentz_berthelot(&[1.0], &[1.0], rc, PotentialMode::TruncatedShifted);
        assert!(ts.evaluate(0, 0, r2).0.abs() < 1e-9);
        let sf = PairTable::lorentz_berthelot(&[1.0], &[1.0], rc, PotentialMode::ShiftedForce);
        let (e, f) = sf.evaluate(0, 0, r2);
        assert!(e.abs() < 1e-12 && f.abs() < 1e-8);
    }

    #[test]
    fn tail_corrections_match_the_closed_form() {
        // Allen & Tildesley (2017) §2.8 for one species at r_c = 2.5, ρ = 0.8442:
        // u_tail = (8/3)πρ[(1/3)r_c⁻⁹ − r_c⁻³] ≈ −0.4520, p_tail = (16/3)πρ²[(2/3)r_c⁻⁹ − r_c⁻³] ≈ −0.7621.
        let t = PairTable::lorentz_berthelot(&[1.0], &[1.0], 2.5, PotentialMode::Truncated);
        let rc: f64 = 2.5;
        let u = 8.0 / 3.0 * PI * 0.8442 * (rc.powi(-9) / 3.0 - rc.powi(-3));
        let p = 16.0 / 3.0 * PI * 0.8442f64.powi(2) * (2.0 / 3.0 * rc.powi(-9) - rc.powi(-3));
        assert!((t.tail_energy_per_atom(0.8442, &[1.0]) - u).abs() < 1e-12 && (u + 0.4520).abs() < 1e-4);
        assert!((t.tail_pressure(0.8442, &[1.0]) - p).abs() < 1e-12 && (p + 0.7621).abs() < 1e-4);
        // A "mixture" of two identical species gives the same corrections.
        let m = PairTable::lorentz_berthelot(&[1.0, 1.0], &[1.0, 1.0], 2.5, PotentialMode::Truncated);
        assert!((m.tail_energy_per_atom(0.8442, &[0.3, 0.7]) - u).abs() < 1e-12);
    }

    #[test]
    fn evaluate_matches_full_potential_and_its_derivative() {
        let t = PairTable::lorentz_berthelot(&[1.0, 2.0], &[1.0, 1.5], 4.0, PotentialMode::Truncated);
        let (eps, sig) = (2f64.sqrt(), 1.25);
        for &r in &[0.9, 1.1, 1.7, 3.3] {
            let (e, f_over_r) = t.evaluate(0, 1, r * r);
            assert!((e - lj_energy(eps, sig, r)).abs() < 1e-12);
            let h = 1e-6;
            let numeric = -(lj_energy(eps, sig, r + h) - lj_energy(eps, sig, r - h)) / (2.0 * h);
            assert!((f_over_r * r - numeric).abs() < 1e-6 * numeric.abs().max(1.0));
        }
    }
}
