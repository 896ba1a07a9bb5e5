//! Shared helpers for the tests that run the `noblescope` binary: a fresh scratch folder and a
//! run of the command with its output.
#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// An empty folder for one test, under cargo's temporary folder for integration tests; `prefix`
/// and the process id keep tests of different files and runs apart.
pub fn scratch(prefix: &str, name: &str) -> PathBuf {
    let d = Path::new(env!("CARGO_TARGET_TMPDIR")).join(format!("{prefix}-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

/// Runs the binary with `args` and waits for it.
pub fn noblescope(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_noblescope"))
        .args(args)
        .output()
        .unwrap()
}

/// Standard output and standard error as text.
pub fn text(o: &Output) -> (String, String) {
    (
        String::from_utf8_lossy(&o.stdout).into_owned(),
        String::from_utf8_lossy(&o.stderr).into_owned(),
    )
}
