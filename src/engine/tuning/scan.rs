//! The scans: short constant-energy trials per timestep and energy and pressure per cutoff,
//! from one equilibrated state, on copies of it.

use super::request::{TuneError, TuneRequest};
use crate::engine::session::Session;
use crate::physics::{PotentialMode, Simulation, SimulationSpec, SimulationState, Species, Thermostat};
use serde::Serialize;
use std::sync::atomic::{AtomicBool, Ordering};

/// How one timestep fared over a short constant-energy run.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct TimestepRow {
    /// Timestep in τ (`timestep` in tuning.json).
    #[serde(rename = "timestep")]
    pub timestep_tau: f64,
    pub steps: u64,
    /// Slope of the total energy per atom, ε per τ (least squares).
    pub drift_per_atom_per_tau: f64,
    /// (E_end − E_start)/max(|E₀|, K₀).
    pub relative_drift: f64,
    /// RMS fluctuation of the total energy over that of the kinetic energy.
    pub fluctuation_ratio: f64,
    /// Energy became non-finite.
    pub blew_up: bool,
}

/// Energy and pressure at one cutoff, averaged over configurations.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CutoffRow {
    /// Cutoff in σ (`cutoff` in tuning.json).
    #[serde(rename = "cutoff")]
    pub cutoff_sigma: f64,
    /// Potential energy per atom and pressure as a run in the chosen mode reports them (no tail).
    pub potential: f64,
    pub pressure: f64,
    /// Estimates for the full, untruncated potential: unshifted pair energies and virial
    /// inside r_c plus the analytic tail corrections.
    pub potential_full_estimate: f64,
    pub pressure_full_estimate: f64,
    /// Wall time of a step at this cutoff over that at the setup's cutoff (measured on a copy,
    /// [`COST_STEPS`] steps each; 1 = as costly as now).
    pub relative_cost: f64,
}

/// How close a cutoff's full-potential estimates must come to those of the largest cutoff
/// scanned to be recommended, in reduced units.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct CutoffTolerances {
    /// Potential energy per atom, ε.
    pub energy: f64,
    /// Pressure, ε/σ³.
    pub pressure: f64,
}

/// Default tolerances: 0.01 ε per atom (about 0.2 % of a dense liquid's potential energy, and
/// several times the standard error of a short production run) and 0.02 ε/σ³ (about the
/// standard error of the pressure of such a run, 1 % of the liquid's pressure near the triple
/// point): tighter than the run can resolve buys nothing (common practice, no source).
pub const CUTOFF_TOLERANCES: CutoffTolerances = CutoffTolerances {
    energy: 0.01,
    pressure: 0.02,
};

/// Steps timed at each cutoff for its relative cost.
pub const COST_STEPS: u64 = 10;

/// The recommended cutoff and why, or why none is.
#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct CutoffChoice {
    /// σ; `None` when no cutoff smaller than the largest qualifies or too few were scanned.
    pub cutoff_sigma: Option<f64>,
    pub reason: String,
}

/// The smallest cutoff whose full-potential energy and pressure agree with the largest scanned
/// cutoff's within `tol` (the largest is the best estimate of the full potential scanned).
pub fn recommended_cutoff(rows: &[CutoffRow], tol: CutoffTolerances) -> CutoffChoice {
    let Some(largest) = rows
        .iter()
        .max_by(|a, b| a.cutoff_sigma.total_cmp(&b.cutoff_sigma))
    else {
        return CutoffChoice {
            cutoff_sigma: None,
            reason: "no cutoff was scanned".into(),
        };
    };
    if rows.len() < 2 {
        return CutoffChoice {
            cutoff_sigma: None,
            reason: "scan at least two cutoffs: the largest is the reference the others are judged against"
                .into(),
        };
    }
    let mut sorted: Vec<&CutoffRow> = rows.iter().collect();
    sorted.sort_by(|a, b| a.cutoff_sigma.total_cmp(&b.cutoff_sigma));
    let ok = |r: &CutoffRow| {
        (r.potential_full_estimate - largest.potential_full_estimate).abs() <= tol.energy
            && (r.pressure_full_estimate - largest.pressure_full_estimate).abs() <= tol.pressure
    };
    let pick = sorted.iter().find(|r| ok(r)).copied().unwrap_or(largest);
    let du = (pick.potential_full_estimate - largest.potential_full_estimate).abs();
    let dp = (pick.pressure_full_estimate - largest.pressure_full_estimate).abs();
    let reason = if pick.cutoff_sigma == largest.cutoff_sigma {
        format!(
            "no smaller cutoff comes within {} ε of energy and {} ε/σ³ of pressure of the largest ({} σ); take the largest or scan larger ones",
            tol.energy, tol.pressure, largest.cutoff_sigma
        )
    } else {
        format!(
            "the smallest cutoff whose full-potential energy and pressure are within {} ε and {} ε/σ³ of those at {} σ (off by {:.4} ε and {:.4} ε/σ³), at {:.2}× the present cost a step",
            tol.energy, tol.pressure, largest.cutoff_sigma, du, dp, pick.relative_cost
        )
    };
    CutoffChoice {
        cutoff_sigma: Some(pick.cutoff_sigma),
        reason,
    }
}

/// Wall time of [`COST_STEPS`] steps of a copy of `state` at cutoff `rc`.
fn step_cost(spec: &SimulationSpec, state: &SimulationState, rc: f64) -> f64 {
    let mut s = spec.clone();
    s.cutoff = rc;
    let Ok(mut sim) = Simulation::from_state(s, state.clone()) else {
        return f64::NAN;
    };
    let t = std::time::Instant::now();
    let _ = sim.run(COST_STEPS);
    t.elapsed().as_secs_f64()
}

/// What a tuning scan found, all in reduced units of `reference`.
#[derive(Clone, Debug, PartialEq)]
pub struct TuningReport {
    /// Step of the user's simulation the scan started from.
    pub from_step: u64,
    /// Unit reference species of the scanned simulation.
    pub reference: Species,
    /// Potential mode the cutoff rows are reported in.
    pub potential: PotentialMode,
    /// Simulated time of each timestep trial, τ.
    pub duration_tau: f64,
    /// Configurations the cutoff rows average over.
    pub configurations: usize,
    /// One row per timestep, in the order asked.
    pub timesteps: Vec<TimestepRow>,
    /// One row per cutoff, in the order asked.
    pub cutoffs: Vec<CutoffRow>,
    /// Largest timestep that did not blow up and kept the fluctuation ratio under the limit (τ).
    pub recommended: Option<f64>,
    /// The recommended cutoff with [`CUTOFF_TOLERANCES`], and why.
    pub cutoff_choice: CutoffChoice,
}

/// Configurations the cutoff scan averages over.
pub const TUNE_CONFIGURATIONS: usize = 5;
/// Steps between those configurations.
pub const TUNE_STEPS_APART: u64 = 200;

/// Largest ratio of total-energy to kinetic-energy fluctuation accepted for a timestep
/// (common practice: a few per cent).
pub const FLUCTUATION_LIMIT: f64 = 0.05;

/// Runs constant-energy dynamics from `state` for `duration` τ at each timestep. Once `stop` is
/// set (checked every 1/200 of a trial) the rows are cut short and mean nothing.
pub fn timestep_scan(
    spec: &SimulationSpec,
    state: &SimulationState,
    timesteps: &[f64],
    duration: f64,
    stop: &AtomicBool,
) -> Vec<TimestepRow> {
    timesteps
        .iter()
        .map(|&dt| {
            let mut s = spec.clone();
            s.timestep = dt;
            s.thermostat = Thermostat::None;
            let mut st = state.clone();
            st.heat = 0.0;
            let steps = ((duration / dt).round() as u64).max(10);
            let every = (steps / 200).max(1);
            let mut row = TimestepRow {
                timestep_tau: dt,
                steps,
                drift_per_atom_per_tau: f64::NAN,
                relative_drift: f64::NAN,
                fluctuation_ratio: f64::NAN,
                blew_up: false,
            };
            let Ok(mut sim) = Simulation::from_state(s, st) else {
                row.blew_up = true;
                return row;
            };
            sim.rebase_drift();
            let (mut t, mut e, mut k) = (vec![0.0], vec![sim.observe().total], vec![sim.observe().kinetic]);
            let mut taken = 0;
            while taken < steps {
                if stop.load(Ordering::Relaxed) {
                    return row;
                }
                if sim.run(every).is_err() {
                    row.blew_up = true;
                    return row;
                }
                taken += every;
                let o = sim.observe();
                if !o.total.is_finite() {
                    row.blew_up = true;
                    return row;
                }
                t.push(taken as f64 * dt);
                e.push(o.total);
                k.push(o.kinetic);
            }
            row.steps = taken;
            row.drift_per_atom_per_tau = slope(&t, &e);
            row.relative_drift = sim.observe().drift;
            row.fluctuation_ratio = rms(&e) / rms(&k).max(f64::MIN_POSITIVE);
            row
        })
        .collect()
}

/// Largest timestep whose run did not blow up and stayed under [`FLUCTUATION_LIMIT`].
pub fn recommended_timestep(rows: &[TimestepRow]) -> Option<f64> {
    rows.iter()
        .filter(|r| !r.blew_up && r.fluctuation_ratio <= FLUCTUATION_LIMIT)
        .map(|r| r.timestep_tau)
        .fold(None, |a, b| Some(a.map_or(b, |a: f64| a.max(b))))
}

/// Evaluates energy and pressure at each cutoff for each configuration and averages them, as
/// the chosen mode reports them and as estimates of the full potential.
/// Cutoffs whose cutoff + skin exceeds half the box are left out.
pub fn cutoff_scan(
    spec: &SimulationSpec,
    states: &[SimulationState],
    cutoffs: &[f64],
    mode: PotentialMode,
) -> Vec<CutoffRow> {
    let mut rows = Vec::new();
    for &rc in cutoffs {
        let mut acc = [0.0; 4];
        let mut ok = true;
        for st in states {
            let mut s = spec.clone();
            s.cutoff = rc;
            s.potential = mode;
            s.tail_correction = false;
            let Ok(mut sim) = Simulation::from_state(s, st.clone()) else {
                ok = false;
                break;
            };
            let bare = sim.observe();
            if sim
                .set_interaction(rc, spec.skin, PotentialMode::Truncated, true)
                .is_err()
            {
                ok = false;
                break;
            }
            let tail = sim.observe();
            acc[0] += bare.potential;
            acc[1] += tail.potential;
            acc[2] += bare.pressure;
            acc[3] += tail.pressure;
        }
        if ok && !states.is_empty() {
            let n = states.len() as f64;
            let cost = step_cost(spec, &states[0], rc) / step_cost(spec, &states[0], spec.cutoff);
            rows.push(CutoffRow {
                relative_cost: cost,
                cutoff_sigma: rc,
                potential: acc[0] / n,
                potential_full_estimate: acc[1] / n,
                pressure: acc[2] / n,
                pressure_full_estimate: acc[3] / n,
            });
        }
    }
    rows
}

/// Both scans of `request` from `state`: each timestep, then the cutoffs averaged over
/// `state` and further configurations taken [`TUNE_STEPS_APART`] steps apart on a copy (the
/// caller's simulation is not touched). `stop` ends the scan with [`TuneError::Stopped`] within
/// a fraction of a trial. The request is taken as checked ([`TuneRequest::check`]).
pub fn full_scan(
    spec: SimulationSpec,
    state: SimulationState,
    request: &TuneRequest,
    stop: &AtomicBool,
) -> Result<TuningReport, TuneError> {
    let stopped = || {
        if stop.load(Ordering::Relaxed) {
            Err(TuneError::Stopped)
        } else {
            Ok(())
        }
    };
    let (cutoffs, duration) = (&request.cutoffs_sigma, request.duration_tau);
    let from_step = state.step;
    let mut rows = Vec::with_capacity(request.timesteps_tau.len());
    for &dt in &request.timesteps_tau {
        stopped()?;
        rows.extend(timestep_scan(&spec, &state, &[dt], duration, stop));
    }
    stopped()?;
    // More configurations for the cutoff averages, from a copy that runs on as the user's would.
    let mut copy = Simulation::from_state(spec.clone(), state.clone())?;
    let mut states = vec![state];
    while states.len() < TUNE_CONFIGURATIONS {
        stopped()?;
        if copy.run(TUNE_STEPS_APART).is_err() {
            break;
        }
        states.push(copy.state());
    }
    let crows = cutoff_scan(&spec, &states, cutoffs, spec.potential);
    if let Some(&missing) = cutoffs
        .iter()
        .find(|&&rc| !crows.iter().any(|r| r.cutoff_sigma == rc))
    {
        return Err(TuneError::NotEvaluated {
            cutoff_sigma: missing,
            skin_sigma: spec.skin,
            half_box_sigma: 0.5 * spec.box_length(),
        });
    }
    Ok(TuningReport {
        from_step,
        reference: spec.kinds[0],
        potential: spec.potential,
        duration_tau: duration,
        configurations: states.len(),
        recommended: recommended_timestep(&rows),
        cutoff_choice: recommended_cutoff(&crows, CUTOFF_TOLERANCES),
        timesteps: rows,
        cutoffs: crows,
    })
}

/// The command line's tuning: `steps` steps of `session` as set up (to equilibrate), then
/// [`full_scan`] of `request` from there. A blow-up while equilibrating is
/// [`TuneError::Equilibration`].
pub fn equilibrate_and_scan(
    session: &mut Session,
    steps: u64,
    request: &TuneRequest,
) -> Result<TuningReport, TuneError> {
    for _ in 0..steps {
        if let Some(a) = session.step().alarm
            && a.kind.is_blow_up()
        {
            return Err(TuneError::Equilibration(a.describe()));
        }
    }
    let sim = session.simulation();
    let never = AtomicBool::new(false);
    full_scan(sim.spec().clone(), sim.state(), request, &never)
}

fn mean(x: &[f64]) -> f64 {
    x.iter().sum::<f64>() / x.len() as f64
}

fn rms(x: &[f64]) -> f64 {
    let m = mean(x);
    (x.iter().map(|v| (v - m).powi(2)).sum::<f64>() / x.len() as f64).sqrt()
}

/// Least-squares slope of y over t.
fn slope(t: &[f64], y: &[f64]) -> f64 {
    let (mt, my) = (mean(t), mean(y));
    let num: f64 = t.iter().zip(y).map(|(a, b)| (a - mt) * (b - my)).sum();
    let den: f64 = t.iter().map(|a| (a - mt).powi(2)).sum();
    num / den
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn slope_and_rms_of_known_series() {
        let t = [0.0, 1.0, 2.0, 3.0];
        assert!((slope(&t, &[1.0, 3.0, 5.0, 7.0]) - 2.0).abs() < 1e-12);
        assert!((rms(&[1.0, -1.0, 1.0, -1.0]) - 1.0).abs() < 1e-12);
    }

    #[test]
    fn recommendation_skips_blow_ups_and_noisy_steps() {
        let row = |dt, ratio, blew_up| TimestepRow {
            timestep_tau: dt,
            steps: 1,
            drift_per_atom_per_tau: 0.0,
            relative_drift: 0.0,
            fluctuation_ratio: ratio,
            blew_up,
        };
        let rows = [
            row(0.002, 0.01, false),
            row(0.005, 0.03, false),
            row(0.01, 0.2, false),
            row(0.02, f64::NAN, true),
        ];
        assert_eq!(recommended_timestep(&rows), Some(0.005));
    }

    #[test]
    fn the_recommended_cutoff_is_the_smallest_within_tolerance_of_the_largest() {
        let row = |rc: f64, u: f64, p: f64| CutoffRow {
            cutoff_sigma: rc,
            potential: u,
            pressure: p,
            potential_full_estimate: u,
            pressure_full_estimate: p,
            relative_cost: rc / 2.5,
        };
        let rows = vec![
            row(4.0, -6.10, 0.50),
            row(2.5, -6.05, 0.58),
            row(3.0, -6.095, 0.51),
        ];
        let c = recommended_cutoff(&rows, CUTOFF_TOLERANCES);
        assert_eq!(c.cutoff_sigma, Some(3.0), "{}", c.reason);
        assert!(c.reason.contains("4 σ"), "{}", c.reason);
        let strict = CutoffTolerances {
            energy: 1e-4,
            pressure: 1e-4,
        };
        let c = recommended_cutoff(&rows, strict);
        assert_eq!(c.cutoff_sigma, Some(4.0));
        assert!(c.reason.starts_with("no smaller cutoff"), "{}", c.reason);
        assert_eq!(
            recommended_cutoff(&rows[..1], CUTOFF_TOLERANCES).cutoff_sigma,
            None
        );
    }
}
