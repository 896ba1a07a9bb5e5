//! The command line's shell around the library: arguments ([`args`]), the subcommands
//! ([`commands`]), what they print ([`output`]) and the one mapping from errors to exit codes
//! ([`exit_code`]).

pub mod args;
pub mod commands;
pub mod output;

use noblescope::engine::headless::RunError;
use std::process::ExitCode;

/// Why a command failed; the variant decides the exit code.
#[derive(Debug, thiserror::Error)]
pub enum CliError {
    /// The inputs cannot be used: a flag, a setup or a checkpoint (exit code 2).
    #[error("{0}")]
    BadInput(String),
    /// The work itself failed: a run blew up, a file could not be written, the window could
    /// not open (exit code 1).
    #[error("{0}")]
    Failed(String),
    /// The user stopped a run with Ctrl-C; its files were written (exit code 130, the shell's
    /// code for a process ended by SIGINT).
    #[error("{0}")]
    Interrupted(String),
}

impl From<RunError> for CliError {
    fn from(e: RunError) -> Self {
        match e {
            RunError::BadInput(m) => CliError::BadInput(m),
            RunError::Failed(m) => CliError::Failed(m),
        }
    }
}

/// The process exit code of a command: 0 on success, 2 for bad input, 1 for a failure, 130
/// for a run stopped by Ctrl-C; the
/// error is printed to stderr as "error: …".
pub fn exit_code(result: Result<(), CliError>) -> ExitCode {
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("error: {e}");
            ExitCode::from(match e {
                CliError::BadInput(_) => 2,
                CliError::Failed(_) => 1,
                CliError::Interrupted(_) => 130,
            })
        }
    }
}
