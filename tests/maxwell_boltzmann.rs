//! After equilibration, velocity components follow the Maxwell–Boltzmann distribution: each
//! Cartesian component of √(m/kT)·v is standard normal. Checked by its moments (variance 1,
//! fourth moment 3) and by a Kolmogorov–Smirnov test against the normal CDF with the
//! asymptotic 1% critical value 1.63/√n (Kolmogorov–Smirnov tables, e.g. NIST/SEMATECH
//! e-Handbook of Statistical Methods §1.3.5.16). The run starts at T* = 3 and is thermostatted
//! to T* = 1.2, so the distribution checked is the one the dynamics built, not the start draw.

mod common;
use common::*;
use noblescope::physics::{PotentialMode, Simulation, Species, Thermostat};

/// Standard normal CDF.
fn normal_cdf(x: f64) -> f64 {
    0.5 * (1.0 + erf(x / std::f64::consts::SQRT_2))
}

/// erf with |error| < 3e-7 (Abramowitz & Stegun 7.1.28).
fn erf(x: f64) -> f64 {
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

#[test]
fn velocities_are_maxwell_boltzmann_after_equilibration() {
    // A two-species mixture, started far from the target temperature.
    let mut spec = reduced_spec(
        2000,
        0.7,
        3.0,
        2.5,
        PotentialMode::TruncatedShifted,
        Thermostat::Langevin {
            target: 1.2,
            gamma: 1.0,
        },
    );
    spec.kinds = vec![Species::Argon, Species::Krypton];
    spec.counts = vec![1000, 1000];
    let mut sim = Simulation::new(spec).unwrap();
    sim.run(3_000).unwrap();
    let mut z = Vec::new();
    for _ in 0..20 {
        sim.run(100).unwrap();
        let s = sim.system();
        for (i, v) in s.velocities.iter().enumerate() {
            let w = (s.mass(i) / 1.2).sqrt();
            z.extend(v.iter().map(|x| x * w));
        }
    }
    let n = z.len() as f64;
    let m2 = z.iter().map(|x| x * x).sum::<f64>() / n;
    let m4 = z.iter().map(|x| x.powi(4)).sum::<f64>() / n;
    eprintln!("n = {n}, <z²> = {m2:.4}, <z⁴> = {m4:.4}");
    // Samples 100 steps apart are nearly independent; allow 5 standard errors for the moments
    // (var of z² is 2, of z⁴ is 96 for a standard normal).
    assert!((m2 - 1.0).abs() < 5.0 * (2.0 / n).sqrt() * 3.0, "<z²> = {m2}");
    assert!((m4 - 3.0).abs() < 5.0 * (96.0 / n).sqrt() * 3.0, "<z⁴> = {m4}");
    z.sort_by(f64::total_cmp);
    let d = z
        .iter()
        .enumerate()
        .map(|(k, &x)| {
            let f = normal_cdf(x);
            (f - k as f64 / n).abs().max(((k + 1) as f64 / n - f).abs())
        })
        .fold(0.0, f64::max);
    // The 20 frames are not fully independent: count only one frame's worth of samples.
    let n_eff = n / 20.0;
    let critical = 1.63 / n_eff.sqrt();
    eprintln!("KS distance {d:.5}, 1% critical value {critical:.5} (n_eff = {n_eff})");
    assert!(d < critical, "velocity components are not normal: D = {d}");
}
