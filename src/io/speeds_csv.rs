//! `speeds.csv`: the speed histogram of each species beside the Maxwell–Boltzmann density, one
//! row per species and bin, with units in the header.

use crate::analysis::SpeedHistogram;
use crate::physics::UnitSystem;

/// Rows `species,v [sigma/tau],density [tau/sigma],maxwell-boltzmann [tau/sigma]`, with
/// `v [m/s]`, `density [s/m]` and `maxwell-boltzmann [s/m]` after them for real species.
pub fn speeds_csv(h: &SpeedHistogram, units: &UnitSystem, labels: &[String]) -> String {
    let real = units.has_real_units();
    let mut out = String::from("species,v [sigma/tau],density [tau/sigma],maxwell-boltzmann [tau/sigma]");
    if real {
        out.push_str(",v [m/s],density [s/m],maxwell-boltzmann [s/m]");
    }
    out.push('\n');
    let c = units.speed_m_s();
    for (t, label) in labels.iter().enumerate() {
        let Some(f) = h.fit(t) else { continue };
        for k in 0..f.v.len() {
            out.push_str(&format!(
                "{label},{:e},{:e},{:e}",
                f.v[k], f.density[k], f.maxwell_boltzmann[k]
            ));
            if real {
                out.push_str(&format!(
                    ",{:e},{:e},{:e}",
                    f.v[k] * c,
                    f.density[k] / c,
                    f.maxwell_boltzmann[k] / c
                ));
            }
            out.push('\n');
        }
    }
    out
}
