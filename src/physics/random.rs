//! Counter-based random numbers: every draw is a pure function of (seed, purpose, step, atom).
//!
//! Each (seed, purpose, step) triple keys a ChaCha8 cipher and each atom reads its own stream of
//! it, so which thread draws an atom's numbers never changes them, and the "state" of the
//! generator that a checkpoint must hold is just the seed and the step.

use rand_chacha::ChaCha8Rng;
use rand_core::{Rng, SeedableRng};

/// What a stream of random numbers is for; keeps the streams of different uses apart.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[repr(u64)]
pub enum Purpose {
    /// Choice of empty lattice sites at the start.
    LatticeSites = 1,
    /// Assignment of species to occupied sites.
    SpeciesOrder = 2,
    /// Maxwell–Boltzmann start velocities.
    StartVelocities = 3,
    /// Langevin friction kicks.
    Langevin = 4,
    /// Stochastic velocity rescaling.
    Rescale = 5,
}

/// A stream of random numbers for one (seed, purpose, step, lane).
pub struct Stream {
    rng: ChaCha8Rng,
    spare_normal: Option<f64>,
}

impl Stream {
    /// The stream for `lane` (usually an atom index) of the given seed, purpose and step.
    pub fn new(seed: u64, purpose: Purpose, step: u64, lane: u64) -> Self {
        let mut key = [0u8; 32];
        key[0..8].copy_from_slice(&seed.to_le_bytes());
        key[8..16].copy_from_slice(&(purpose as u64).to_le_bytes());
        key[16..24].copy_from_slice(&step.to_le_bytes());
        key[24..32].copy_from_slice(b"noblescp");
        let mut rng = ChaCha8Rng::from_seed(key);
        rng.set_stream(lane);
        Stream {
            rng,
            spare_normal: None,
        }
    }

    /// Raw 64 random bits.
    pub fn next_u64(&mut self) -> u64 {
        self.rng.next_u64()
    }

    /// Uniform in [0, 1) with 53 random bits.
    pub fn uniform(&mut self) -> f64 {
        (self.rng.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }

    /// Uniform integer in [0, n) (Lemire's multiply-shift; bias below 2⁻³² for n < 2³²).
    pub fn below(&mut self, n: u64) -> u64 {
        ((self.rng.next_u64() as u128 * n as u128) >> 64) as u64
    }

    /// Standard normal deviate by the Box–Muller transform (pairs are cached).
    pub fn normal(&mut self) -> f64 {
        if let Some(z) = self.spare_normal.take() {
            return z;
        }
        let u1 = 1.0 - self.uniform(); // (0, 1]
        let u2 = self.uniform();
        let r = (-2.0 * u1.ln()).sqrt();
        let (s, c) = (std::f64::consts::TAU * u2).sin_cos();
        self.spare_normal = Some(r * s);
        r * c
    }

    /// Gamma(shape, 1) deviate, shape ≥ 1, by Marsaglia & Tsang, ACM TOMS 26, 363 (2000).
    pub fn gamma(&mut self, shape: f64) -> f64 {
        debug_assert!(shape >= 1.0);
        let d = shape - 1.0 / 3.0;
        let c = 1.0 / (9.0 * d).sqrt();
        loop {
            let x = self.normal();
            let v = 1.0 + c * x;
            if v <= 0.0 {
                continue;
            }
            let v = v * v * v;
            let u = self.uniform();
            if u < 1.0 - 0.0331 * x * x * x * x || u.ln() < 0.5 * x * x + d * (1.0 - v + v.ln()) {
                return d * v;
            }
        }
    }
}

/// Shuffles `items` in place (Fisher–Yates) with the given stream.
pub fn shuffle<T>(items: &mut [T], stream: &mut Stream) {
    for i in (1..items.len()).rev() {
        let j = stream.below(i as u64 + 1) as usize;
        items.swap(i, j);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn streams_are_reproducible_and_distinct() {
        let a: Vec<u64> = (0..4)
            .map(|_| Stream::new(7, Purpose::Langevin, 3, 11).next_u64())
            .collect();
        assert!(a.windows(2).all(|w| w[0] == w[1]));
        assert_ne!(
            Stream::new(7, Purpose::Langevin, 3, 11).next_u64(),
            Stream::new(7, Purpose::Langevin, 3, 12).next_u64()
        );
        assert_ne!(
            Stream::new(7, Purpose::Langevin, 3, 11).next_u64(),
            Stream::new(7, Purpose::Langevin, 4, 11).next_u64()
        );
    }

    #[test]
    fn normal_and_gamma_have_right_moments() {
        // Mean and variance of N(0,1) and Gamma(k,1) (mean k, variance k): textbook definitions.
        let mut s = Stream::new(1, Purpose::Rescale, 0, 0);
        let n = 200_000;
        let (mut m, mut m2) = (0.0, 0.0);
        for _ in 0..n {
            let z = s.normal();
            m += z;
            m2 += z * z;
        }
        assert!((m / n as f64).abs() < 0.01);
        assert!((m2 / n as f64 - 1.0).abs() < 0.01);
        let k = 7.5;
        let (mut g, mut g2) = (0.0, 0.0);
        for _ in 0..n {
            let x = s.gamma(k);
            g += x;
            g2 += x * x;
        }
        let mean = g / n as f64;
        assert!((mean - k).abs() < 0.03, "{mean}");
        assert!((g2 / n as f64 - mean * mean - k).abs() < 0.15);
    }
}
