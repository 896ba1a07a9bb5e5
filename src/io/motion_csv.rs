//! `msd.csv` and `vacf.csv`: the self motion of a run, one row per lag, with units in the
//! header (reduced units, then real units for real species).

use crate::analysis::diffusion::green_kubo_running;
use crate::analysis::{LagPoint, SelfMotion};
use crate::physics::UnitSystem;

/// The columns of one group of atoms: `None` for all atoms followed, else a species index.
fn groups(m: &SelfMotion, labels: &[String]) -> Vec<(Option<usize>, String)> {
    let mut g = vec![(None, "all".to_string())];
    if m.species() > 1 {
        g.extend((0..m.species()).map(|t| (Some(t), labels[t].clone())));
    }
    g
}

/// Value of `series` at time `t` (the series skip lags without origins).
fn at(series: &[LagPoint], t: f64) -> f64 {
    series
        .iter()
        .find(|p| p.t == t)
        .map(|p| p.value)
        .unwrap_or(f64::NAN)
}

/// Mean squared displacement per lag: `t [tau]` (and `t [ps]`), then per group
/// `msd <group> [sigma^2]` (and `[angstrom^2]`).
pub fn msd_csv(m: &SelfMotion, units: &UnitSystem, labels: &[String]) -> String {
    let real = units.has_real_units();
    let groups = groups(m, labels);
    let series: Vec<Vec<LagPoint>> = groups.iter().map(|(g, _)| m.msd(*g)).collect();
    let mut out = String::from("t [tau]");
    if real {
        out.push_str(",t [ps]");
    }
    for (_, name) in &groups {
        out.push_str(&format!(",msd {name} [sigma^2]"));
        if real {
            out.push_str(&format!(",msd {name} [angstrom^2]"));
        }
    }
    out.push('\n');
    let s2 = units.sigma_angstrom().powi(2);
    for p in &series[0] {
        out.push_str(&format!("{:e}", p.t));
        if real {
            out.push_str(&format!(",{:e}", p.t * units.tau_ps()));
        }
        for s in &series {
            let v = at(s, p.t);
            out.push_str(&format!(",{v:e}"));
            if real {
                out.push_str(&format!(",{:e}", v * s2));
            }
        }
        out.push('\n');
    }
    out
}

/// Velocity autocorrelation per lag: `t [tau]` (and `t [ps]`), then per group the normalised
/// `vacf <group> [1]`, the unnormalised `<v(0).v(t)> <group> [sigma^2/tau^2]` and the running
/// Green–Kubo integral `D(t) <group> [sigma^2/tau]` (and `[cm^2/s]`).
pub fn vacf_csv(m: &SelfMotion, units: &UnitSystem, labels: &[String]) -> String {
    let real = units.has_real_units();
    let groups = groups(m, labels);
    let raw: Vec<Vec<LagPoint>> = groups.iter().map(|(g, _)| m.vacf(*g)).collect();
    let norm: Vec<Vec<LagPoint>> = groups.iter().map(|(g, _)| m.vacf_normalised(*g)).collect();
    let run: Vec<Vec<LagPoint>> = raw.iter().map(|c| green_kubo_running(c)).collect();
    let mut out = String::from("t [tau]");
    if real {
        out.push_str(",t [ps]");
    }
    for (_, name) in &groups {
        out.push_str(&format!(
            ",vacf {name} [1],<v(0).v(t)> {name} [sigma^2/tau^2],D(t) {name} [sigma^2/tau]"
        ));
        if real {
            out.push_str(&format!(",D(t) {name} [cm^2/s]"));
        }
    }
    out.push('\n');
    for p in &raw[0] {
        out.push_str(&format!("{:e}", p.t));
        if real {
            out.push_str(&format!(",{:e}", p.t * units.tau_ps()));
        }
        for k in 0..groups.len() {
            let d = at(&run[k], p.t);
            out.push_str(&format!(
                ",{:e},{:e},{:e}",
                at(&norm[k], p.t),
                at(&raw[k], p.t),
                d
            ));
            if real {
                out.push_str(&format!(",{:e}", d * units.diffusion_cm2_s()));
            }
        }
        out.push('\n');
    }
    out
}
