//! Command line: no arguments opens the window; subcommands run headless.

use clap::{Parser, Subcommand};
use noblescope::engine::Session;
use noblescope::engine::bench;
use noblescope::engine::headless::{self, HeadlessOptions, RunError};
use noblescope::io::Setup;
use noblescope::io::checkpoint::Checkpoint;
use noblescope::io::setup::Length;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

#[derive(Parser)]
#[command(name = "noblescope", version, about = "Set up, run and watch molecular dynamics of noble gases.", long_about = None)]
struct Cli {
    #[command(subcommand)]
    command: Option<Cmd>,
}

/// Flags shared by `run` and `resume`.
#[derive(clap::Args)]
struct RunFlags {
    /// Run until this step instead of the setup's `steps`.
    #[arg(long)]
    steps: Option<u64>,
    /// Worker threads for the force loop (default: all cores).
    #[arg(long)]
    threads: Option<usize>,
    /// No progress bar.
    #[arg(long)]
    quiet: bool,
    /// Replace the files of an earlier run in the output folder.
    #[arg(long)]
    overwrite: bool,
}

#[derive(Subcommand)]
enum Cmd {
    /// Run a setup file headless and write energy.csv, summary.json and final.checkpoint.
    Run {
        /// The setup file (RON).
        setup: PathBuf,
        /// Output folder (default: runs/<setup file name>).
        #[arg(long)]
        out: Option<PathBuf>,
        #[command(flatten)]
        run: RunFlags,
    },
    /// Continue a run from a checkpoint, bit for bit as if it had never stopped.
    Resume {
        /// A checkpoint written by `run` or by the window.
        checkpoint: PathBuf,
        /// Output folder for the continued run.
        #[arg(long)]
        out: PathBuf,
        #[command(flatten)]
        run: RunFlags,
    },
    /// Open the window on a setup file; with --frames, run a scripted watch and exit.
    Watch {
        /// The setup file (RON).
        setup: PathBuf,
        /// Start running at once.
        #[arg(long)]
        run: bool,
        /// Close after this many displayed frames (scripted mode).
        #[arg(long)]
        frames: Option<u32>,
        /// Write a JSON report (frame times, atom-steps per second while displayed) here.
        #[arg(long)]
        report: Option<PathBuf>,
        /// Save a PNG picture of the window here before closing.
        #[arg(long)]
        screenshot: Option<PathBuf>,
        /// What to show first.
        #[arg(long, value_enum)]
        view: Option<noblescope::ui::watch::StartView>,
        /// Window size in points, e.g. 1440x900.
        #[arg(long, value_parser = parse_size)]
        size: Option<[f32; 2]>,
        /// Worker threads for the force loop (default: all cores).
        #[arg(long)]
        threads: Option<usize>,
    },
    /// Scan timesteps and cutoffs from an equilibrated state of a setup.
    Tune {
        /// The setup file (RON).
        setup: PathBuf,
        /// Timesteps to try, in the unit of the setup's `timestep` (default: 0.5, 1, 1.5, 2 and 3 times it).
        #[arg(long, value_delimiter = ',')]
        timesteps: Vec<f64>,
        /// Cutoffs to try, in the unit of the setup's `cutoff` (default: 2 σ to 5 σ as the box allows).
        #[arg(long, value_delimiter = ',')]
        cutoffs: Vec<f64>,
        /// Simulated time of each timestep trial, in τ.
        #[arg(long, default_value_t = 5.0)]
        time: f64,
        /// Steps to equilibrate first (default: the setup's equilibration_steps).
        #[arg(long)]
        equilibrate: Option<u64>,
        /// Write tuning.json into this folder.
        #[arg(long)]
        out: Option<PathBuf>,
        #[arg(long)]
        threads: Option<usize>,
    },
    /// Measure speed and memory on the standard LJ liquid.
    Bench {
        /// Atom counts to measure, ascending.
        #[arg(long, value_delimiter = ',', default_values_t = vec![32_000usize, 256_000])]
        atoms: Vec<usize>,
        /// Timed steps per size.
        #[arg(long, default_value_t = 200)]
        steps: u64,
        /// Untimed steps before timing.
        #[arg(long, default_value_t = 20)]
        warmup: u64,
        #[arg(long)]
        threads: Option<usize>,
        /// Write the results as JSON here too.
        #[arg(long)]
        json: Option<PathBuf>,
        /// Also time each stage (kick, drift, skin check, list build, forces) over normal steps.
        #[arg(long)]
        stages: bool,
    },
}

fn set_threads(threads: Option<usize>) -> Result<usize, RunError> {
    build_force_pool(threads, false)
}

/// Sets up the global force-loop thread pool. With `yield_to_window`, its threads run at a
/// lower scheduling priority (nice 10) so the window's drawing threads get the cores first and
/// the simulation takes whatever is left, and unless `threads` says otherwise one core is left
/// to the window: with a force thread on every core, the thread sharing a core with the drawing
/// was preempted in the middle of its share of a step and the others waited for it (on the
/// 2-core build machine the simulation ran about 14 % faster beside the window with one force
/// thread than with two, and frames were steadier).
fn build_force_pool(threads: Option<usize>, yield_to_window: bool) -> Result<usize, RunError> {
    if let Some(n) = threads
        && (n == 0 || n > 1024)
    {
        return Err(RunError::BadInput(format!(
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
        b.build_global().map_err(|e| RunError::Failed(e.to_string()))?;
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

fn default_out(setup: &Path) -> PathBuf {
    let stem = setup
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "run".into());
    PathBuf::from("runs").join(stem)
}

fn report(summary: &noblescope::io::summary::Summary, out: &Path, quiet: bool) {
    if quiet {
        return;
    }
    let pe = summary.potential_energy_per_atom;
    let p = summary.pressure;
    let t = summary.temperature;
    println!(
        "{} atoms, {} steps, {} samples averaged -> {}",
        summary.atoms,
        summary.steps,
        summary.samples_used,
        out.display()
    );
    println!("  potential energy per atom  {:.5} ± {:.5} ε", pe.mean, pe.stderr);
    println!(
        "  pressure                   {:.5} ± {:.5} ε/σ³",
        p.mean, p.stderr
    );
    println!("  temperature                {:.5} ± {:.5} ε/k", t.mean, t.stderr);
    if let Some(si) = &summary.si {
        println!(
            "  = {:.4} kJ/mol, {:.2} ± {:.2} bar, {:.2} K, {:.4} g/cm³",
            si.potential_energy_per_atom.mean,
            si.pressure.mean,
            si.pressure.stderr,
            si.temperature.mean,
            si.density
        );
    }
    println!(
        "  relative energy drift      {:.3e}",
        summary.relative_energy_drift
    );
    println!(
        "  speed                      {:.3e} atom-steps/s on {} threads",
        summary.atom_steps_per_second, summary.threads
    );
    if summary.equilibration.configured_start_too_early {
        println!(
            "  note: the energy looks equilibrated only from step {} (equilibration_steps is {})",
            summary.equilibration.detected_start_step, summary.equilibration.configured_start_step
        );
    }
    println!("  {}", noblescope::io::summary::MODEL_CAUTION);
}

fn run_to_end(
    session: Session,
    fresh: bool,
    out: PathBuf,
    threads: usize,
    run: &RunFlags,
) -> Result<(), RunError> {
    let opts = HeadlessOptions {
        until_step: run.steps,
        out: out.clone(),
        threads,
        quiet: run.quiet,
        overwrite: run.overwrite,
    };
    let summary = headless::run(session, fresh, &opts)?;
    report(&summary, &out, run.quiet);
    Ok(())
}

fn run_headless(cmd: Cmd) -> Result<(), RunError> {
    match cmd {
        Cmd::Run { setup, out, run } => {
            let threads = set_threads(run.threads)?;
            let parsed = Setup::load(&setup).map_err(|e| RunError::BadInput(e.to_string()))?;
            let out = out.unwrap_or_else(|| default_out(&setup));
            headless::check_output_dir(&out, run.overwrite)?;
            for note in parsed.cautions() {
                eprintln!("caution: {note}");
            }
            let session =
                Session::new(parsed).map_err(|e| RunError::BadInput(format!("{}: {e}", setup.display())))?;
            run_to_end(session, true, out, threads, &run)
        }
        Cmd::Resume { checkpoint, out, run } => {
            let threads = set_threads(run.threads)?;
            headless::check_output_dir(&out, run.overwrite)?;
            let c = Checkpoint::load(&checkpoint).map_err(|e| RunError::BadInput(e.to_string()))?;
            let session = Session::from_checkpoint(c)
                .map_err(|e| RunError::BadInput(format!("{}: {e}", checkpoint.display())))?;
            run_to_end(session, false, out, threads, &run)
        }
        Cmd::Watch { .. } => unreachable!("the window handles watch"),
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
            tune(&setup, timesteps, cutoffs, time, equilibrate, out.as_deref())
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
            let mut sorted = atoms.clone();
            sorted.sort_unstable();
            if let Some(&a) = sorted.iter().find(|&&a| !(500..=4_000_000).contains(&a)) {
                return Err(RunError::BadInput(format!(
                    "--atoms: {a} is out of range; allowed: 500 to 4000000"
                )));
            }
            println!(
                "standard LJ liquid, rho*=0.8442, T*=1.44, rc=2.5, skin=0.3, TruncatedShifted, NVE, dt*=0.005"
            );
            println!(
                "{:>9} {:>7} {:>8} {:>14} {:>10} {:>8} {:>12} {:>12}",
                "atoms",
                "steps",
                "threads",
                "atom-steps/s",
                "ns/a-step",
                "builds",
                "peak B/atom",
                "heap B/atom"
            );
            let mut results = Vec::new();
            for a in sorted {
                let r = bench::measure(a, warmup, steps);
                println!(
                    "{:>9} {:>7} {:>8} {:>14.4e} {:>10.1} {:>8} {:>12} {:>12.1}",
                    r.atoms,
                    r.steps,
                    r.threads,
                    r.atom_steps_per_second,
                    r.nanoseconds_per_atom_step,
                    r.list_builds,
                    r.peak_bytes_per_atom
                        .map(|b| format!("{b:.1}"))
                        .unwrap_or_else(|| "n/a".into()),
                    r.heap_bytes_per_atom
                );
                results.push(r);
            }
            if results.len() >= 2 {
                let first = &results[0];
                let last = &results[results.len() - 1];
                println!(
                    "cost per atom-step at {} atoms / at {} atoms: {:.3}",
                    last.atoms,
                    first.atoms,
                    last.nanoseconds_per_atom_step / first.nanoseconds_per_atom_step
                );
            }
            if stages {
                for &a in &atoms {
                    let r = bench::measure_stages(a, steps);
                    println!(
                        "stages at {} atoms, {} steps, {} list builds, {:.1} pairs/atom:",
                        r.atoms, r.steps, r.list_builds, r.pairs_per_atom
                    );
                    for (stage, t) in r.times.stages().filter(|(_, t)| t.calls > 0) {
                        println!(
                            "  {:<18} {:>9.3} ms/step {:>8.2} ns/atom-step {:>6} calls {:>9.3} ms/call",
                            stage.name(),
                            r.seconds_per_step(stage) * 1e3,
                            r.nanoseconds_per_atom_step(stage),
                            t.calls,
                            t.seconds_per_call() * 1e3
                        );
                    }
                    println!(
                        "  {:<18} {:>9.3} ms/step {:>8.2} ns/atom-step",
                        "whole step",
                        r.step_seconds() * 1e3,
                        r.step_seconds() * 1e9 / a as f64
                    );
                }
            }
            if let Some(path) = json {
                let text =
                    serde_json::to_string_pretty(&results).map_err(|e| RunError::Failed(e.to_string()))?;
                std::fs::write(&path, text)
                    .map_err(|e| RunError::Failed(format!("{}: {e}", path.display())))?;
            }
            Ok(())
        }
    }
}

fn parse_size(text: &str) -> Result<[f32; 2], String> {
    let bad = || {
        format!(
            "--size: \"{text}\" is not a size; allowed: WIDTHxHEIGHT with each from 400 to 8000, e.g. 1440x900"
        )
    };
    let (w, h) = text.split_once(['x', 'X']).ok_or_else(bad)?;
    let w: f32 = w.trim().parse().map_err(|_| bad())?;
    let h: f32 = h.trim().parse().map_err(|_| bad())?;
    if !(400.0..=8000.0).contains(&w) || !(400.0..=8000.0).contains(&h) {
        return Err(bad());
    }
    Ok([w, h])
}

fn tune(
    path: &Path,
    timesteps: Vec<f64>,
    cutoffs: Vec<f64>,
    time: f64,
    equilibrate: Option<u64>,
    out: Option<&Path>,
) -> Result<(), RunError> {
    let bad = |e: noblescope::io::SetupError| RunError::BadInput(format!("{}: {e}", path.display()));
    let setup = Setup::load(path).map_err(|e| RunError::BadInput(e.to_string()))?;
    if !(time > 0.0 && time <= 1000.0) {
        return Err(RunError::BadInput(format!(
            "--time: {time} is out of range; allowed: 0 < time ≤ 1000 τ"
        )));
    }
    let (dt0, dt_unit) = (setup.timestep.value(), setup.timestep.symbol());
    let dts: Vec<f64> = if timesteps.is_empty() {
        [0.5, 1.0, 1.5, 2.0, 3.0].iter().map(|f| f * dt0).collect()
    } else {
        timesteps
    };
    let mut reduced_dts = Vec::new();
    for &v in &dts {
        let mut s = setup.clone();
        s.timestep = setup.timestep.with_value(v);
        s.resolve()
            .map_err(|e| RunError::BadInput(format!("--timesteps: {e}")))?;
        reduced_dts.push(s.reduced_duration("timestep", s.timestep).map_err(bad)?);
    }
    let mut session = Session::new(setup.clone()).map_err(bad)?;
    let spec = session.simulation().spec().clone();
    let half_box = 0.5 * session.simulation().system().box_length;
    let to_setup_len = |rc: f64| match setup.cutoff {
        Length::Sigma(_) => rc,
        Length::Angstrom(_) => rc * setup.units().sigma_angstrom(),
    };
    let reduced_cutoffs: Vec<f64> = if cutoffs.is_empty() {
        [2.0, 2.5, 3.0, 3.5, 4.0, 5.0]
            .into_iter()
            .filter(|rc| rc + spec.skin <= half_box)
            .collect()
    } else {
        let mut v = Vec::new();
        for &c in &cutoffs {
            let r = setup
                .reduced_length("cutoff", setup.cutoff.with_value(c))
                .map_err(|e| RunError::BadInput(format!("--cutoffs: {e}")))?;
            if !(1.0..=10.0).contains(&r) || r + spec.skin > half_box {
                return Err(RunError::BadInput(format!(
                    "--cutoffs: {c} is out of range; allowed: 1 σ to 10 σ with cutoff + skin ≤ half the box ({half_box:.3} σ)"
                )));
            }
            v.push(r);
        }
        v
    };
    let warm = equilibrate.unwrap_or(setup.equilibration_steps);
    eprintln!("equilibrating {warm} steps ...");
    for _ in 0..warm {
        if let Some(a) = session.step().alarm
            && matches!(a, noblescope::engine::Alarm::NonFinite { .. })
        {
            return Err(RunError::Failed(a.describe()));
        }
    }
    let never = std::sync::atomic::AtomicBool::new(false);
    let report = noblescope::engine::tuning::full_scan(
        spec.clone(),
        session.simulation().state(),
        &reduced_dts,
        &reduced_cutoffs,
        time,
        &never,
    )
    .map_err(RunError::Failed)?;
    let rows = &report.timesteps;
    println!("timestep scan: constant energy for {time} τ from the equilibrated state");
    println!(
        "{:>12} {:>12} {:>8} {:>16} {:>14} {:>12}",
        format!("dt [{dt_unit}]"),
        "dt [tau]",
        "steps",
        "drift/atom/tau",
        "rel. drift",
        "dE/dK rms"
    );
    for (r, v) in rows.iter().zip(&dts) {
        if r.blew_up {
            println!("{v:>12.5} {:>12.5} {:>8} {:>16}", r.timestep, r.steps, "blew up");
        } else {
            println!(
                "{v:>12.5} {:>12.5} {:>8} {:>16.3e} {:>14.3e} {:>12.4}",
                r.timestep, r.steps, r.drift_per_atom_per_tau, r.relative_drift, r.fluctuation_ratio
            );
        }
    }
    match report.recommended {
        Some(dt) => println!(
            "largest timestep with total-energy fluctuation under {:.0}% of the kinetic: {:.5} {dt_unit} ({dt:.5} τ)",
            noblescope::engine::tuning::FLUCTUATION_LIMIT * 100.0,
            dts[reduced_dts.iter().position(|&x| x == dt).unwrap_or(0)]
        ),
        None => println!("no timestep tried conserved energy well enough: try smaller ones"),
    }
    if report.recommended == reduced_dts.iter().copied().reduce(f64::max) {
        println!("(that is the largest timestep tried: larger ones may pass too)");
    }
    let crow = &report.cutoffs;
    let len_unit = match setup.cutoff {
        Length::Sigma(_) => "sigma",
        Length::Angstrom(_) => "A",
    };
    println!(
        "cutoff scan: {:?}, averaged over {} configurations (reduced units)",
        spec.potential, report.configurations
    );
    println!(
        "{:>12} {:>12} {:>12} {:>16} {:>16}",
        format!("rc [{len_unit}]"),
        "U/N (mode)",
        "P (mode)",
        "U/N full est.",
        "P full est."
    );
    for r in crow {
        println!(
            "{:>12.4} {:>12.5} {:>12.5} {:>16.5} {:>16.5}",
            to_setup_len(r.cutoff),
            r.potential,
            r.pressure,
            r.potential_full_estimate,
            r.pressure_full_estimate
        );
    }
    println!(
        "(full estimate: unshifted pair terms inside rc plus analytic tail corrections, g(r) = 1 beyond rc)"
    );
    if let Some(dir) = out {
        std::fs::create_dir_all(dir)
            .map_err(|e| RunError::BadInput(format!("--out: cannot create {}: {e}", dir.display())))?;
        let json = serde_json::json!({ "setup": path.display().to_string(), "timesteps": rows, "cutoffs": crow,
            "fluctuation_limit": noblescope::engine::tuning::FLUCTUATION_LIMIT, "caution": noblescope::io::summary::MODEL_CAUTION });
        let file = dir.join("tuning.json");
        std::fs::write(&file, serde_json::to_string_pretty(&json).unwrap_or_default())
            .map_err(|e| RunError::Failed(format!("{}: {e}", file.display())))?;
    }
    Ok(())
}

/// Keeps glibc from raising its mmap threshold as large blocks are freed: the neighbour list's
/// chunks then stay memory-mapped, grow and shrink by remapping, and give memory back at once,
/// which keeps the resident size per atom near the arrays' own size.
fn tune_allocator() {
    #[cfg(all(target_os = "linux", target_env = "gnu"))]
    // SAFETY: mallopt only changes allocator settings; called before any other thread starts.
    unsafe {
        libc::mallopt(libc::M_MMAP_THRESHOLD, 128 * 1024);
    }
}

fn main() -> ExitCode {
    tune_allocator();
    let cli = Cli::parse();
    match cli.command {
        None => match build_force_pool(None, true)
            .map_err(|e| anyhow::anyhow!("{e}"))
            .and_then(|_| open_window(None))
        {
            Ok(()) => ExitCode::SUCCESS,
            Err(e) => {
                eprintln!("error: {e:#}");
                ExitCode::from(1)
            }
        },
        Some(Cmd::Watch {
            setup,
            run,
            frames,
            report,
            screenshot,
            view,
            size,
            threads,
        }) => {
            if let Err(e) = build_force_pool(threads, true) {
                eprintln!("error: {e}");
                return ExitCode::from(e.exit_code() as u8);
            }
            if frames == Some(0) {
                eprintln!("error: --frames: 0 is out of range; allowed: 1 to 4294967295");
                return ExitCode::from(2);
            }
            let parsed = match Setup::load(&setup) {
                Ok(s) => s,
                Err(e) => {
                    eprintln!("error: {e}");
                    return ExitCode::from(2);
                }
            };
            if let Err(e) = parsed.resolve() {
                eprintln!("error: {}: {e}", setup.display());
                return ExitCode::from(2);
            }
            for note in parsed.cautions() {
                eprintln!("caution: {note}");
            }
            let scripted = frames.is_some();
            let opts = noblescope::ui::StartOptions {
                setup: Some((parsed, Some(setup))),
                view,
                watch: Some(noblescope::ui::watch::WatchPlan {
                    run,
                    frames,
                    report,
                    screenshot,
                }),
                persist: !scripted,
            };
            match open_window(Some((opts, size))) {
                Ok(()) => ExitCode::SUCCESS,
                Err(e) => {
                    eprintln!("error: {e:#}");
                    ExitCode::from(1)
                }
            }
        }
        Some(cmd) => match run_headless(cmd) {
            Ok(()) => ExitCode::SUCCESS,
            Err(e) => {
                eprintln!("error: {e}");
                ExitCode::from(e.exit_code() as u8)
            }
        },
    }
}

/// Opens the window: on the given options, or on the remembered (else bundled) setup.
fn open_window(with: Option<(noblescope::ui::StartOptions, Option<[f32; 2]>)>) -> anyhow::Result<()> {
    let (opts, size) = with.unwrap_or_else(|| {
        (
            noblescope::ui::StartOptions {
                persist: true,
                ..Default::default()
            },
            None,
        )
    });
    noblescope::ui::window::run(opts, size)
}
