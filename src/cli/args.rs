//! The command line's arguments: every subcommand, flag, default and help text. They are a
//! contract with users and scripts; change them only on purpose.

use clap::{Parser, Subcommand};
use std::path::PathBuf;

// `noblescope [COMMAND]` (no doc comment: clap would take it for help text).
#[derive(Parser)]
#[command(name = "noblescope", version, about = "Set up, run and watch molecular dynamics of noble gases.", long_about = None)]
pub struct Cli {
    // The subcommand; none opens the window.
    #[command(subcommand)]
    pub command: Option<Cmd>,
}

/// Flags shared by `run` and `resume`.
#[derive(clap::Args)]
pub struct RunFlags {
    /// Run until this step instead of the setup's `steps`.
    #[arg(long)]
    pub steps: Option<u64>,
    /// Worker threads for the force loop (default: all cores).
    #[arg(long)]
    pub threads: Option<usize>,
    /// No progress bar.
    #[arg(long)]
    pub quiet: bool,
    /// Replace the files of an earlier run in the output folder.
    #[arg(long)]
    pub overwrite: bool,
    /// Stop once this quantity's standard error (reduced units) is reached after the detected
    /// equilibration start, e.g. pressure=0.005; repeat or separate with commas for more.
    /// Quantities: temperature, pressure, potential_energy, total_energy, conserved_energy.
    #[arg(long = "until-stderr", value_name = "QUANTITY=STDERR", value_delimiter = ',')]
    pub until_stderr: Vec<String>,
    /// On a watchdog alarm go back to the last healthy snapshot with half the timestep, at
    /// most three times (each recovery is listed in summary.json).
    #[arg(long)]
    pub recover: bool,
}

// What `sweep` can do besides running a sweep file.
#[derive(Subcommand)]
pub enum SweepAction {
    /// Write sweep.csv and sweep.json from a sweep's folder (also run at the end of a local sweep).
    Collect {
        /// The sweep's output folder.
        dir: PathBuf,
    },
}

// The subcommands.
#[derive(Subcommand)]
pub enum Cmd {
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
        /// Also open a sweep's folder (written by `noblescope sweep`) in the sweep window.
        #[arg(long)]
        sweep: Option<PathBuf>,
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
        /// Write tuning.json, timesteps.csv and cutoffs.csv into this folder.
        #[arg(long)]
        out: Option<PathBuf>,
        #[arg(long)]
        threads: Option<usize>,
        /// A cutoff is recommended when its full-potential energy per atom is within this of the
        /// largest cutoff's (reduced, ε; default 0.01).
        #[arg(long, allow_hyphen_values = true)]
        energy_tolerance: Option<f64>,
        /// ... and its full-potential pressure within this (reduced, ε/σ³; default 0.02).
        #[arg(long, allow_hyphen_values = true)]
        pressure_tolerance: Option<f64>,
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
        /// Also time one refresh of the equilibration statistics of every quantity at this many
        /// samples (default 1000000), on one core.
        #[arg(long, value_name = "SAMPLES", num_args = 0..=1, default_missing_value = "1000000")]
        statistics: Option<usize>,
        /// Also time watched against plain steps, interleaved: the per-step watchdog's cost.
        #[arg(long)]
        watchdog: bool,
    },
    /// Run a sweep of state points (one folder and one run per point), on this machine or as a
    /// Slurm job array; `sweep collect DIR` gathers the results into sweep.csv and sweep.json.
    #[command(args_conflicts_with_subcommands = true)]
    Sweep {
        #[command(subcommand)]
        action: Option<SweepAction>,
        /// The sweep file (RON).
        sweep: Option<PathBuf>,
        /// Output folder (default: runs/<sweep file name>).
        #[arg(long)]
        out: Option<PathBuf>,
        /// Points run at once on this machine (default: one per core); the cores are shared
        /// out between them.
        #[arg(long)]
        jobs: Option<usize>,
        /// Run the points whose earlier run failed again.
        #[arg(long)]
        retry_failed: bool,
        /// Go ahead with a sweep of more than 100000 points.
        #[arg(long)]
        yes: bool,
        /// No progress bar.
        #[arg(long)]
        quiet: bool,
        /// Prepare the points and write a Slurm job-array script (sweep.sbatch) instead of running.
        #[arg(long)]
        slurm: bool,
        /// Slurm partition.
        #[arg(long, requires = "slurm")]
        partition: Option<String>,
        /// Slurm time limit of each point, HH:MM:SS.
        #[arg(long, requires = "slurm")]
        time: Option<String>,
        /// CPUs (force threads) of each point's task.
        #[arg(long, requires = "slurm", default_value_t = 1)]
        cpus_per_task: usize,
        /// Most array tasks running at once.
        #[arg(long, requires = "slurm")]
        max_parallel: Option<usize>,
        /// Submit the script with sbatch and print the job id.
        #[arg(long, requires = "slurm")]
        submit: bool,
    },
    /// Pressure, residual energy, compressibility factor and region of the Lennard-Jones fluid
    /// from the equation of state of Thol et al. (2016).
    Eos {
        /// Temperature: reduced (T*), or with --species a value in kelvin, e.g. 90K.
        #[arg(long, allow_hyphen_values = true)]
        temperature: String,
        /// Density: reduced (ρ*), or with --species a value in g/cm3, kg/m3 or /nm3, e.g. 1.40g/cm3.
        #[arg(long, allow_hyphen_values = true)]
        density: String,
        /// Print JSON (all values reduced; `si` beside them with a real species).
        #[arg(long)]
        json: bool,
        /// Species whose units values may carry (as in setup files, or lower case), e.g. argon.
        #[arg(long)]
        species: Option<String>,
    },
}

/// A `--size` that is not WIDTHxHEIGHT within the allowed range.
#[derive(Debug, thiserror::Error)]
#[error("--size: \"{text}\" is not a size; allowed: WIDTHxHEIGHT with each from 400 to 8000, e.g. 1440x900")]
pub struct SizeError {
    /// The text given.
    pub text: String,
}

/// Parses `--size` ("1440x900").
fn parse_size(text: &str) -> Result<[f32; 2], SizeError> {
    let bad = || SizeError { text: text.into() };
    let (w, h) = text.split_once(['x', 'X']).ok_or_else(bad)?;
    let w: f32 = w.trim().parse().map_err(|_| bad())?;
    let h: f32 = h.trim().parse().map_err(|_| bad())?;
    if !(400.0..=8000.0).contains(&w) || !(400.0..=8000.0).contains(&h) {
        return Err(bad());
    }
    Ok([w, h])
}
