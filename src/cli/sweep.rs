//! `noblescope sweep`: prepare a sweep's folder, then run its points here or hand them to Slurm;
//! `sweep collect`: the table of results.

use super::CliError;
use super::args::SweepAction;
use noblescope::engine::sweep_local::{self, LocalOptions};
use noblescope::io::slurm_script::{self, SlurmOptions};
use noblescope::io::sweep_collect;
use noblescope::io::sweep_file::{POINTS_WITHOUT_CONFIRMATION, Sweep};
use noblescope::io::sweep_folder::{self, PointState, SweepFolderError};
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};

/// Everything `sweep` was given on the command line.
pub struct SweepArgs {
    pub action: Option<SweepAction>,
    pub sweep: Option<PathBuf>,
    pub out: Option<PathBuf>,
    pub jobs: Option<usize>,
    pub retry_failed: bool,
    pub yes: bool,
    pub quiet: bool,
    pub slurm: Option<SlurmOptions>,
    pub submit: bool,
}

impl From<SweepFolderError> for CliError {
    fn from(e: SweepFolderError) -> Self {
        match e {
            SweepFolderError::Different { .. } => CliError::BadInput(e.to_string()),
            SweepFolderError::Io(m) => CliError::Failed(m),
        }
    }
}

/// Runs `sweep`.
pub fn sweep(a: SweepArgs) -> Result<(), CliError> {
    if let Some(SweepAction::Collect { dir }) = a.action {
        return collect(&dir);
    }
    let Some(path) = a.sweep else {
        return Err(CliError::BadInput(
            "sweep: no sweep file given; allowed: `noblescope sweep SWEEP.ron` or `noblescope sweep collect DIR`".into(),
        ));
    };
    let sweep = Sweep::load(&path).map_err(|e| CliError::BadInput(e.to_string()))?;
    let text =
        std::fs::read_to_string(&path).map_err(|e| CliError::BadInput(format!("{}: {e}", path.display())))?;
    let dir = path.parent().unwrap_or(Path::new("."));
    let (base, _) = sweep
        .base_setup(dir)
        .map_err(|e| CliError::BadInput(format!("{}: base: {e}", path.display())))?;
    let n = sweep.count();
    if n > POINTS_WITHOUT_CONFIRMATION && !a.yes {
        return Err(CliError::BadInput(format!(
            "{}: {n} points is out of range; allowed: at most {POINTS_WITHOUT_CONFIRMATION} without --yes",
            path.display()
        )));
    }
    let points = sweep
        .points(&base)
        .map_err(|e| CliError::BadInput(format!("{}: {e}", path.display())))?;
    let out = a.out.unwrap_or_else(|| {
        let stem = path
            .file_stem()
            .map(|s| s.to_string_lossy().into_owned())
            .unwrap_or("sweep".into());
        PathBuf::from("runs").join(stem)
    });
    sweep_folder::prepare(&out, &text, &sweep, &base, &points)?;
    let indices: Vec<usize> = points.iter().map(|p| p.index).collect();
    let exe = std::env::current_exe().map_err(|e| CliError::Failed(format!("finding this program: {e}")))?;
    if let Some(o) = a.slurm {
        return slurm(&out, &exe, &indices, &o, a.retry_failed, a.submit);
    }
    let cores = std::thread::available_parallelism().map_or(1, |c| c.get());
    let jobs = a.jobs.unwrap_or(cores);
    if jobs == 0 || jobs > 1024 {
        return Err(CliError::BadInput(format!(
            "--jobs: {jobs} is out of range; allowed: 1 to 1024"
        )));
    }
    let interrupt = Arc::new(AtomicBool::new(false));
    let flag = interrupt.clone();
    let _ = ctrlc::set_handler(move || flag.store(true, Ordering::Relaxed));
    let opts = LocalOptions {
        exe,
        jobs,
        threads_per_job: sweep_local::threads_per_job(cores, jobs),
        retry_failed: a.retry_failed,
        quiet: a.quiet,
        interrupt,
    };
    if !a.quiet {
        eprintln!(
            "{} points in {}, {jobs} at a time with {} thread(s) each",
            indices.len(),
            out.display(),
            opts.threads_per_job
        );
    }
    let done = sweep_local::run(&out, &indices, &opts).map_err(|e| CliError::Failed(e.to_string()))?;
    let c = sweep_collect::collect(&out)?;
    println!(
        "{} points: {} finished ({} earlier), {} failed, {} not run -> {}",
        c.points,
        c.finished,
        done.skipped,
        c.failed,
        c.pending,
        out.join("sweep.csv").display()
    );
    if done.interrupted {
        return Err(CliError::Interrupted(format!(
            "sweep interrupted; finished points are kept, and the same command runs the rest ({} left)",
            c.pending
        )));
    }
    if !done.failed.is_empty() {
        return Err(CliError::Failed(format!(
            "points {:?} failed (see failed.txt and run.log in their folders); `--retry-failed` runs them again",
            done.failed
        )));
    }
    Ok(())
}

fn collect(dir: &Path) -> Result<(), CliError> {
    let c = sweep_collect::collect(dir)?;
    println!(
        "{} points: {} finished, {} failed, {} not run -> {}{}",
        c.points,
        c.finished,
        c.failed,
        c.pending,
        dir.join("sweep.csv").display(),
        if c.plot { " and sweep.svg" } else { "" }
    );
    Ok(())
}

/// Writes `sweep.sbatch` for the points not finished (with `retry_failed`, failed ones too;
/// without, points never run), and submits it with `--submit`.
fn slurm(
    out: &Path,
    exe: &Path,
    indices: &[usize],
    o: &SlurmOptions,
    retry_failed: bool,
    submit: bool,
) -> Result<(), CliError> {
    if let Some(t) = &o.time
        && !slurm_script::valid_time(t)
    {
        return Err(CliError::BadInput(format!(
            "--time: {t} is out of range; allowed: HH:MM:SS"
        )));
    }
    if o.cpus_per_task == 0 || o.max_parallel == Some(0) {
        return Err(CliError::BadInput(
            "--cpus-per-task / --max-parallel: 0 is out of range; allowed: 1 or more".into(),
        ));
    }
    let todo: Vec<usize> = indices
        .iter()
        .copied()
        .filter(|&i| match sweep_folder::point_state(out, i) {
            PointState::Finished => false,
            PointState::Failed => retry_failed,
            PointState::Pending => true,
        })
        .collect();
    if todo.is_empty() {
        println!("every point is finished or failed (add --retry-failed for failed ones); nothing to submit");
        return Ok(());
    }
    let out_abs =
        std::fs::canonicalize(out).map_err(|e| CliError::Failed(format!("{}: {e}", out.display())))?;
    let script = slurm_script::script(&out_abs, exe, &todo, o);
    let file = out_abs.join("sweep.sbatch");
    std::fs::write(&file, script).map_err(|e| CliError::Failed(format!("{}: {e}", file.display())))?;
    println!(
        "{} of {} points in {} ({}); `noblescope sweep collect {}` when the array is done",
        todo.len(),
        indices.len(),
        file.display(),
        slurm_script::array_ranges(&todo),
        out.display()
    );
    if submit {
        let o = std::process::Command::new("sbatch")
            .arg("--parsable")
            .arg(&file)
            .output()
            .map_err(|e| CliError::Failed(format!("sbatch: {e}")))?;
        if !o.status.success() {
            return Err(CliError::Failed(format!(
                "sbatch refused the script: {}",
                String::from_utf8_lossy(&o.stderr).trim()
            )));
        }
        let id = String::from_utf8_lossy(&o.stdout);
        let id = id.trim().split(';').next().unwrap_or("").to_string();
        println!("submitted job {id}");
    }
    Ok(())
}
