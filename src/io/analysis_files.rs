//! The analysis files of a run (`rdf.csv`, `msd.csv`, `vacf.csv`, `speeds.csv`) as text, for
//! the headless runner's output folder and the window's exports.

use super::motion_csv::{msd_csv, vacf_csv};
use super::rdf_csv::rdf_csv;
use super::speeds_csv::speeds_csv;
use crate::analysis::{RadialDistribution, SelfMotion, SpeedHistogram};
use crate::physics::{Species, UnitSystem};

/// Names of the species for CSV columns, in type order: element symbols (`Ar`, `LJ`), with
/// commas replaced so a name never splits a column.
pub fn species_labels(kinds: &[Species]) -> Vec<String> {
    kinds.iter().map(|k| k.symbol().replace(',', ";")).collect()
}

/// File name and text of each analysis that ran and holds data.
pub fn analysis_files(
    rdf: Option<&RadialDistribution>,
    motion: Option<&SelfMotion>,
    speeds: Option<&SpeedHistogram>,
    units: &UnitSystem,
    labels: &[String],
) -> Vec<(&'static str, String)> {
    let mut out = Vec::new();
    if let Some(g) = rdf {
        out.push(("rdf.csv", rdf_csv(g, units, labels)));
    }
    if let Some(m) = motion {
        out.push(("msd.csv", msd_csv(m, units, labels)));
        out.push(("vacf.csv", vacf_csv(m, units, labels)));
    }
    if let Some(h) = speeds {
        out.push(("speeds.csv", speeds_csv(h, units, labels)));
    }
    out
}
