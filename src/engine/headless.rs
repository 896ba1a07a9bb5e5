//! Headless runs: a session stepped to the end, with the energy log, summary, checkpoint and
//! trajectory written to an output folder.

use super::session::Session;
use super::watchdog::Alarm;
use crate::analysis::RadialDistribution;
use crate::analysis::StartChoice;
use crate::analysis::eos_reference;
use crate::analysis::precision;
use crate::io::energy_log::EnergyLog;
use crate::io::rdf_csv::rdf_csv;
use crate::io::run_folder::{self, FolderError, StagedRun};
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
pub const OUTPUT_FILES: [&str; 5] = [
    "energy.csv",
    "summary.json",
    "final.checkpoint",
    "trajectory.xyz",
    "rdf.csv",
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
/// run ends ([`StagedRun`]): finished, the folder holds the whole run; stopped by a blow-up, it
/// holds the energy log (and trajectory) up to the alarm and the error says so; failed
/// otherwise (a write error) or killed, the earlier contents of `opts.out` stay as they were.
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
    let mut rdf = setup
        .rdf_every
        .map(|_| RadialDistribution::new(session.simulation().spec().cutoff, RDF_BINS));
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
    let mut failure = None;
    let mut warnings = Vec::new();
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
            match alarm {
                Alarm::NonFinite { step, atoms } => {
                    failure = Some(format!(
                        "non-finite energy at step {step}; atoms involved: {atoms:?}. Lower the timestep (now {:?}) or check the density.",
                        setup.timestep
                    ));
                    break;
                }
                other => warnings.push(other.describe()),
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
        if let (Some(g), Some(k)) = (rdf.as_mut(), setup.rdf_every)
            && step.is_multiple_of(k)
            && step >= setup.equilibration_steps
        {
            g.add(session.simulation());
        }
        if step.is_multiple_of(64) {
            bar.set_position(step - start_step);
        }
        if stopped_because == StopReason::Precision {
            break;
        }
    }
    bar.finish_and_clear();
    let wall = started.elapsed().as_secs_f64();
    log.finish().map_err(|e| io_err("energy.csv", e))?;
    if let Some(t) = traj.as_mut() {
        t.flush().map_err(|e| io_err("trajectory.xyz", e))?;
    }
    drop(traj);
    if let Some(f) = failure {
        let out = staged.commit()?;
        return Err(RunError::Failed(format!(
            "{f} {} holds the energy log up to the blow-up; no summary or checkpoint was written.",
            out.display()
        )));
    }
    for w in &warnings {
        eprintln!("warning: {w}");
    }
    if let Some(g) = &rdf {
        staged
            .create("rdf.csv")
            .and_then(|mut f| f.write_all(rdf_csv(g, &units).as_bytes()))
            .map_err(|e| io_err("rdf.csv", e))?;
    }
    session
        .checkpoint()
        .save(&staged.path().join("final.checkpoint"))
        .map_err(|e| RunError::Failed(e.to_string()))?;
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
    staged
        .create("summary.json")
        .and_then(|mut f| f.write_all(summary.to_json().as_bytes()))
        .map_err(|e| io_err("summary.json", e))?;
    staged.commit()?;
    Ok(summary)
}

/// Bins of g(r) between 0 and the cutoff.
pub const RDF_BINS: usize = 200;

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
