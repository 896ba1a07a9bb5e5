//! Headless runs: a session stepped to the end, with the energy log, summary, checkpoint and
//! trajectory written to an output folder.

use super::analyses::{Analyses, Cadence};
use super::recovery::{MAX_RECOVERIES, Outputs, SNAPSHOT_EVERY, Snapshot, alarm_summary, halve_timestep};
use super::session::Session;
use super::watchdog::Alarm;
use crate::analysis::StartChoice;
use crate::analysis::eos_reference;
use crate::analysis::precision;
use crate::io::analysis_files::{analysis_files, species_labels};
use crate::io::energy_log::EnergyLog;
use crate::io::run_folder::{self, FolderError, StagedRun};
use crate::io::setup::Setup;
use crate::io::summary::{RunFacts, StopReason, Summary};
use crate::io::trajectory;
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use std::io::{BufWriter, IsTerminal, Write};
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::Instant;

/// How a headless run is carried out.
#[derive(Clone, Debug)]
pub struct HeadlessOptions {
    /// Run until this step (default: the setup's `steps`).
    pub until_step: Option<u64>,
    pub out: PathBuf,
    /// Threads in use (for the summary).
    pub threads: usize,
    /// No progress bar.
    pub quiet: bool,
    /// Replace the files of an earlier run in `out`.
    pub overwrite: bool,
    /// Set from outside (Ctrl-C) to stop after the present step; the run then ends as if it
    /// had reached its steps, with `stopped_because: "interrupted"`.
    pub interrupt: Option<Arc<AtomicBool>>,
    /// On an alarm go back to the last healthy snapshot with half the timestep (at most
    /// [`MAX_RECOVERIES`] times); also on when the setup says `recover: true`.
    pub recover: bool,
}

/// Why a headless run stopped early.
#[derive(Debug, thiserror::Error)]
pub enum RunError {
    /// The inputs cannot be run (the command line exits with code 2).
    #[error("{0}")]
    BadInput(String),
    /// The run itself failed (the command line exits with code 1).
    #[error("{0}")]
    Failed(String),
}

/// Files a run writes into its output folder.
pub const OUTPUT_FILES: [&str; 9] = [
    "energy.csv",
    "summary.json",
    "final.checkpoint",
    "trajectory.xyz",
    "rdf.csv",
    "msd.csv",
    "vacf.csv",
    "speeds.csv",
    "alarm.xyz",
];

/// Checks that `out` can take a run without destroying an earlier one or anything else (see
/// [`run_folder::check`]); changes nothing.
pub fn check_output_dir(out: &Path, overwrite: bool) -> Result<(), RunError> {
    run_folder::check(out, overwrite, &OUTPUT_FILES).map_err(RunError::from)
}

impl From<FolderError> for RunError {
    fn from(e: FolderError) -> Self {
        if e.is_bad_input() {
            RunError::BadInput(e.to_string())
        } else {
            RunError::Failed(e.to_string())
        }
    }
}

/// Runs `session` to the end and writes the outputs. `fresh` is false when continuing from a
/// checkpoint (the starting sample was already logged by the earlier run).
///
/// The files are written into a staging folder beside `opts.out` that takes its place when the
/// run ends ([`StagedRun`]): finished, the folder holds the whole run; stopped by the watchdog,
/// it holds the energy log, the trajectory and the analyses up to the alarm, `summary.json`
/// with the alarm, and `alarm.xyz` (the configuration at the alarm), but no checkpoint, and the
/// error names the kind, the step and the atoms; failed otherwise (a write error) or killed,
/// the earlier contents of `opts.out` stay as they were.
pub fn run(mut session: Session, fresh: bool, opts: &HeadlessOptions) -> Result<Summary, RunError> {
    let setup = session.setup().clone();
    let until = opts.until_step.unwrap_or(setup.steps);
    let start_step = session.simulation().step_count();
    if until <= start_step {
        return Err(RunError::BadInput(format!(
            "--steps: {until} is not past the saved step {start_step}; allowed: more than {start_step}"
        )));
    }
    let staged = StagedRun::begin(&opts.out, opts.overwrite, &OUTPUT_FILES)?;
    let io_err = |what: &str, e: std::io::Error| RunError::Failed(format!("writing {what}: {e}"));
    let units = session.units();
    let csv = staged.create("energy.csv").map_err(|e| io_err("energy.csv", e))?;
    let mut log = EnergyLog::new(BufWriter::new(csv), units).map_err(|e| io_err("energy.csv", e))?;
    let mut traj = match setup.trajectory_every {
        Some(_) => Some(BufWriter::new(
            staged
                .create("trajectory.xyz")
                .map_err(|e| io_err("trajectory.xyz", e))?,
        )),
        None => None,
    };
    let mut last_drift = session.observe().drift;
    let mut analyses = Analyses::new(
        session.simulation(),
        Cadence {
            rdf_every: setup.rdf_every,
            rdf_half_box: setup.rdf_reach == crate::io::setup::RdfReach::HalfBox,
            dynamics_every: setup.dynamics_every,
            speeds_every: setup.speeds_every,
            from_step: setup.equilibration_steps,
        },
    );
    if fresh {
        // The session holds this first sample already.
        let o = session.observe();
        log.write(&o).map_err(|e| io_err("energy.csv", e))?;
        if let Some(t) = traj.as_mut() {
            let sim = session.simulation();
            trajectory::write_frame(t, sim.system(), &units, sim.step_count(), sim.time())
                .map_err(|e| io_err("trajectory.xyz", e))?;
        }
    }
    let bar = progress_bar(until - start_step, opts.quiet);
    let started = Instant::now();
    let atoms = session.simulation().system().len();
    let recover = opts.recover || setup.recover;
    let mut recoveries = Vec::new();
    let mut snapshot = None;
    if recover {
        let out = Outputs {
            log: log.sink(),
            trajectory: traj.as_mut(),
            analyses: &analyses,
        };
        snapshot = Some(Snapshot::take(&session, out).map_err(|e| io_err("energy.csv", e))?);
    }
    let mut failure = None;
    let mut stopped_because = StopReason::Steps;
    while session.simulation().step_count() < until {
        if opts.interrupt.as_ref().is_some_and(|f| f.load(Ordering::Relaxed)) {
            stopped_because = StopReason::Interrupted;
            break;
        }
        let out = session.step();
        if let Some(o) = out.sample {
            log.write(&o).map_err(|e| io_err("energy.csv", e))?;
            last_drift = o.drift;
        }
        if out.precision_met.is_some() {
            stopped_because = StopReason::Precision;
        }
        if let Some(alarm) = out.alarm {
            match snapshot
                .as_ref()
                .filter(|_: &&Snapshot| recoveries.len() < MAX_RECOVERIES)
            {
                Some(snap) => {
                    // The session forgets the samples after the snapshot as it restores it.
                    analyses = snap
                        .restore(
                            &mut session,
                            Outputs {
                                log: log.sink(),
                                trajectory: traj.as_mut(),
                                analyses: &analyses,
                            },
                        )
                        .map_err(RunError::Failed)?;
                    match halve_timestep(&mut session, &alarm, snap.step()) {
                        Ok(r) => {
                            if !opts.quiet {
                                eprintln!(
                                    "recovered: {} Back to step {}, timestep {} → {} {}.",
                                    alarm.describe(),
                                    r.resumed_from_step,
                                    r.timestep_before,
                                    r.timestep_after,
                                    r.timestep_unit
                                );
                            }
                            recoveries.push(r);
                            stopped_because = StopReason::Steps;
                            continue;
                        }
                        Err(why) => {
                            failure = Some((alarm, Some(why)));
                            break;
                        }
                    }
                }
                None => {
                    failure = Some((alarm, None));
                    break;
                }
            }
        }
        let step = session.simulation().step_count();
        if let (Some(t), Some(k)) = (traj.as_mut(), setup.trajectory_every)
            && step.is_multiple_of(k)
        {
            let sim = session.simulation();
            trajectory::write_frame(t, sim.system(), &units, step, sim.time())
                .map_err(|e| io_err("trajectory.xyz", e))?;
        }
        analyses.after_step(session.simulation());
        if recover && step.is_multiple_of(SNAPSHOT_EVERY) {
            let out = Outputs {
                log: log.sink(),
                trajectory: traj.as_mut(),
                analyses: &analyses,
            };
            snapshot = Some(Snapshot::take(&session, out).map_err(|e| io_err("energy.csv", e))?);
        }
        if step.is_multiple_of(64) {
            bar.set_position(step - start_step);
        }
        if stopped_because == StopReason::Precision {
            break;
        }
    }
    if failure.is_some() {
        stopped_because = StopReason::Alarm;
    }
    bar.finish_and_clear();
    let wall = started.elapsed().as_secs_f64();
    log.finish().map_err(|e| io_err("energy.csv", e))?;
    if let Some(t) = traj.as_mut() {
        t.flush().map_err(|e| io_err("trajectory.xyz", e))?;
    }
    drop(traj);
    let labels = species_labels(&session.simulation().system().kinds);
    let files = analysis_files(
        analyses.rdf.as_ref(),
        analyses.motion.as_ref(),
        analyses.speeds.as_ref(),
        &units,
        &labels,
    );
    for (name, text) in files {
        staged
            .create(name)
            .and_then(|mut f| f.write_all(text.as_bytes()))
            .map_err(|e| io_err(name, e))?;
    }
    if failure.is_some() {
        let sim = session.simulation();
        staged
            .create("alarm.xyz")
            .and_then(|f| {
                let mut w = BufWriter::new(f);
                trajectory::write_frame(&mut w, sim.system(), &units, sim.step_count(), sim.time())?;
                w.flush()
            })
            .map_err(|e| io_err("alarm.xyz", e))?;
    } else {
        session
            .checkpoint()
            .save(&staged.path().join("final.checkpoint"))
            .map_err(|e| RunError::Failed(e.to_string()))?;
    }
    let sim = session.simulation();
    let evidence = session.evidence(StartChoice::Automatic);
    let equation_of_state = session
        .eos_run_state()
        .map(|state| eos_reference::compare(&evidence, state));
    let summary = Summary::new(
        session.samples(),
        &evidence,
        units,
        RunFacts {
            title: setup.title.clone(),
            atoms,
            steps: sim.step_count(),
            equilibration_steps: setup.equilibration_steps,
            density: sim.system().density(),
            mass_density_g_cm3: units.has_real_units().then(|| mass_density(&session)),
            neighbour_list_builds: sim.list_builds(),
            steps_run: sim.step_count() - start_step,
            wall_seconds: wall,
            threads: opts.threads,
            relative_energy_drift: last_drift,
            stopped_because,
            precision: precision::progress(&evidence, session.precision_targets()),
            equation_of_state,
        },
    );
    let mut summary = summary;
    let window = setup
        .diffusion_window_tau()
        .ok()
        .flatten()
        .map(|[from, to]| crate::analysis::FitWindow { from, to });
    summary.add_motion(
        analyses.diffusion(window),
        analyses.speeds.as_ref(),
        &labels,
        units,
    );
    summary.alarm = failure.as_ref().map(|(a, _)| alarm_summary(a));
    summary.recoveries = recover.then_some(recoveries);
    staged
        .create("summary.json")
        .and_then(|mut f| f.write_all(summary.to_json().as_bytes()))
        .map_err(|e| io_err("summary.json", e))?;
    let out = staged.commit()?;
    if let Some((alarm, why)) = failure {
        return Err(RunError::Failed(alarm_message(
            &alarm,
            why,
            session.setup(),
            &out,
        )));
    }
    Ok(summary)
}

/// The message of a run the watchdog stopped: kind, step, atoms, what was seen, what to try,
/// and what the folder holds.
fn alarm_message(alarm: &Alarm, why_not_recovered: Option<String>, setup: &Setup, out: &Path) -> String {
    let first = alarm
        .atoms
        .first()
        .map(|a| {
            let near: Vec<String> = a
                .neighbours
                .iter()
                .map(|n| format!("{} at {:.3} σ", n.atom, n.distance))
                .collect();
            format!(
                " Atom {} ({}) at ({:.3}, {:.3}, {:.3}) σ, nearest: {}.",
                a.atom,
                a.species.label(),
                a.position[0],
                a.position[1],
                a.position[2],
                near.join(", ")
            )
        })
        .unwrap_or_default();
    let not_recovered = why_not_recovered
        .map(|w| format!(" Not recovered: {w}."))
        .unwrap_or_default();
    format!(
        "watchdog alarm {} at step {}; atoms involved: {:?}. {}{first} {} (timestep now {} {}){not_recovered} {} holds the run up to the alarm (energy.csv, summary.json with the alarm, alarm.xyz); no checkpoint was written.",
        alarm.kind.name(),
        alarm.step,
        alarm.atom_indices(),
        alarm.detail,
        alarm.kind.advice(),
        setup.timestep.value(),
        setup.timestep.symbol(),
        out.display()
    )
}

/// Bins of g(r) between 0 and the cutoff.
pub use super::analyses::RDF_BINS;

/// Mass density of the session's box in g/cm³.
pub fn mass_density(session: &Session) -> f64 {
    let sys = session.simulation().system();
    let u = session.units();
    let mean_mass: f64 = sys.types.iter().map(|&t| sys.masses[t as usize]).sum::<f64>() / sys.len() as f64;
    sys.density() * mean_mass * u.mass_density_g_cm3()
}

fn progress_bar(len: u64, quiet: bool) -> ProgressBar {
    if quiet || !std::io::stderr().is_terminal() {
        return ProgressBar::hidden();
    }
    let bar = ProgressBar::with_draw_target(Some(len), ProgressDrawTarget::stderr());
    bar.set_style(
        ProgressStyle::with_template("{bar:40} {pos}/{len} steps  {per_sec}  {eta} left")
            .unwrap_or_else(|_| ProgressStyle::default_bar()),
    );
    bar
}
