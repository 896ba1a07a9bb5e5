//! Recovery of a headless run (`run --recover`): on an alarm, back to the last healthy
//! snapshot with half the timestep, at most [`MAX_RECOVERIES`] times.
//!
//! A snapshot holds the exact state and how far each output file had been written, so going
//! back also cuts the energy log and the trajectory to that step: the files read as one run.
//! Nothing here depends on timing or threads, so a run with recoveries is as reproducible as
//! one without (same setup, same seed: same alarms, same recoveries, same bits).

use super::analyses::Analyses;
use super::session::Session;
use super::watchdog::Alarm;
use crate::io::summary::{AlarmSummary, RecoverySummary};
use crate::physics::SimulationState;
use std::fs::File;
use std::io::{BufWriter, Seek, SeekFrom, Write};

/// Most recoveries one run makes.
pub const MAX_RECOVERIES: usize = 3;
/// Steps between the snapshots a recovering run keeps (one is held at a time; a snapshot
/// costs one copy of the state, about 73 bytes an atom).
pub const SNAPSHOT_EVERY: u64 = 200;

/// The alarm as `summary.json` records it.
pub fn alarm_summary(a: &Alarm) -> AlarmSummary {
    AlarmSummary {
        kind: a.kind.name().to_string(),
        step: a.step,
        atoms: a.atom_indices(),
        detail: a.detail.clone(),
    }
}

/// A healthy point of the run to go back to.
pub struct Snapshot {
    state: SimulationState,
    log_bytes: u64,
    trajectory_bytes: Option<u64>,
    analyses: Analyses,
}

/// Flushes `w` and returns how many bytes its file holds.
fn mark(w: &mut BufWriter<File>) -> std::io::Result<u64> {
    w.flush()?;
    w.get_mut().stream_position()
}

/// Cuts the file behind `w` back to `bytes` and writes on from there.
fn cut(w: &mut BufWriter<File>, bytes: u64) -> std::io::Result<()> {
    w.flush()?;
    let f = w.get_mut();
    f.set_len(bytes)?;
    f.seek(SeekFrom::Start(bytes))?;
    Ok(())
}

/// The outputs a headless run is writing, as far as recovery needs them.
pub struct Outputs<'a> {
    pub log: &'a mut BufWriter<File>,
    pub trajectory: Option<&'a mut BufWriter<File>>,
    /// The run's analyses (g(r), self motion, speeds), kept as they were at the snapshot.
    pub analyses: &'a Analyses,
}

impl Snapshot {
    /// Takes a snapshot of `session` and of how far the outputs are written.
    pub fn take(session: &Session, out: Outputs) -> std::io::Result<Snapshot> {
        Ok(Snapshot {
            state: session.simulation().state(),
            log_bytes: mark(out.log)?,
            trajectory_bytes: match out.trajectory {
                Some(t) => Some(mark(t)?),
                None => None,
            },
            analyses: out.analyses.clone(),
        })
    }

    /// Step of the snapshot.
    pub fn step(&self) -> u64 {
        self.state.step
    }

    /// Goes back: restores the state, cuts the files, and returns the sample count and g(r)
    /// to keep.
    pub fn restore(&self, session: &mut Session, out: Outputs) -> Result<Analyses, String> {
        session
            .restore(self.state.clone())
            .map_err(|e| format!("restoring step {}: {e}", self.state.step))?;
        cut(out.log, self.log_bytes).map_err(|e| format!("writing energy.csv: {e}"))?;
        if let (Some(t), Some(b)) = (out.trajectory, self.trajectory_bytes) {
            cut(t, b).map_err(|e| format!("writing trajectory.xyz: {e}"))?;
        }
        Ok(self.analyses.clone())
    }
}

/// Halves the session's timestep (in the setup's unit) after `alarm`, and says so.
pub fn halve_timestep(
    session: &mut Session,
    alarm: &Alarm,
    resumed_from: u64,
) -> Result<RecoverySummary, String> {
    let before = session.setup().timestep;
    let after = before.with_value(before.value() / 2.0);
    session
        .set_timestep(after)
        .map_err(|e| format!("cannot halve the timestep for a recovery: {e}"))?;
    Ok(RecoverySummary {
        alarm: alarm_summary(alarm),
        resumed_from_step: resumed_from,
        timestep_before: before.value(),
        timestep_after: after.value(),
        timestep_unit: before.symbol(),
    })
}
