//! `sweep collect`: one table of a sweep's results, `sweep.csv` and `sweep.json`, from its
//! point folders (on any machine that sees the folder).

use super::sweep_folder::{PointRecord, PointState, SweepFolderError, point_dir, point_indices, point_state};
use super::sweep_plot::{PlotData, SweepPoint, Varying};
use serde_json::{Value, json};
use std::path::Path;

/// Columns of `sweep.csv` after the axes: (header, path into summary.json).
const COLUMNS: &[(&str, &[&str])] = &[
    ("stopped_because", &["stopped_because"]),
    ("steps", &["steps"]),
    ("equilibrated", &["equilibration", "equilibrated"]),
    (
        "equilibration_start_step",
        &["equilibration", "detected_start_step"],
    ),
    ("temperature", &["quantities", "temperature", "mean"]),
    ("temperature_stderr", &["quantities", "temperature", "stderr"]),
    ("pressure", &["quantities", "pressure", "mean"]),
    ("pressure_stderr", &["quantities", "pressure", "stderr"]),
    (
        "potential_energy_per_atom",
        &["quantities", "potential_energy_per_atom", "mean"],
    ),
    (
        "potential_energy_per_atom_stderr",
        &["quantities", "potential_energy_per_atom", "stderr"],
    ),
    (
        "total_energy_per_atom",
        &["quantities", "total_energy_per_atom", "mean"],
    ),
    (
        "total_energy_per_atom_stderr",
        &["quantities", "total_energy_per_atom", "stderr"],
    ),
    ("relative_energy_drift", &["relative_energy_drift"]),
    (
        "full_potential_pressure",
        &["equation_of_state", "run_full_potential_pressure", "mean"],
    ),
    (
        "full_potential_pressure_stderr",
        &["equation_of_state", "run_full_potential_pressure", "stderr"],
    ),
    (
        "full_potential_residual_energy",
        &["equation_of_state", "run_full_potential_residual_energy", "mean"],
    ),
    (
        "full_potential_residual_energy_stderr",
        &[
            "equation_of_state",
            "run_full_potential_residual_energy",
            "stderr",
        ],
    ),
    ("eos_pressure", &["equation_of_state", "pressure"]),
    ("eos_residual_energy", &["equation_of_state", "residual_energy"]),
    ("eos_region", &["equation_of_state", "region"]),
    ("self_diffusion_einstein", &["self_diffusion", "einstein", "mean"]),
    (
        "self_diffusion_einstein_stderr",
        &["self_diffusion", "einstein", "stderr"],
    ),
    (
        "self_diffusion_green_kubo",
        &["self_diffusion", "green_kubo", "mean"],
    ),
    (
        "self_diffusion_green_kubo_stderr",
        &["self_diffusion", "green_kubo", "stderr"],
    ),
    ("alarm", &["alarm", "kind"]),
    ("alarm_step", &["alarm", "step"]),
    ("wall_seconds", &["wall_seconds"]),
    ("atom_steps_per_second", &["atom_steps_per_second"]),
];

/// Columns that change from one run of the same point to the next (the machine's speed), left
/// out when two tables are compared.
pub const TIMING_COLUMNS: [&str; 2] = ["wall_seconds", "atom_steps_per_second"];

fn cell(v: Option<&Value>) -> String {
    match v {
        None | Some(Value::Null) => String::new(),
        Some(Value::String(s)) => csv_text(s),
        Some(Value::Bool(b)) => b.to_string(),
        // serde_json keeps the shortest text that reads back as the same double.
        Some(Value::Number(n)) => n.to_string(),
        Some(other) => csv_text(&other.to_string()),
    }
}

fn csv_text(s: &str) -> String {
    if s.contains([',', '"', '\n']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

fn at<'a>(v: &'a Value, path: &[&str]) -> Option<&'a Value> {
    path.iter().try_fold(v, |v, k| v.get(k))
}

/// What `collect` found.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Collected {
    pub points: usize,
    pub finished: usize,
    pub failed: usize,
    pub pending: usize,
    /// `sweep.svg` was written (a sweep that varies density or temperature alone).
    pub plot: bool,
}

/// The plot of a sweep that varies density alone or temperature alone.
fn plot_data(axes: &[String], points: &[Value]) -> Option<PlotData> {
    let finished: Vec<&Value> = points.iter().filter(|p| p["state"] == "finished").collect();
    let first = finished.first()?;
    let num = |v: &Value, path: &[&str]| at(v, path).and_then(Value::as_f64);
    let s = &first["summary"];
    let single = s.get("equation_of_state").is_some();
    let varying = match axes {
        [a] if a == "density" => Varying::Density {
            temperature: num(s, &["equation_of_state", "temperature"])?,
        },
        [a] if a == "temperature" => Varying::Temperature {
            density: num(s, &["density"])?,
        },
        _ => return None,
    };
    let pts: Vec<SweepPoint> = finished
        .iter()
        .filter_map(|p| {
            let s = &p["summary"];
            let x = match varying {
                Varying::Density { .. } => num(s, &["density"])?,
                Varying::Temperature { .. } => num(s, &["equation_of_state", "temperature"])
                    .or_else(|| num(s, &["quantities", "temperature", "mean"]))?,
            };
            Some(SweepPoint {
                x,
                pressure: (
                    num(s, &["quantities", "pressure", "mean"])?,
                    num(s, &["quantities", "pressure", "stderr"]).unwrap_or(0.0),
                ),
                full_pressure: num(s, &["equation_of_state", "run_full_potential_pressure", "mean"]).map(
                    |m| {
                        (
                            m,
                            num(s, &["equation_of_state", "run_full_potential_pressure", "stderr"])
                                .unwrap_or(0.0),
                        )
                    },
                ),
            })
        })
        .collect();
    if pts.is_empty() {
        return None;
    }
    let (lo, hi) = super::sweep_plot::x_range(&pts);
    Some(PlotData {
        varying,
        eos_curve: if single {
            super::sweep_plot::eos_curve(varying, lo, hi)
        } else {
            Vec::new()
        },
        points: pts,
        single_species: single,
    })
}

/// A sweep's results as read from its folder.
#[derive(Clone, Debug, PartialEq)]
pub struct SweepTable {
    /// Column names and one row of cells per point, as in `sweep.csv`.
    pub header: Vec<String>,
    pub rows: Vec<Vec<String>>,
    /// `sweep.json`'s points.
    pub points: Vec<Value>,
    pub tally: Collected,
    pub plot: Option<PlotData>,
}

/// Reads a sweep's results from its point folders, writing nothing.
pub fn read_table(out: &Path) -> Result<SweepTable, SweepFolderError> {
    let indices = point_indices(out)?;
    if indices.is_empty() {
        return Err(SweepFolderError::Io(format!(
            "{}: no point folders (point-0000, …); allowed: a folder written by `noblescope sweep`",
            out.display()
        )));
    }
    let mut rows = Vec::new();
    let mut points = Vec::new();
    let mut tally = Collected::default();
    let mut axis_names: Vec<String> = Vec::new();
    for &i in &indices {
        let dir = point_dir(out, i);
        let record: PointRecord = std::fs::read_to_string(dir.join("point.json"))
            .ok()
            .and_then(|t| serde_json::from_str(&t).ok())
            .unwrap_or(PointRecord {
                index: i,
                replica: 0,
                axes: Vec::new(),
            });
        if axis_names.is_empty() {
            axis_names = record.axes.iter().map(|(k, _)| k.clone()).collect();
        }
        let state = point_state(out, i);
        match state {
            PointState::Finished => tally.finished += 1,
            PointState::Failed => tally.failed += 1,
            PointState::Pending => tally.pending += 1,
        }
        let summary: Value = if state == PointState::Finished {
            std::fs::read_to_string(dir.join("summary.json"))
                .ok()
                .and_then(|t| serde_json::from_str(&t).ok())
                .unwrap_or(Value::Null)
        } else {
            Value::Null
        };
        let mut row = vec![i.to_string(), record.replica.to_string()];
        for name in &axis_names {
            let v = record
                .axes
                .iter()
                .find(|(k, _)| k == name)
                .map(|(_, v)| v.as_str())
                .unwrap_or("");
            row.push(csv_text(v));
        }
        row.push(format!("{state:?}").to_lowercase());
        for (_, path) in COLUMNS {
            row.push(cell(at(&summary, path)));
        }
        rows.push(row);
        points.push(json!({
            "index": i,
            "replica": record.replica,
            "axes": record.axes.iter().map(|(k, v)| (k.clone(), Value::String(v.clone()))).collect::<serde_json::Map<_, _>>(),
            "state": state,
            "summary": summary,
        }));
    }
    tally.points = indices.len();
    let mut header = vec!["index".to_string(), "replica".into()];
    header.extend(axis_names.iter().cloned());
    header.push("state".into());
    header.extend(COLUMNS.iter().map(|(h, _)| h.to_string()));
    let plot = plot_data(&axis_names, &points);
    Ok(SweepTable {
        header,
        rows,
        points,
        tally,
        plot,
    })
}

/// Writes `sweep.csv` and `sweep.json` (and `sweep.svg` when one axis, density or
/// temperature, varies) into `out` from its point folders.
pub fn collect(out: &Path) -> Result<Collected, SweepFolderError> {
    let io = |p: &Path, e: std::io::Error| SweepFolderError::Io(format!("{}: {e}", p.display()));
    let t = read_table(out)?;
    let lines: Vec<String> = t.rows.iter().map(|r| r.join(",")).collect();
    let csv = format!(
        "# sweep results: one row per point; reduced units of the first listed species (see each point's summary.json)\n{}\n{}\n",
        t.header.join(","),
        lines.join("\n")
    );
    let (points, mut tally) = (t.points, t.tally);
    let csv_path = out.join("sweep.csv");
    std::fs::write(&csv_path, csv).map_err(|e| io(&csv_path, e))?;
    let json_path = out.join("sweep.json");
    let doc = json!({
        "points": points,
        "finished": tally.finished,
        "failed": tally.failed,
        "pending": tally.pending,
    });
    std::fs::write(
        &json_path,
        serde_json::to_string_pretty(&doc).expect("serialises"),
    )
    .map_err(|e| io(&json_path, e))?;
    tally.plot = t
        .plot
        .is_some_and(|p| super::sweep_plot::write(&out.join("sweep.svg"), &p).is_ok());
    Ok(tally)
}
