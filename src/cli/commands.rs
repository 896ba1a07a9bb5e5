//! The subcommands: each collects its inputs, calls the library and prints through
//! [`output`](super::output). Errors are [`CliError`]s; [`exit_code`](super::exit_code) turns
//! them into exit codes.

use super::CliError;
use super::args::{Cmd, RunFlags};
use super::output;
use noblescope::engine::headless::{self, HeadlessOptions};
use noblescope::engine::tuning::{self, TuneError, TuneInput, TuneRequest};
use noblescope::engine::{Session, bench};
use noblescope::io::Setup;
use noblescope::io::checkpoint::Checkpoint;
use noblescope::ui::StartOptions;
use noblescope::ui::watch::WatchPlan;
use std::path::{Path, PathBuf};

/// What the window opens on after `watch`'s checks: start options and window size.
pub type WindowPlan = (StartOptions, Option<[f32; 2]>);

/// What `main` does next: nothing more (a headless command ran), or open the window.
pub enum Next {
    /// The command ran to its end.
    Done,
    /// Open the window on this plan.
    Window(Box<WindowPlan>),
}

/// Runs a subcommand; `watch` only checks its inputs and hands back the window to open.
pub fn run(cmd: Cmd) -> Result<Next, CliError> {
    match cmd {
        Cmd::Run { setup, out, run } => {
            let threads = set_threads(run.threads)?;
            let parsed = Setup::load(&setup).map_err(|e| CliError::BadInput(e.to_string()))?;
            let out = out.unwrap_or_else(|| default_out(&setup));
            headless::check_output_dir(&out, run.overwrite)?;
            for note in parsed.cautions() {
                eprintln!("caution: {note}");
            }
            let session =
                Session::new(parsed).map_err(|e| CliError::BadInput(format!("{}: {e}", setup.display())))?;
            run_to_end(session, true, out, threads, &run)?;
        }
        Cmd::Resume { checkpoint, out, run } => {
            let threads = set_threads(run.threads)?;
            headless::check_output_dir(&out, run.overwrite)?;
            let c = Checkpoint::load(&checkpoint).map_err(|e| CliError::BadInput(e.to_string()))?;
            let session = Session::from_checkpoint(c)
                .map_err(|e| CliError::BadInput(format!("{}: {e}", checkpoint.display())))?;
            run_to_end(session, false, out, threads, &run)?;
        }
        Cmd::Watch {
            setup,
            run,
            frames,
            report,
            screenshot,
            view,
            size,
            threads,
        } => {
            build_force_pool(threads, true)?;
            if frames == Some(0) {
                return Err(CliError::BadInput(
                    "--frames: 0 is out of range; allowed: 1 to 4294967295".into(),
                ));
            }
            let parsed = Setup::load(&setup).map_err(|e| CliError::BadInput(e.to_string()))?;
            parsed
                .resolve_for_this_machine()
                .map_err(|e| CliError::BadInput(format!("{}: {e}", setup.display())))?;
            for note in parsed.cautions() {
                eprintln!("caution: {note}");
            }
            let scripted = frames.is_some();
            let opts = StartOptions {
                setup: Some((parsed, Some(setup))),
                view,
                watch: Some(WatchPlan {
                    run,
                    frames,
                    report,
                    screenshot,
                }),
                persist: !scripted,
            };
            return Ok(Next::Window(Box::new((opts, size))));
        }
        Cmd::Tune {
            setup,
            timesteps,
            cutoffs,
            time,
            equilibrate,
            out,
            threads,
        } => {
            set_threads(threads)?;
            tune(&setup, &timesteps, &cutoffs, time, equilibrate, out.as_deref())?;
        }
        Cmd::Bench {
            atoms,
            steps,
            warmup,
            threads,
            json,
            stages,
        } => {
            set_threads(threads)?;
            bench(&atoms, steps, warmup, json.as_deref(), stages)?;
        }
    }
    Ok(Next::Done)
}

fn set_threads(threads: Option<usize>) -> Result<usize, CliError> {
    build_force_pool(threads, false)
}

/// Sets up the global force-loop thread pool. With `yield_to_window`, its threads run at a
/// lower scheduling priority (nice 10) so the window's drawing threads get the cores first and
/// the simulation takes whatever is left, and unless `threads` says otherwise one core is left
/// to the window: with a force thread on every core, the thread sharing a core with the drawing
/// was preempted in the middle of its share of a step and the others waited for it (on the
/// 2-core build machine the simulation ran about 14 % faster beside the window with one force
/// thread than with two, and frames were steadier).
pub fn build_force_pool(threads: Option<usize>, yield_to_window: bool) -> Result<usize, CliError> {
    if let Some(n) = threads
        && (n == 0 || n > 1024)
    {
        return Err(CliError::BadInput(format!(
            "--threads: {n} is out of range; allowed: 1 to 1024"
        )));
    }
    if threads.is_some() || yield_to_window {
        let mut b = rayon::ThreadPoolBuilder::new().thread_name(|i| format!("noblescope-force-{i}"));
        let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
        let window_share = yield_to_window.then(|| cores.saturating_sub(1).max(1));
        if let Some(n) = threads.or(window_share) {
            b = b.num_threads(n);
        }
        if yield_to_window {
            b = b.start_handler(|_| lower_this_thread_priority());
        }
        b.build_global().map_err(|e| CliError::Failed(e.to_string()))?;
    }
    Ok(rayon::current_num_threads())
}

/// nice +10 for the calling thread (Linux applies nice per thread).
fn lower_this_thread_priority() {
    #[cfg(target_os = "linux")]
    // SAFETY: plain system calls on the calling thread's own id.
    unsafe {
        let tid = libc::syscall(libc::SYS_gettid) as libc::id_t;
        libc::setpriority(libc::PRIO_PROCESS, tid, 10);
    }
}

/// `runs/<setup file name>`.
fn default_out(setup: &Path) -> PathBuf {
    let stem = setup
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "run".into());
    PathBuf::from("runs").join(stem)
}

fn run_to_end(
    session: Session,
    fresh: bool,
    out: PathBuf,
    threads: usize,
    run: &RunFlags,
) -> Result<(), CliError> {
    let opts = HeadlessOptions {
        until_step: run.steps,
        out: out.clone(),
        threads,
        quiet: run.quiet,
        overwrite: run.overwrite,
    };
    let summary = headless::run(session, fresh, &opts)?;
    if !run.quiet {
        output::run_report(&summary, &out);
    }
    Ok(())
}

/// `tune`: the request from the typed lists (the setup's units; trial in τ), equilibration,
/// both scans, the tables, and tuning.json if asked.
fn tune(
    path: &Path,
    timesteps: &[f64],
    cutoffs: &[f64],
    time: f64,
    equilibrate: Option<u64>,
    out: Option<&Path>,
) -> Result<(), CliError> {
    let setup = Setup::load(path).map_err(|e| CliError::BadInput(e.to_string()))?;
    let input = TuneInput::from_command_line(&setup, timesteps, cutoffs, time);
    let request = TuneRequest::from_setup(&setup, &input).map_err(|e| bad_tune_input(path, e))?;
    let mut session =
        Session::new(setup.clone()).map_err(|e| CliError::BadInput(format!("{}: {e}", path.display())))?;
    let warm = equilibrate.unwrap_or(setup.equilibration_steps);
    eprintln!("equilibrating {warm} steps ...");
    let report = tuning::equilibrate_and_scan(&mut session, warm, &request)
        .map_err(|e| CliError::Failed(e.to_string()))?;
    output::tune_tables(&setup, &input, &report);
    if let Some(dir) = out {
        std::fs::create_dir_all(dir)
            .map_err(|e| CliError::BadInput(format!("--out: cannot create {}: {e}", dir.display())))?;
        let json = serde_json::json!({ "setup": path.display().to_string(), "timesteps": report.timesteps,
            "cutoffs": report.cutoffs, "fluctuation_limit": tuning::FLUCTUATION_LIMIT,
            "caution": noblescope::io::summary::MODEL_CAUTION });
        let file = dir.join("tuning.json");
        std::fs::write(&file, serde_json::to_string_pretty(&json).unwrap_or_default())
            .map_err(|e| CliError::Failed(format!("{}: {e}", file.display())))?;
    }
    Ok(())
}

/// A refused tuning request, named by the flag it came from (`--time` for the trial length).
fn bad_tune_input(path: &Path, e: TuneError) -> CliError {
    CliError::BadInput(match e.field() {
        Some("duration") => format!("--time: {e}"),
        Some(field) => format!("--{field}: {e}"),
        None => format!("{}: {e}", path.display()),
    })
}

/// `bench`: the table over `atoms` ascending, the stage times in the order given.
fn bench(
    atoms: &[usize],
    steps: u64,
    warmup: u64,
    json: Option<&Path>,
    stages: bool,
) -> Result<(), CliError> {
    let mut sorted = atoms.to_vec();
    sorted.sort_unstable();
    if let Some(&a) = sorted.iter().find(|&&a| !(500..=4_000_000).contains(&a)) {
        return Err(CliError::BadInput(format!(
            "--atoms: {a} is out of range; allowed: 500 to 4000000"
        )));
    }
    output::bench_header();
    let mut results = Vec::new();
    for a in sorted {
        let r = bench::measure(a, warmup, steps);
        output::bench_row(&r);
        results.push(r);
    }
    output::bench_scaling(&results);
    if stages {
        for &a in atoms {
            output::bench_stages(&bench::measure_stages(a, steps));
        }
    }
    if let Some(path) = json {
        let text = serde_json::to_string_pretty(&results).map_err(|e| CliError::Failed(e.to_string()))?;
        std::fs::write(path, text).map_err(|e| CliError::Failed(format!("{}: {e}", path.display())))?;
    }
    Ok(())
}
