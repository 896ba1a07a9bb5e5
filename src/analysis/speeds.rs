//! Histograms of atomic speeds per species against the Maxwell–Boltzmann density at the
//! kinetic temperature, with a Kolmogorov–Smirnov distance as the goodness-of-fit figure.
//!
//! Maxwell–Boltzmann speed density for mass m at temperature T (reduced units, k_B = 1):
//! f(v) = √(2/π) (m/T)^(3/2) v² exp(−m v²/2T), cumulative
//! F(v) = erf(x/√2) − √(2/π) x exp(−x²/2) with x = v √(m/T) (e.g. Reif, *Fundamentals of
//! Statistical and Thermal Physics*, 1965, §7.10).

use crate::physics::System;

/// Speed histograms of each species, accumulated over configurations.
#[derive(Clone, Debug)]
pub struct SpeedHistogram {
    bins: usize,
    masses: Vec<f64>,
    /// Upper edge per species, fixed by the first configuration (σ/τ).
    v_max: Vec<f64>,
    counts: Vec<u64>,
    /// Speeds beyond `v_max`, per species.
    beyond: Vec<u64>,
    frames: u64,
    temperature_sum: f64,
}

/// One species' histogram beside the Maxwell–Boltzmann density.
#[derive(Clone, Debug, PartialEq)]
pub struct SpeedFit {
    /// Bin centres, σ/τ.
    pub v: Vec<f64>,
    /// Measured probability density, τ/σ.
    pub density: Vec<f64>,
    /// Maxwell–Boltzmann density at `temperature`, τ/σ.
    pub maxwell_boltzmann: Vec<f64>,
    /// Mean kinetic temperature of the configurations, ε/k_B.
    pub temperature: f64,
    /// Largest difference between the measured and the Maxwell–Boltzmann cumulative
    /// distributions at the bin edges (0 is a perfect fit).
    pub ks_distance: f64,
    /// The 1 % critical value of that distance for one configuration's atoms if they were
    /// independent, 1.63/√n (NIST/SEMATECH e-Handbook of Statistical Methods §1.3.5.16): a
    /// distance well above it means the speeds are not (yet) Maxwell–Boltzmann.
    pub ks_critical_one_frame: f64,
    /// Speeds counted (atoms × configurations).
    pub speeds: u64,
}

/// erf with |error| < 3e-7 (Abramowitz & Stegun, *Handbook of Mathematical Functions*, 7.1.28).
pub fn erf(x: f64) -> f64 {
    let t = x.abs();
    let a = [
        0.070_523_078_4,
        0.042_282_012_3,
        0.009_270_527_2,
        0.000_152_014_3,
        0.000_276_567_2,
        0.000_043_063_8,
    ];
    let p = 1.0 + t * (a[0] + t * (a[1] + t * (a[2] + t * (a[3] + t * (a[4] + t * a[5])))));
    let r = 1.0 - 1.0 / p.powi(16);
    if x < 0.0 { -r } else { r }
}

/// Maxwell–Boltzmann speed density for mass `m` at temperature `t`.
pub fn maxwell_boltzmann_density(v: f64, m: f64, t: f64) -> f64 {
    let a = m / t;
    (2.0 / std::f64::consts::PI).sqrt() * a.powf(1.5) * v * v * (-0.5 * a * v * v).exp()
}

/// Maxwell–Boltzmann cumulative speed distribution.
pub fn maxwell_boltzmann_cdf(v: f64, m: f64, t: f64) -> f64 {
    let x = v * (m / t).sqrt();
    erf(x / std::f64::consts::SQRT_2) - (2.0 / std::f64::consts::PI).sqrt() * x * (-0.5 * x * x).exp()
}

impl SpeedHistogram {
    /// Empty histograms of `bins` bins for the species of `system`.
    pub fn new(system: &System, bins: usize) -> Self {
        let s = system.kinds.len().max(1);
        let bins = bins.max(2);
        SpeedHistogram {
            bins,
            masses: system.masses.clone(),
            v_max: vec![0.0; s],
            counts: vec![0; bins * s],
            beyond: vec![0; s],
            frames: 0,
            temperature_sum: 0.0,
        }
    }

    /// Configurations added.
    pub fn frames(&self) -> u64 {
        self.frames
    }

    /// Forgets every configuration (the range is chosen again by the next one).
    pub fn reset(&mut self) {
        self.counts.iter_mut().for_each(|c| *c = 0);
        self.beyond.iter_mut().for_each(|c| *c = 0);
        self.v_max.iter_mut().for_each(|v| *v = 0.0);
        self.frames = 0;
        self.temperature_sum = 0.0;
    }

    /// Adds the speeds of `system`, whose kinetic temperature is `temperature`.
    pub fn add(&mut self, system: &System, temperature: f64) {
        if self.frames == 0 {
            // Range: 1.5 times the fastest atom now, and at least 5 thermal speeds √(T/m)
            // (the Maxwell–Boltzmann tail beyond 5 holds under 1e-4 of the atoms).
            let mut fastest = vec![0.0f64; self.v_max.len()];
            for (v, &t) in system.velocities.iter().zip(&system.types) {
                let s = (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt();
                fastest[t as usize] = fastest[t as usize].max(s);
            }
            for (k, vm) in self.v_max.iter_mut().enumerate() {
                *vm = (1.5 * fastest[k]).max(5.0 * (temperature.max(1e-12) / self.masses[k]).sqrt());
            }
        }
        for (v, &t) in system.velocities.iter().zip(&system.types) {
            let t = t as usize;
            let s = (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt();
            let k = (s / self.v_max[t] * self.bins as f64) as usize;
            if k < self.bins {
                self.counts[t * self.bins + k] += 1;
            } else {
                self.beyond[t] += 1;
            }
        }
        self.frames += 1;
        self.temperature_sum += temperature;
    }

    /// The histogram of species `t` against Maxwell–Boltzmann; None before any configuration.
    pub fn fit(&self, t: usize) -> Option<SpeedFit> {
        if self.frames == 0 {
            return None;
        }
        let counts = &self.counts[t * self.bins..(t + 1) * self.bins];
        let total = counts.iter().sum::<u64>() + self.beyond[t];
        if total == 0 {
            return None;
        }
        let temperature = self.temperature_sum / self.frames as f64;
        let m = self.masses[t];
        let dv = self.v_max[t] / self.bins as f64;
        let mut cum = 0u64;
        let mut ks: f64 = 0.0;
        let mut fit = SpeedFit {
            v: Vec::with_capacity(self.bins),
            density: Vec::with_capacity(self.bins),
            maxwell_boltzmann: Vec::with_capacity(self.bins),
            temperature,
            ks_distance: 0.0,
            ks_critical_one_frame: 1.63 / ((total / self.frames) as f64).sqrt(),
            speeds: total,
        };
        for (k, &c) in counts.iter().enumerate() {
            let centre = (k as f64 + 0.5) * dv;
            fit.v.push(centre);
            fit.density.push(c as f64 / (total as f64 * dv));
            fit.maxwell_boltzmann
                .push(maxwell_boltzmann_density(centre, m, temperature));
            cum += c;
            let edge = (k + 1) as f64 * dv;
            ks = ks.max((cum as f64 / total as f64 - maxwell_boltzmann_cdf(edge, m, temperature)).abs());
        }
        fit.ks_distance = ks;
        Some(fit)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::Species;
    use crate::physics::random::{Purpose, Stream};

    fn gas(n: usize, m: [f64; 2], t: f64, seed: u64) -> System {
        let types: Vec<u8> = (0..n).map(|i| (i % 2) as u8).collect();
        let mut st = Stream::new(seed, Purpose::LatticeSites, 0, 0);
        let velocities = types
            .iter()
            .map(|&k| {
                let s = (t / m[k as usize]).sqrt();
                [s * st.normal(), s * st.normal(), s * st.normal()]
            })
            .collect();
        System {
            box_length: 10.0,
            positions: vec![[0.0; 3]; n],
            velocities,
            forces: vec![[0.0; 3]; n],
            types,
            kinds: vec![Species::Argon, Species::Xenon],
            masses: m.to_vec(),
        }
    }

    #[test]
    fn the_density_integrates_to_one_and_the_cdf_is_its_integral() {
        let (m, t) = (3.0, 0.7);
        let h = 1e-3;
        let mut area = 0.0;
        for i in 0..5000 {
            let v = (i as f64 + 0.5) * h;
            area += maxwell_boltzmann_density(v, m, t) * h;
            if i % 500 == 499 {
                assert!((area - maxwell_boltzmann_cdf(v + 0.5 * h, m, t)).abs() < 1e-6);
            }
        }
        assert!((area - 1.0).abs() < 1e-6);
    }

    #[test]
    fn maxwell_boltzmann_speeds_fit_and_wrong_temperature_does_not() {
        let m = [1.0, 3.3];
        let mut h = SpeedHistogram::new(&gas(4000, m, 1.2, 1), 60);
        for seed in 0..5 {
            h.add(&gas(4000, m, 1.2, seed), 1.2);
        }
        for t in 0..2 {
            let f = h.fit(t).unwrap();
            assert!(
                f.ks_distance < f.ks_critical_one_frame,
                "{} vs {}",
                f.ks_distance,
                f.ks_critical_one_frame
            );
        }
        // The same speeds compared at half the temperature fit badly.
        let mut wrong = SpeedHistogram::new(&gas(4000, m, 1.2, 1), 60);
        wrong.add(&gas(4000, m, 1.2, 7), 0.6);
        let f = wrong.fit(0).unwrap();
        assert!(f.ks_distance > 5.0 * f.ks_critical_one_frame, "{}", f.ks_distance);
    }
}
