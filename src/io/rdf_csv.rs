//! g(r) as CSV, the `rdf.csv` of a headless run (and of the window's export).

use crate::analysis::RadialDistribution;
use crate::physics::UnitSystem;

/// g(r) as CSV: r in σ (and Å for real species), the total g and running coordination number,
/// then for a mixture each species pair: `g A-B [1]`, `n B around A [1]` (and `n A around B [1]`
/// when A ≠ B). `labels` names the species in type order.
pub fn rdf_csv(g: &RadialDistribution, units: &UnitSystem, labels: &[String]) -> String {
    let real = units.has_real_units();
    let mut out = String::from(if real {
        "r [sigma],r [angstrom],g [1],coordination [1]"
    } else {
        "r [sigma],g [1],coordination [1]"
    });
    let s = g.species();
    let mixture = s > 1;
    let mut columns = Vec::new();
    if mixture {
        for a in 0..s {
            for b in a..s {
                let (la, lb) = (&labels[a], &labels[b]);
                out.push_str(&format!(",g {la}-{lb} [1],n {lb} around {la} [1]"));
                columns.push((g.pair_points(a, b), true));
                if a != b {
                    out.push_str(&format!(",n {la} around {lb} [1]"));
                    columns.push((g.pair_points(b, a), false));
                }
            }
        }
    }
    out.push('\n');
    for (k, p) in g.points().iter().enumerate() {
        if real {
            out.push_str(&format!(
                "{:.5},{:.5},{:.6},{:.6}",
                p.r,
                p.r * units.sigma_angstrom(),
                p.g,
                p.coordination
            ));
        } else {
            out.push_str(&format!("{:.5},{:.6},{:.6}", p.r, p.g, p.coordination));
        }
        for (col, with_g) in &columns {
            let q = col.get(k).copied();
            let (gv, nv) = q.map(|q| (q.g, q.coordination)).unwrap_or((f64::NAN, f64::NAN));
            if *with_g {
                out.push_str(&format!(",{gv:.6},{nv:.6}"));
            } else {
                out.push_str(&format!(",{nv:.6}"));
            }
        }
        out.push('\n');
    }
    out
}
