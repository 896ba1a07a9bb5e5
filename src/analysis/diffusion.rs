//! The self-diffusion coefficient two ways, from the same store of time origins
//! ([`SelfMotion`]), each with a standard error from independent blocks of origins.
//!
//! - Einstein: D = slope of the mean squared displacement over a fit window / 6 (three
//!   dimensions), by ordinary least squares over the lags inside the window.
//! - Green–Kubo: D(t) = (1/3) ∫₀ᵗ ⟨v(0)·v(s)⟩ ds by the trapezoidal rule over the lags, averaged
//!   over the same window (the plateau of the running integral). Since d MSD/dt = 6 D(t) exactly,
//!   the two agree within their errors when the sampling resolves the velocity
//!   autocorrelation; a difference beyond the errors means too short a run, too coarse a
//!   sampling interval, or dynamics that are not Newtonian (Langevin friction and fast
//!   stochastic rescaling both change D: measure it in NVE).
//!
//! Source of both relations: Allen & Tildesley, *Computer Simulation of Liquids* (2nd ed.,
//! 2017), §2.7 (eqs. 2.114 and 2.116).
//!
//! Standard error: each block of origins ([`super::motion::BLOCKS`]) gives its own estimate;
//! the error is their standard deviation over √(blocks). Blocks shorter than the fit window
//! are correlated with each other, so the error is then too small: take the window well below
//! the run length divided by the number of blocks for an honest figure.

use super::blocking::Estimate;
use super::motion::{BlockSums, LagPoint, SelfMotion};

/// Lag window of the fits, τ.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct FitWindow {
    pub from: f64,
    pub to: f64,
}

impl FitWindow {
    /// The default window: from 0.1 to 0.4 of the span sampled so far (capped at the longest
    /// lag of the schedule). None before there are three samples.
    pub fn default_for(motion: &SelfMotion) -> Option<FitWindow> {
        if motion.samples() < 3 {
            return None;
        }
        let longest = motion.lag_times().last().copied().unwrap_or(0.0);
        let span = ((motion.samples() - 1) as f64 * motion.interval()).min(longest / 0.4);
        Some(FitWindow {
            from: 0.1 * span,
            to: 0.4 * span,
        })
    }
}

/// Both estimates of D in σ²/τ, with the window and the number of blocks behind the errors.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Diffusion {
    pub einstein: Estimate,
    pub green_kubo: Estimate,
    pub window: FitWindow,
    /// Blocks of origins that gave an estimate (the errors need at least 2).
    pub blocks: usize,
}

impl Diffusion {
    /// Whether the two estimates agree within twice their combined standard error (when
    /// there is no error yet, they are taken to agree).
    pub fn estimates_agree(&self) -> bool {
        let s = self.einstein.stderr.hypot(self.green_kubo.stderr);
        !s.is_finite() || (self.einstein.mean - self.green_kubo.mean).abs() <= 2.0 * s
    }
}

/// Einstein estimate from an MSD series: OLS slope over the window, / 6. None with fewer than
/// two lags inside the window.
pub fn einstein(msd: &[LagPoint], w: FitWindow) -> Option<f64> {
    let pts: Vec<&LagPoint> = msd.iter().filter(|p| p.t >= w.from && p.t <= w.to).collect();
    if pts.len() < 2 {
        return None;
    }
    let n = pts.len() as f64;
    let mt = pts.iter().map(|p| p.t).sum::<f64>() / n;
    let mv = pts.iter().map(|p| p.value).sum::<f64>() / n;
    let sxy: f64 = pts.iter().map(|p| (p.t - mt) * (p.value - mv)).sum();
    let sxx: f64 = pts.iter().map(|p| (p.t - mt).powi(2)).sum();
    (sxx > 0.0).then(|| sxy / sxx / 6.0)
}

/// The running Green–Kubo integral D(t) = (1/3) ∫₀ᵗ C(s) ds of an unnormalised velocity
/// autocorrelation (trapezoidal rule over the lags given). Empty unless the series starts at
/// lag 0.
pub fn green_kubo_running(vacf: &[LagPoint]) -> Vec<LagPoint> {
    if vacf.first().is_none_or(|p| p.t != 0.0) {
        return Vec::new();
    }
    let mut acc = 0.0;
    let mut out = vec![LagPoint { t: 0.0, value: 0.0 }];
    for w in vacf.windows(2) {
        acc += 0.5 * (w[0].value + w[1].value) * (w[1].t - w[0].t) / 3.0;
        out.push(LagPoint {
            t: w[1].t,
            value: acc,
        });
    }
    out
}

/// Green–Kubo estimate: the running integral averaged over the lags inside the window.
pub fn green_kubo(vacf: &[LagPoint], w: FitWindow) -> Option<f64> {
    let run = green_kubo_running(vacf);
    let inside: Vec<f64> = run
        .iter()
        .filter(|p| p.t >= w.from && p.t <= w.to)
        .map(|p| p.value)
        .collect();
    (!inside.is_empty()).then(|| inside.iter().sum::<f64>() / inside.len() as f64)
}

fn spread(values: &[f64]) -> f64 {
    let n = values.len();
    if n < 2 {
        return f64::NAN;
    }
    let m = values.iter().sum::<f64>() / n as f64;
    let var = values.iter().map(|v| (v - m).powi(2)).sum::<f64>() / (n - 1) as f64;
    (var / n as f64).sqrt()
}

/// Both estimates of D for one species (None: every atom followed) over the window `w`
/// (None: [`FitWindow::default_for`]). None when the window holds fewer than two lags.
pub fn self_diffusion(
    motion: &SelfMotion,
    species: Option<usize>,
    w: Option<FitWindow>,
) -> Option<Diffusion> {
    let w = w.or_else(|| FitWindow::default_for(motion))?;
    let all: Vec<&BlockSums> = motion.blocks().iter().collect();
    let e = einstein(&motion.mean_of(&all, |b| &b.msd, species), w)?;
    let g = green_kubo(&motion.mean_of(&all, |b| &b.vacf, species), w)?;
    let (mut es, mut gs) = (Vec::new(), Vec::new());
    for b in motion.blocks() {
        let one = [b];
        let msd = motion.mean_of(&one, |b| &b.msd, species);
        let vacf = motion.mean_of(&one, |b| &b.vacf, species);
        if let (Some(x), Some(y)) = (einstein(&msd, w), green_kubo(&vacf, w)) {
            es.push(x);
            gs.push(y);
        }
    }
    Some(Diffusion {
        einstein: Estimate {
            mean: e,
            stderr: spread(&es),
        },
        green_kubo: Estimate {
            mean: g,
            stderr: spread(&gs),
        },
        window: w,
        blocks: es.len(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::lags::LagSchedule;
    use crate::physics::random::{Purpose, Stream};
    use crate::physics::{Species, System};

    #[test]
    fn einstein_recovers_the_slope_of_a_straight_line() {
        let msd: Vec<LagPoint> = (0..50)
            .map(|i| LagPoint {
                t: i as f64 * 0.1,
                value: 0.3 + 6.0 * 0.25 * i as f64 * 0.1,
            })
            .collect();
        let d = einstein(&msd, FitWindow { from: 1.0, to: 4.0 }).unwrap();
        assert!((d - 0.25).abs() < 1e-12);
    }

    #[test]
    fn green_kubo_of_an_exponential_is_its_area() {
        // C(t) = 3 D/τ_c e^(−t/τ_c) integrates to D; the trapezoid error at spacing h is
        // about h²/(12 τ_c²) relative.
        let (d, tc) = (0.05, 0.2);
        let c: Vec<LagPoint> = (0..4000)
            .map(|i| {
                let t = i as f64 * 0.001;
                LagPoint {
                    t,
                    value: 3.0 * d / tc * (-t / tc).exp(),
                }
            })
            .collect();
        let g = green_kubo(&c, FitWindow { from: 3.0, to: 3.9 }).unwrap();
        assert!((g - d).abs() < 1e-4 * d, "{g}");
    }

    #[test]
    fn a_random_walk_gives_its_diffusion_coefficient_both_ways_within_errors() {
        // Atoms whose velocity is redrawn independently at every sample (Gaussian components of
        // variance s²) and held for one interval h: an exact random walk with
        // D = s² h / 2 per component, i.e. MSD = 6 D t at lags ≥ 1; the sampled VACF is
        // 3 s² at lag 0 and 0 after, whose trapezoid integral over one interval is
        // 3 s² h / 2 / 3 = D. Both routes must find D = s² h / 2.
        let (n, h, s) = (400usize, 0.05, 1.3);
        let mut sys = System {
            box_length: 10.0,
            positions: vec![[0.0; 3]; n],
            velocities: vec![[0.0; 3]; n],
            forces: vec![[0.0; 3]; n],
            types: vec![0; n],
            kinds: vec![Species::ReducedLJ],
            masses: vec![1.0],
        };
        let mut m = SelfMotion::new(
            &sys,
            h,
            LagSchedule {
                per_level: 8,
                levels: 6,
            },
        );
        for step in 0..3000u64 {
            for (i, v) in sys.velocities.iter_mut().enumerate() {
                let mut st = Stream::new(11, Purpose::LatticeSites, step, i as u64);
                *v = [s * st.normal(), s * st.normal(), s * st.normal()];
            }
            // The velocity drawn now is the one the atoms move with until the next sample.
            m.add(&sys);
            for (p, v) in sys.positions.iter_mut().zip(&sys.velocities) {
                for k in 0..3 {
                    p[k] += v[k] * h;
                }
            }
        }
        let exact = s * s * h / 2.0;
        let d = self_diffusion(&m, None, Some(FitWindow { from: 1.0, to: 10.0 })).unwrap();
        for (name, e) in [("Einstein", d.einstein), ("Green-Kubo", d.green_kubo)] {
            assert!(e.stderr > 0.0 && e.stderr < 0.1 * exact, "{name}: {e:?}");
            assert!(
                (e.mean - exact).abs() < 4.0 * e.stderr + 0.02 * exact,
                "{name}: {e:?} vs {exact}"
            );
        }
        assert!(d.blocks >= BLOCKS_MIN, "{}", d.blocks);
    }

    const BLOCKS_MIN: usize = crate::analysis::motion::BLOCKS / 2;
}
