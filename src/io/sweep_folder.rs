//! A sweep's output folder: the sweep file and base setup it was made from, one folder per
//! point with its setup file and what its run wrote, and each point's state.
//!
//! ```text
//! OUT/sweep.ron            the sweep file as given
//! OUT/base.ron             the base setup the points were made from
//! OUT/point-0000/setup.ron the point's setup (seed included): `noblescope run` reruns it alone
//! OUT/point-0000/point.json  index, replica and axis values, for `sweep collect`
//! OUT/point-0000/run.log   what its run printed
//! OUT/point-0000/failed.txt  present when its run failed (exit code and the end of run.log)
//! OUT/point-0000/…         energy.csv, summary.json, final.checkpoint, … of its run
//! ```

use super::setup::Setup;
use super::sweep_file::{Point, Sweep, point_folder};
use serde::{Deserialize, Serialize};
use std::path::{Path, PathBuf};

/// What a point's folder says about it.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum PointState {
    /// Not run yet, or stopped by Ctrl-C before its end.
    Pending,
    /// Its run ended with a summary (its steps, its precision targets, or an alarm).
    Finished,
    /// Its run failed without a summary.
    Failed,
}

/// The index, replica and axis values of a point, as `point.json` holds them.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct PointRecord {
    pub index: usize,
    pub replica: u64,
    /// Axis name → value as written in setup files (e.g. `"Kelvin(90.0)"`), for the axes the
    /// sweep varies.
    pub axes: Vec<(String, String)>,
}

/// Why a sweep folder cannot be used.
#[derive(Debug, thiserror::Error)]
pub enum SweepFolderError {
    /// The folder holds a different sweep (exit code 2).
    #[error(
        "{folder}: holds a different sweep ({why}); allowed: a new folder, or the folder of this same sweep"
    )]
    Different { folder: String, why: String },
    #[error("{0}")]
    Io(String),
}

fn io(path: &Path, e: std::io::Error) -> SweepFolderError {
    SweepFolderError::Io(format!("{}: {e}", path.display()))
}

/// The axes a sweep varies, with the value each point takes, as setup-file text.
fn axes_of(sweep: &Sweep, s: &Setup) -> Vec<(String, String)> {
    let ron = |v: String| v;
    let mut axes = Vec::new();
    if !sweep.temperature.is_empty() {
        axes.push(("temperature".into(), ron(format!("{:?}", s.temperature))));
    }
    if !sweep.density.is_empty() {
        axes.push(("density".into(), ron(format!("{:?}", s.density))));
    }
    if !sweep.timestep.is_empty() {
        axes.push(("timestep".into(), ron(format!("{:?}", s.timestep))));
    }
    if !sweep.cutoff.is_empty() {
        axes.push(("cutoff".into(), ron(format!("{:?}", s.cutoff))));
    }
    if !sweep.atoms.is_empty() {
        axes.push(("atoms".into(), s.atoms.to_string()));
    }
    axes
}

/// Writes the sweep's folder: refuses one that holds a different sweep, keeps everything a
/// previous attempt at the same sweep wrote (so finished points are not run again).
pub fn prepare(
    out: &Path,
    sweep_text: &str,
    sweep: &Sweep,
    base: &Setup,
    points: &[Point],
) -> Result<(), SweepFolderError> {
    let sweep_file = out.join("sweep.ron");
    let base_file = out.join("base.ron");
    let base_text = base.to_ron();
    if out.exists() {
        let md = std::fs::symlink_metadata(out).map_err(|e| io(out, e))?;
        if md.file_type().is_symlink() || !md.is_dir() {
            return Err(SweepFolderError::Different {
                folder: out.display().to_string(),
                why: "not a folder".into(),
            });
        }
        let nonempty = std::fs::read_dir(out).map_err(|e| io(out, e))?.next().is_some();
        if nonempty {
            let old = std::fs::read_to_string(&sweep_file).ok();
            let old_base = std::fs::read_to_string(&base_file).ok();
            if old.as_deref() != Some(sweep_text) || old_base.as_deref() != Some(base_text.as_str()) {
                return Err(SweepFolderError::Different {
                    folder: out.display().to_string(),
                    why: if old.is_none() {
                        "it is not empty and has no sweep.ron".into()
                    } else {
                        "its sweep.ron or base.ron differs from this sweep".into()
                    },
                });
            }
        }
    }
    std::fs::create_dir_all(out).map_err(|e| io(out, e))?;
    std::fs::write(&sweep_file, sweep_text).map_err(|e| io(&sweep_file, e))?;
    std::fs::write(&base_file, &base_text).map_err(|e| io(&base_file, e))?;
    for p in points {
        let dir = out.join(p.folder_name());
        std::fs::create_dir_all(&dir).map_err(|e| io(&dir, e))?;
        let setup_file = dir.join("setup.ron");
        let text = p.setup.to_ron();
        if std::fs::read_to_string(&setup_file).ok().as_deref() != Some(text.as_str()) {
            std::fs::write(&setup_file, text).map_err(|e| io(&setup_file, e))?;
        }
        let record = PointRecord {
            index: p.index,
            replica: p.replica,
            axes: axes_of(sweep, &p.setup),
        };
        let json = dir.join("point.json");
        std::fs::write(&json, serde_json::to_string_pretty(&record).expect("serialises"))
            .map_err(|e| io(&json, e))?;
    }
    Ok(())
}

/// The folder of point `index`.
pub fn point_dir(out: &Path, index: usize) -> PathBuf {
    out.join(point_folder(index))
}

/// The state of point `index` from its folder.
pub fn point_state(out: &Path, index: usize) -> PointState {
    let dir = point_dir(out, index);
    if let Ok(text) = std::fs::read_to_string(dir.join("summary.json")) {
        let v: serde_json::Value = serde_json::from_str(&text).unwrap_or_default();
        if v.get("stopped_because").and_then(|s| s.as_str()) != Some("interrupted") && v.is_object() {
            return PointState::Finished;
        }
        return PointState::Pending;
    }
    if dir.join("failed.txt").exists() {
        PointState::Failed
    } else {
        PointState::Pending
    }
}

/// Records that point `index` failed: its exit code and the end of its log.
pub fn mark_failed(out: &Path, index: usize, exit: Option<i32>) -> Result<(), SweepFolderError> {
    let dir = point_dir(out, index);
    let log = std::fs::read_to_string(dir.join("run.log")).unwrap_or_default();
    let tail: Vec<&str> = log.lines().rev().take(20).collect();
    let text = format!(
        "exit code: {}\n{}\n",
        exit.map_or("none (killed by a signal)".into(), |c| c.to_string()),
        tail.into_iter().rev().collect::<Vec<_>>().join("\n")
    );
    let f = dir.join("failed.txt");
    std::fs::write(&f, text).map_err(|e| io(&f, e))
}

/// Forgets an earlier failure of point `index` (before it is run again).
pub fn clear_failed(out: &Path, index: usize) {
    let _ = std::fs::remove_file(point_dir(out, index).join("failed.txt"));
}

/// The indices of the point folders in `out`, ascending.
pub fn point_indices(out: &Path) -> Result<Vec<usize>, SweepFolderError> {
    let mut v: Vec<usize> = std::fs::read_dir(out)
        .map_err(|e| io(out, e))?
        .filter_map(|e| e.ok())
        .filter_map(|e| e.file_name().to_str()?.strip_prefix("point-")?.parse().ok())
        .collect();
    v.sort_unstable();
    Ok(v)
}
