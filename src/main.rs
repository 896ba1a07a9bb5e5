//! Command line: no arguments opens the window; subcommands run headless (see [`cli`]).

mod cli;

use clap::Parser;
use cli::CliError;
use cli::args::Cli;
use cli::commands::{self, Next, WindowPlan};
use std::process::ExitCode;

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
    let result = match cli.command {
        None => commands::build_force_pool(None, true).and_then(|_| open_window(None)),
        Some(cmd) => commands::run(cmd).and_then(|next| match next {
            Next::Done => Ok(()),
            Next::Window(plan) => open_window(Some(*plan)),
        }),
    };
    cli::exit_code(result)
}

/// Opens the window: on the given plan, or on the remembered (else bundled) setup. A window
/// that cannot open is a failure (exit code 1).
fn open_window(with: Option<WindowPlan>) -> Result<(), CliError> {
    let (opts, size) = with.unwrap_or_else(|| {
        (
            noblescope::ui::StartOptions {
                persist: true,
                ..Default::default()
            },
            None,
        )
    });
    noblescope::ui::window::run(opts, size).map_err(|e| CliError::Failed(e.to_string()))
}
