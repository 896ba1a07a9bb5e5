//! g(r) as CSV, the `rdf.csv` of a headless run.

use crate::analysis::RadialDistribution;
use crate::physics::UnitSystem;

/// g(r) as CSV: r in σ (and Å for real species), g, running coordination number.
pub fn rdf_csv(g: &RadialDistribution, units: &UnitSystem) -> String {
    let real = units.has_real_units();
    let mut out = String::from(if real {
        "r [sigma],r [angstrom],g [1],coordination [1]\n"
    } else {
        "r [sigma],g [1],coordination [1]\n"
    });
    for p in g.points() {
        if real {
            out.push_str(&format!(
                "{:.5},{:.5},{:.6},{:.6}\n",
                p.r,
                p.r * units.sigma_angstrom(),
                p.g,
                p.coordination
            ));
        } else {
            out.push_str(&format!("{:.5},{:.6},{:.6}\n", p.r, p.g, p.coordination));
        }
    }
    out
}
