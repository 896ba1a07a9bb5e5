//! Running a sweep's points on this machine, several at a time, each as a `noblescope run`
//! process of its own on its point's folder.
//!
//! Processes rather than threads: each point is exactly the run a user would start by hand
//! (or a cluster's array task starts), with its own thread pool, and a point that fails cannot
//! take the others down.

use crate::io::sweep_folder::{self, PointState, point_dir};
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use std::io::IsTerminal;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::Duration;

/// How the points are run.
#[derive(Clone, Debug)]
pub struct LocalOptions {
    /// The program to run for each point (this program).
    pub exe: PathBuf,
    /// Points run at once.
    pub jobs: usize,
    /// Force threads of each point's run.
    pub threads_per_job: usize,
    /// Run failed points again.
    pub retry_failed: bool,
    pub quiet: bool,
    /// Set from outside (Ctrl-C): start no more points, stop the running ones cleanly.
    pub interrupt: Arc<AtomicBool>,
}

/// Threads for each of `jobs` processes on a machine with `cores` cores: the cores shared out,
/// at least one each.
pub fn threads_per_job(cores: usize, jobs: usize) -> usize {
    (cores / jobs.max(1)).max(1)
}

/// What a local sweep did.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct LocalOutcome {
    /// Points already finished before this call (skipped).
    pub skipped: usize,
    pub finished: usize,
    pub failed: Vec<usize>,
    /// True when Ctrl-C stopped the sweep before every point ran.
    pub interrupted: bool,
}

struct Running {
    index: usize,
    child: Child,
}

fn spawn(out: &Path, index: usize, o: &LocalOptions) -> std::io::Result<Child> {
    let dir = point_dir(out, index);
    let log = std::fs::File::create(dir.join("run.log"))?;
    let err = log.try_clone()?;
    Command::new(&o.exe)
        .arg("run")
        .arg(dir.join("setup.ron"))
        .arg("--out")
        .arg(&dir)
        .args([
            "--overwrite",
            "--quiet",
            "--threads",
            &o.threads_per_job.to_string(),
        ])
        .stdin(Stdio::null())
        .stdout(log)
        .stderr(err)
        .spawn()
}

/// Asks a child to stop as Ctrl-C would (SIGINT), so it writes its files.
fn interrupt_child(c: &Child) {
    #[cfg(target_os = "linux")]
    // SAFETY: a plain system call on a process id we own.
    unsafe {
        libc::kill(c.id() as libc::pid_t, libc::SIGINT);
    }
    #[cfg(not(target_os = "linux"))]
    let _ = c;
}

/// Runs the points `indices` of the sweep in `out` that are not finished yet (and the failed
/// ones with `retry_failed`), `jobs` at a time, with one progress bar for the whole sweep.
pub fn run(out: &Path, indices: &[usize], o: &LocalOptions) -> std::io::Result<LocalOutcome> {
    let mut outcome = LocalOutcome::default();
    let mut queue: Vec<usize> = Vec::new();
    for &i in indices {
        match sweep_folder::point_state(out, i) {
            PointState::Finished => outcome.skipped += 1,
            PointState::Failed if !o.retry_failed => outcome.failed.push(i),
            _ => queue.push(i),
        }
    }
    queue.reverse();
    let bar = if o.quiet || !std::io::stderr().is_terminal() {
        ProgressBar::hidden()
    } else {
        let b = ProgressBar::with_draw_target(Some(indices.len() as u64), ProgressDrawTarget::stderr());
        b.set_style(
            ProgressStyle::with_template("{bar:40} {pos}/{len} points  {elapsed} so far, {eta} left")
                .unwrap_or_else(|_| ProgressStyle::default_bar()),
        );
        b
    };
    bar.set_position(outcome.skipped as u64);
    let mut running: Vec<Running> = Vec::new();
    loop {
        let stopping = o.interrupt.load(Ordering::Relaxed);
        if stopping && !outcome.interrupted {
            outcome.interrupted = true;
            for r in &running {
                interrupt_child(&r.child);
            }
        }
        while !stopping && running.len() < o.jobs.max(1) {
            let Some(i) = queue.pop() else { break };
            sweep_folder::clear_failed(out, i);
            running.push(Running {
                index: i,
                child: spawn(out, i, o)?,
            });
        }
        if running.is_empty() {
            break;
        }
        let mut k = 0;
        while k < running.len() {
            if let Some(status) = running[k].child.try_wait()? {
                let r = running.swap_remove(k);
                match sweep_folder::point_state(out, r.index) {
                    PointState::Finished => {
                        outcome.finished += 1;
                        bar.inc(1);
                    }
                    // Stopped by Ctrl-C: run again next time.
                    PointState::Pending if outcome.interrupted => {}
                    _ => {
                        sweep_folder::mark_failed(out, r.index, status.code())
                            .map_err(|e| std::io::Error::other(e.to_string()))?;
                        outcome.failed.push(r.index);
                        bar.inc(1);
                    }
                }
            } else {
                k += 1;
            }
        }
        std::thread::sleep(Duration::from_millis(50));
    }
    bar.finish_and_clear();
    outcome.failed.sort_unstable();
    if !queue.is_empty() {
        outcome.interrupted = true;
    }
    Ok(outcome)
}
