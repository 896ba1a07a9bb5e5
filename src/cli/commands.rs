//! The subcommands: each collects its inputs, calls the library and prints through
//! [`output`](super::output). Errors are [`CliError`]s; [`exit_code`](super::exit_code) turns
//! them into exit codes.

use super::CliError;
use super::args::{Cmd, RunFlags};
use super::output;
use noblescope::analysis::Quantity;
use noblescope::analysis::sample_store::DEFAULT_CAPACITY;
use noblescope::engine::headless::{self, HeadlessOptions};
use noblescope::engine::tuning::{self, TuneError, TuneInput, TuneRequest};
use noblescope::engine::{Session, bench};
use noblescope::io::Setup;
use noblescope::io::checkpoint::Checkpoint;
use noblescope::io::precision_setting::{PrecisionSetting, StandardError};
use noblescope::io::slurm_script::SlurmOptions;
use noblescope::io::summary::StopReason;
use noblescope::physics::lj_eos::{self, Eos};
use noblescope::physics::{Species, UnitSystem};
use noblescope::ui::StartOptions;
use noblescope::ui::watch::WatchPlan;
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};

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
            let mut parsed = Setup::load(&setup).map_err(|e| CliError::BadInput(e.to_string()))?;
            add_precision_flags(&mut parsed, &run.until_stderr)?;
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
            let mut c = Checkpoint::load(&checkpoint).map_err(|e| CliError::BadInput(e.to_string()))?;
            add_precision_flags(&mut c.setup, &run.until_stderr)?;
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
            sweep,
        } => {
            build_force_pool(threads, true)?;
            if let Some(dir) = &sweep {
                noblescope::io::sweep_collect::read_table(dir)
                    .map_err(|e| CliError::BadInput(format!("--sweep: {e}")))?;
            }
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
                sweep,
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
            energy_tolerance,
            pressure_tolerance,
        } => {
            set_threads(threads)?;
            let tol = tuning::CutoffTolerances {
                energy: energy_tolerance.unwrap_or(tuning::CUTOFF_TOLERANCES.energy),
                pressure: pressure_tolerance.unwrap_or(tuning::CUTOFF_TOLERANCES.pressure),
            };
            for (flag, v) in [
                ("--energy-tolerance", tol.energy),
                ("--pressure-tolerance", tol.pressure),
            ] {
                if !(v.is_finite() && v > 0.0 && v <= 10.0) {
                    return Err(CliError::BadInput(format!(
                        "{flag}: {v} is out of range; allowed: above 0 up to 10 (reduced units)"
                    )));
                }
            }
            tune(
                &setup,
                &timesteps,
                &cutoffs,
                time,
                equilibrate,
                out.as_deref(),
                tol,
            )?;
        }
        Cmd::Bench {
            atoms,
            steps,
            warmup,
            threads,
            json,
            stages,
            statistics,
            watchdog,
        } => {
            set_threads(threads)?;
            if let Some(n) = statistics {
                bench_statistics(n)?;
            }
            bench(&atoms, steps, warmup, json.as_deref(), stages, watchdog)?;
        }
        Cmd::Sweep {
            action,
            sweep,
            out,
            jobs,
            retry_failed,
            yes,
            quiet,
            slurm,
            partition,
            time,
            cpus_per_task,
            max_parallel,
            submit,
        } => super::sweep::sweep(super::sweep::SweepArgs {
            action,
            sweep,
            out,
            jobs,
            retry_failed,
            yes,
            quiet,
            slurm: slurm.then_some(SlurmOptions {
                partition,
                time,
                cpus_per_task,
                max_parallel,
            }),
            submit,
        })?,
        Cmd::Eos {
            temperature,
            density,
            json,
            species,
        } => eos(&temperature, &density, json, species.as_deref())?,
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

/// Adds the `--until-stderr` targets to the setup (replacing a target the setup has for the
/// same quantity). Each is `QUANTITY=STDERR` with the standard error in reduced units.
fn add_precision_flags(setup: &mut Setup, flags: &[String]) -> Result<(), CliError> {
    for flag in flags {
        let bad = |why: &str| {
            CliError::BadInput(format!(
                "--until-stderr: {flag:?} is out of range; allowed: QUANTITY=STDERR with {why}"
            ))
        };
        let (name, value) = flag
            .split_once('=')
            .ok_or_else(|| bad("an '=' between quantity and standard error"))?;
        let quantity = Quantity::from_name(name).ok_or_else(|| {
            bad("QUANTITY one of temperature, pressure, potential_energy, total_energy, conserved_energy")
        })?;
        let stderr: f64 = value
            .trim()
            .parse()
            .map_err(|_| bad("STDERR a number in reduced units, e.g. pressure=0.005"))?;
        setup.precision_targets.retain(|t| t.quantity != quantity);
        setup.precision_targets.push(PrecisionSetting {
            quantity,
            stderr: StandardError::Reduced(stderr),
        });
    }
    Ok(())
}

fn run_to_end(
    session: Session,
    fresh: bool,
    out: PathBuf,
    threads: usize,
    run: &RunFlags,
) -> Result<(), CliError> {
    let interrupt = Arc::new(AtomicBool::new(false));
    let flag = interrupt.clone();
    // Ctrl-C stops after the present step with every file written; a second one is not caught
    // differently (the run is already stopping). Failing to install the handler (e.g. one is
    // set already) only loses that convenience.
    let _ = ctrlc::set_handler(move || flag.store(true, Ordering::Relaxed));
    let opts = HeadlessOptions {
        until_step: run.steps,
        out: out.clone(),
        threads,
        quiet: run.quiet,
        overwrite: run.overwrite,
        interrupt: Some(interrupt),
        recover: run.recover,
    };
    let summary = headless::run(session, fresh, &opts)?;
    if !run.quiet {
        output::run_report(&summary, &out);
    }
    if summary.stopped_because == StopReason::Interrupted {
        return Err(CliError::Interrupted(format!(
            "interrupted at step {}; {} holds the run so far, and `noblescope resume {}` continues it",
            summary.steps,
            out.display(),
            out.join("final.checkpoint").display()
        )));
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
    tol: tuning::CutoffTolerances,
) -> Result<(), CliError> {
    let setup = Setup::load(path).map_err(|e| CliError::BadInput(e.to_string()))?;
    let input = TuneInput::from_command_line(&setup, timesteps, cutoffs, time);
    let request = TuneRequest::from_setup(&setup, &input).map_err(|e| bad_tune_input(path, e))?;
    let mut session =
        Session::new(setup.clone()).map_err(|e| CliError::BadInput(format!("{}: {e}", path.display())))?;
    let warm = equilibrate.unwrap_or(setup.equilibration_steps);
    eprintln!("equilibrating {warm} steps ...");
    let mut report = tuning::equilibrate_and_scan(&mut session, warm, &request)
        .map_err(|e| CliError::Failed(e.to_string()))?;
    report.cutoff_choice = tuning::recommended_cutoff(&report.cutoffs, tol);
    output::tune_tables(&setup, &input, &report);
    if let Some(dir) = out {
        std::fs::create_dir_all(dir)
            .map_err(|e| CliError::BadInput(format!("--out: cannot create {}: {e}", dir.display())))?;
        let json = serde_json::json!({ "setup": path.display().to_string(), "timesteps": report.timesteps,
            "cutoffs": report.cutoffs, "fluctuation_limit": tuning::FLUCTUATION_LIMIT,
            "recommended_timestep_tau": report.recommended,
            "recommended_cutoff_sigma": report.cutoff_choice.cutoff_sigma,
            "cutoff_reason": report.cutoff_choice.reason, "cutoff_tolerances": tol,
            "caution": noblescope::io::summary::MODEL_CAUTION });
        let (timesteps_csv, cutoffs_csv) = output::tune_csv(&report);
        for (name, text) in [
            (
                "tuning.json",
                serde_json::to_string_pretty(&json).unwrap_or_default(),
            ),
            ("timesteps.csv", timesteps_csv),
            ("cutoffs.csv", cutoffs_csv),
        ] {
            let file = dir.join(name);
            std::fs::write(&file, text).map_err(|e| CliError::Failed(format!("{}: {e}", file.display())))?;
        }
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
    watchdog: bool,
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
    if watchdog {
        for &a in atoms {
            output::bench_watchdog(&bench::measure_watchdog(a, steps));
        }
    }
    if let Some(path) = json {
        let text = serde_json::to_string_pretty(&results).map_err(|e| CliError::Failed(e.to_string()))?;
        std::fs::write(path, text).map_err(|e| CliError::Failed(format!("{}: {e}", path.display())))?;
    }
    Ok(())
}

/// `bench --statistics N`: one refresh of the evidence of all quantities at N samples.
fn bench_statistics(samples: usize) -> Result<(), CliError> {
    if !(1000..=DEFAULT_CAPACITY).contains(&samples) {
        return Err(CliError::BadInput(format!(
            "--statistics: {samples} is out of range; allowed: 1000 to {DEFAULT_CAPACITY} (the store's capacity)"
        )));
    }
    for r in noblescope::engine::bench_statistics::measure(samples, 5) {
        output::bench_statistics_row(&r);
    }
    Ok(())
}

/// `--species`: a species as spelled in setup files ("Argon", "ReducedLJ") or its name in lower
/// case ("argon", "reduced lj", "reducedlj").
fn parse_species(text: &str) -> Result<Species, CliError> {
    let t = text.trim().to_lowercase();
    Species::ALL
        .into_iter()
        .find(|s| format!("{s:?}").to_lowercase() == t || s.label() == t)
        .ok_or_else(|| {
            let names: Vec<String> = Species::ALL.iter().map(|s| format!("{s:?}")).collect();
            CliError::BadInput(format!(
                "--species: \"{text}\" is not a species; allowed: {} (or lower case)",
                names.join(", ")
            ))
        })
}

/// A number with an optional unit suffix: (value, suffix).
fn split_unit<'a>(
    flag: &str,
    text: &'a str,
    units: &[&'a str],
    allowed: &str,
) -> Result<(f64, &'a str), CliError> {
    let t = text.trim();
    let (num, unit) = units
        .iter()
        .find_map(|u| t.strip_suffix(u).map(|n| (n.trim_end(), *u)))
        .unwrap_or((t, ""));
    let v: f64 = num.parse().map_err(|_| {
        CliError::BadInput(format!(
            "--{flag}: \"{text}\" is not a number; allowed: {allowed}"
        ))
    })?;
    if !v.is_finite() || v <= 0.0 {
        return Err(CliError::BadInput(format!(
            "--{flag}: {text} is out of range; allowed: {allowed}"
        )));
    }
    Ok((v, unit))
}

/// `eos`: the inputs in reduced units, the properties and the region, printed or as JSON.
fn eos(temperature: &str, density: &str, json: bool, species: Option<&str>) -> Result<(), CliError> {
    let species = species.map(parse_species).transpose()?;
    let units = species.map(UnitSystem::new).filter(|u| u.has_real_units());
    let t_allowed = format!(
        "a reduced temperature above 0 and at most {}{}",
        lj_eos::T_INPUT_MAX,
        if units.is_some() {
            ", or kelvin as in 90K"
        } else {
            " (values in K need --species with real units)"
        }
    );
    let rho_allowed = format!(
        "a reduced density above 0 and at most {}{}",
        lj_eos::RHO_INPUT_MAX,
        if units.is_some() {
            ", or g/cm3, kg/m3 or /nm3 as in 1.40g/cm3"
        } else {
            " (values in g/cm3, kg/m3 or /nm3 need --species with real units)"
        }
    );
    let (tv, tu) = split_unit("temperature", temperature, &["K"], &t_allowed)?;
    let (dv, du) = split_unit("density", density, &["g/cm3", "kg/m3", "/nm3"], &rho_allowed)?;
    let need_units = |flag: &str, text: &str, allowed: &str| {
        CliError::BadInput(format!(
            "--{flag}: {text} has a unit but no --species with real units is given; allowed: {allowed}"
        ))
    };
    let t_red = match (tu, units) {
        ("", _) => tv,
        (_, Some(u)) => tv / u.temperature_kelvin(),
        (_, None) => return Err(need_units("temperature", temperature, &t_allowed)),
    };
    let rho_red = match (du, units) {
        ("", _) => dv,
        ("g/cm3", Some(u)) => dv / u.mass_density_g_cm3(),
        ("kg/m3", Some(u)) => dv * 1e-3 / u.mass_density_g_cm3(),
        (_, Some(u)) => dv / u.number_density_per_nm3(),
        (_, None) => return Err(need_units("density", density, &rho_allowed)),
    };
    let refuse = |e: lj_eos::EosError, text: &str| {
        CliError::BadInput(match e {
            lj_eos::EosError::OutOfRange {
                field,
                value,
                allowed,
            } => {
                format!("--{field}: {text} (reduced {value}) is out of range; allowed: {allowed}")
            }
            other => other.to_string(),
        })
    };
    let props = Eos::properties(t_red, rho_red).map_err(|e| {
        let text = if matches!(
            &e,
            lj_eos::EosError::OutOfRange {
                field: "temperature",
                ..
            }
        ) {
            temperature
        } else {
            density
        };
        refuse(e, text)
    })?;
    let region = Eos::region(t_red, rho_red).map_err(|e| refuse(e, density))?;
    if json {
        output::eos_json(&props, region, units.as_ref());
    } else {
        output::eos_text(&props, region, units.as_ref());
    }
    Ok(())
}
