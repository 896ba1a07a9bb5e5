//! The output folder of a headless run, written so that it always holds exactly one run.
//!
//! A run writes into a staging folder beside the output folder (`.NAME.staging-PID`, in the same
//! parent, so on the same file system) and, when it ends (finished, or stopped by an alarm),
//! the staging folder takes the output folder's place in one step: on Linux by exchanging the
//! two names atomically (`renameat2` with `RENAME_EXCHANGE`), elsewhere, or where the file
//! system cannot exchange, by two renames with the old folder parked as `.NAME.replaced-PID`
//! in between. So:
//! - a run that fails or is killed leaves the earlier run in the output folder untouched;
//! - a finished run never shares its folder with another run's files;
//! - files are created anew in a folder the program made itself, so nothing is written
//!   through a symbolic link, and an output folder that is a link is refused.
//!
//! Leftovers of killed runs (staging folders, a parked old folder, temporary checkpoint files
//! inside the output folder) are cleaned up by the next run into the same folder; a parked old
//! folder whose output folder is missing is put back first.

use std::fs;
use std::io;
use std::path::{Path, PathBuf};

/// Why a folder cannot take a run. Every variant is bad input (exit code 2) except
/// [`FolderError::Io`], which is a failure while writing (exit code 1).
#[derive(Debug, thiserror::Error)]
pub enum FolderError {
    /// Something other than a folder has the name.
    #[error("--out: {} exists and is not a folder; choose a folder", .0.display())]
    NotAFolder(PathBuf),
    /// The name is a symbolic link.
    #[error(
        "--out: {} is a symbolic link to {}{}; give the folder itself, not a link to it",
        .path.display(), .target.display(), if *.dangling { ", which does not exist" } else { "" }
    )]
    Link {
        path: PathBuf,
        target: PathBuf,
        dangling: bool,
    },
    /// The folder holds an earlier run and `--overwrite` was not given.
    #[error("--out: {} already holds a run ({file}); choose another folder or pass --overwrite", .path.display())]
    HoldsRun { path: PathBuf, file: String },
    /// The folder holds files that no run writes; replacing it would lose them.
    #[error(
        "--out: {} holds files that are not a run's ({}); choose a new or empty folder, or move them away",
        .path.display(), .files.join(", ")
    )]
    ForeignFiles { path: PathBuf, files: Vec<String> },
    /// The program may not create or replace the folder.
    #[error(
        "--out: cannot write {}: {source}; choose a folder you may write in (its parent folder must be writable too)",
        .path.display()
    )]
    NotWritable { path: PathBuf, source: io::Error },
    /// Writing failed for another reason.
    #[error("{}: {source}", .path.display())]
    Io { path: PathBuf, source: io::Error },
}

impl FolderError {
    /// Whether the error is the user's input (exit code 2) rather than a failed write (1).
    pub fn is_bad_input(&self) -> bool {
        !matches!(self, FolderError::Io { .. })
    }
}

/// A run being written: files go into [`StagedRun::path`] until [`StagedRun::commit`] puts
/// them in place. Dropped without a commit, the staging folder is removed and the output folder
/// stays as it was.
#[derive(Debug)]
pub struct StagedRun {
    out: PathBuf,
    staging: PathBuf,
    committed: bool,
}

/// Checks that `out` can take a run whose files are named `run_files`, without changing
/// anything: it is absent, or an empty folder, or a folder holding only a run's files and
/// `overwrite` is set; it is not a symbolic link.
pub fn check(out: &Path, overwrite: bool, run_files: &[&str]) -> Result<(), FolderError> {
    let meta = match fs::symlink_metadata(out) {
        Ok(m) => m,
        Err(e) if e.kind() == io::ErrorKind::NotFound => return Ok(()),
        Err(e) => {
            return Err(FolderError::NotWritable {
                path: out.to_path_buf(),
                source: e,
            });
        }
    };
    if meta.file_type().is_symlink() {
        let target = fs::read_link(out).unwrap_or_default();
        return Err(FolderError::Link {
            path: out.to_path_buf(),
            dangling: !out.exists(),
            target,
        });
    }
    if !meta.is_dir() {
        return Err(FolderError::NotAFolder(out.to_path_buf()));
    }
    let entries = fs::read_dir(out).map_err(|e| FolderError::NotWritable {
        path: out.to_path_buf(),
        source: e,
    })?;
    let mut found = Vec::new();
    let mut foreign = Vec::new();
    for entry in entries {
        let entry = entry.map_err(|e| FolderError::Io {
            path: out.to_path_buf(),
            source: e,
        })?;
        let name = entry.file_name().to_string_lossy().into_owned();
        if run_files.contains(&name.as_str()) {
            found.push(name);
        } else if !is_temporary_checkpoint(&name) {
            foreign.push(name);
        }
    }
    foreign.sort();
    if !foreign.is_empty() {
        foreign.truncate(5);
        return Err(FolderError::ForeignFiles {
            path: out.to_path_buf(),
            files: foreign,
        });
    }
    // Named in the order the run writes them, whatever order the folder lists them in.
    match run_files.iter().find(|f| found.iter().any(|n| n == *f)) {
        Some(file) if !overwrite => Err(FolderError::HoldsRun {
            path: out.to_path_buf(),
            file: file.to_string(),
        }),
        _ => Ok(()),
    }
}

/// A checkpoint writer's temporary file (`.NAME.partial-PID`), left behind by a kill.
fn is_temporary_checkpoint(name: &str) -> bool {
    name.starts_with('.') && name.contains(".partial-")
}

fn parent_of(out: &Path) -> PathBuf {
    match out.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    }
}

fn name_of(out: &Path) -> String {
    out.file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "run".into())
}

/// Whether a process with this id runs (Linux: /proc; elsewhere assumed gone).
fn process_alive(pid: u32) -> bool {
    pid == std::process::id() || Path::new(&format!("/proc/{pid}")).exists()
}

/// Removes leftovers of killed runs into `out`; puts a parked old folder back if `out` is
/// missing.
fn clean_leftovers(out: &Path) -> Result<(), FolderError> {
    let parent = parent_of(out);
    let name = name_of(out);
    let io_err = |p: &Path, e| FolderError::Io {
        path: p.to_path_buf(),
        source: e,
    };
    let Ok(entries) = fs::read_dir(&parent) else {
        return Ok(());
    };
    let mut parked = Vec::new();
    let mut stale = Vec::new();
    for entry in entries.flatten() {
        let file = entry.file_name().to_string_lossy().into_owned();
        for (kind, list) in [("staging", &mut stale), ("replaced", &mut parked)] {
            let prefix = format!(".{name}.{kind}-");
            if let Some(pid) = file.strip_prefix(&prefix).and_then(|p| p.parse::<u32>().ok())
                && !process_alive(pid)
            {
                list.push(entry.path());
            }
        }
    }
    if !out.exists()
        && let Some(old) = parked.pop()
    {
        fs::rename(&old, out).map_err(|e| io_err(&old, e))?;
    }
    for p in stale.into_iter().chain(parked) {
        fs::remove_dir_all(&p).map_err(|e| io_err(&p, e))?;
    }
    if let Ok(entries) = fs::read_dir(out) {
        for entry in entries.flatten() {
            let file = entry.file_name().to_string_lossy().into_owned();
            let pid = file
                .rsplit_once(".partial-")
                .and_then(|(_, p)| p.parse::<u32>().ok());
            if is_temporary_checkpoint(&file) && pid.is_some_and(|p| !process_alive(p)) {
                fs::remove_file(entry.path()).map_err(|e| io_err(&entry.path(), e))?;
            }
        }
    }
    Ok(())
}

impl StagedRun {
    /// Cleans up after killed runs, checks `out` (see [`check`]) and creates the staging
    /// folder beside it.
    pub fn begin(out: &Path, overwrite: bool, run_files: &[&str]) -> Result<StagedRun, FolderError> {
        clean_leftovers(out)?;
        check(out, overwrite, run_files)?;
        let parent = parent_of(out);
        fs::create_dir_all(&parent).map_err(|e| FolderError::NotWritable {
            path: parent.clone(),
            source: e,
        })?;
        let staging = parent.join(format!(".{}.staging-{}", name_of(out), std::process::id()));
        if staging.exists() {
            fs::remove_dir_all(&staging).map_err(|e| FolderError::Io {
                path: staging.clone(),
                source: e,
            })?;
        }
        fs::create_dir(&staging).map_err(|e| FolderError::NotWritable {
            path: out.to_path_buf(),
            source: e,
        })?;
        Ok(StagedRun {
            out: out.to_path_buf(),
            staging,
            committed: false,
        })
    }

    /// The folder to write the run's files into.
    pub fn path(&self) -> &Path {
        &self.staging
    }

    /// Where the files will be once committed.
    pub fn destination(&self) -> &Path {
        &self.out
    }

    /// Creates a new file `name` in the staging folder (never opens an existing file or link).
    pub fn create(&self, name: &str) -> io::Result<fs::File> {
        fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(self.staging.join(name))
    }

    /// Puts the staged run in place of the output folder, in one step where the system allows.
    pub fn commit(mut self) -> Result<PathBuf, FolderError> {
        let io_err = |p: &Path, e| FolderError::Io {
            path: p.to_path_buf(),
            source: e,
        };
        sync_folder(&self.staging);
        if fs::symlink_metadata(&self.out).is_err() {
            fs::rename(&self.staging, &self.out).map_err(|e| io_err(&self.out, e))?;
        } else if exchange(&self.staging, &self.out).is_ok() {
            // The staging name now holds the earlier run.
            fs::remove_dir_all(&self.staging).map_err(|e| io_err(&self.staging, e))?;
        } else {
            let parked =
                parent_of(&self.out).join(format!(".{}.replaced-{}", name_of(&self.out), std::process::id()));
            fs::rename(&self.out, &parked).map_err(|e| io_err(&self.out, e))?;
            fs::rename(&self.staging, &self.out).map_err(|e| io_err(&self.out, e))?;
            fs::remove_dir_all(&parked).map_err(|e| io_err(&parked, e))?;
        }
        sync_folder(&parent_of(&self.out));
        self.committed = true;
        Ok(self.out.clone())
    }
}

impl Drop for StagedRun {
    fn drop(&mut self) {
        if !self.committed {
            let _ = fs::remove_dir_all(&self.staging);
        }
    }
}

/// Flushes a folder's entries to disk (best effort: a crash then cannot lose the rename).
fn sync_folder(dir: &Path) {
    if let Ok(f) = fs::File::open(dir) {
        let _ = f.sync_all();
    }
}

/// Swaps the names `a` and `b` atomically (Linux `renameat2(RENAME_EXCHANGE)`).
#[cfg(target_os = "linux")]
fn exchange(a: &Path, b: &Path) -> io::Result<()> {
    use std::ffi::CString;
    use std::os::unix::ffi::OsStrExt;
    let ca = CString::new(a.as_os_str().as_bytes())?;
    let cb = CString::new(b.as_os_str().as_bytes())?;
    // SAFETY: two valid NUL-terminated paths; the call only renames.
    let r = unsafe {
        libc::syscall(
            libc::SYS_renameat2,
            libc::AT_FDCWD,
            ca.as_ptr(),
            libc::AT_FDCWD,
            cb.as_ptr(),
            libc::RENAME_EXCHANGE,
        )
    };
    if r == 0 {
        Ok(())
    } else {
        Err(io::Error::last_os_error())
    }
}

#[cfg(not(target_os = "linux"))]
fn exchange(_: &Path, _: &Path) -> io::Result<()> {
    Err(io::Error::new(
        io::ErrorKind::Unsupported,
        "no atomic exchange here",
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    const FILES: [&str; 2] = ["energy.csv", "summary.json"];

    fn scratch(name: &str) -> PathBuf {
        let d = std::env::temp_dir().join(format!("noblescope-run-folder-{name}-{}", std::process::id()));
        let _ = fs::remove_dir_all(&d);
        fs::create_dir_all(&d).unwrap();
        d
    }

    fn write_run(dir: &Path, tag: &str) {
        fs::create_dir_all(dir).unwrap();
        for f in FILES {
            fs::write(dir.join(f), tag).unwrap();
        }
    }

    #[test]
    fn a_committed_run_replaces_the_earlier_one_entirely() {
        let d = scratch("replace");
        let out = d.join("out");
        write_run(&out, "old");
        fs::write(out.join(".final.checkpoint.partial-999999999"), "leftover").unwrap();
        let staged = StagedRun::begin(&out, true, &FILES).unwrap();
        fs::write(staged.path().join("energy.csv"), "new").unwrap();
        staged.commit().unwrap();
        assert_eq!(fs::read_to_string(out.join("energy.csv")).unwrap(), "new");
        assert!(
            !out.join("summary.json").exists(),
            "an old file survived beside the new run"
        );
        let names: Vec<_> = fs::read_dir(&d)
            .unwrap()
            .map(|e| e.unwrap().file_name())
            .collect();
        assert_eq!(
            names,
            vec![std::ffi::OsString::from("out")],
            "leftovers beside the folder"
        );
    }

    #[test]
    fn a_run_dropped_without_commit_leaves_the_earlier_run_as_it_was() {
        let d = scratch("fail");
        let out = d.join("out");
        write_run(&out, "old");
        {
            let staged = StagedRun::begin(&out, true, &FILES).unwrap();
            fs::write(staged.path().join("energy.csv"), "partial").unwrap();
        }
        assert_eq!(fs::read_to_string(out.join("energy.csv")).unwrap(), "old");
        assert_eq!(fs::read_dir(&d).unwrap().count(), 1);
    }

    #[test]
    fn leftovers_of_a_killed_run_are_cleaned_and_a_parked_folder_is_put_back() {
        let d = scratch("killed");
        let out = d.join("out");
        // Killed between the two renames of the fallback: the old run is parked, out missing.
        write_run(&d.join(".out.replaced-999999999"), "old");
        fs::create_dir_all(d.join(".out.staging-999999998")).unwrap();
        check(&out, false, &FILES).unwrap();
        let staged = StagedRun::begin(&out, true, &FILES).unwrap();
        assert_eq!(fs::read_to_string(out.join("energy.csv")).unwrap(), "old");
        assert!(!d.join(".out.staging-999999998").exists());
        drop(staged);
    }

    #[test]
    fn links_other_files_and_earlier_runs_are_refused_by_name() {
        let d = scratch("refuse");
        let out = d.join("out");
        write_run(&out, "old");
        let e = check(&out, false, &FILES).unwrap_err();
        assert!(
            e.is_bad_input() && e.to_string().contains("already holds a run (energy.csv)"),
            "{e}"
        );
        fs::write(out.join("notes.txt"), "mine").unwrap();
        let e = check(&out, true, &FILES).unwrap_err();
        assert!(
            e.to_string()
                .contains("holds files that are not a run's (notes.txt)"),
            "{e}"
        );
        #[cfg(unix)]
        {
            let link = d.join("link");
            std::os::unix::fs::symlink(d.join("nowhere"), &link).unwrap();
            let e = check(&link, true, &FILES).unwrap_err();
            assert!(
                e.to_string().contains("is a symbolic link to")
                    && e.to_string().contains("which does not exist")
            );
        }
        fs::write(d.join("file"), "x").unwrap();
        assert!(matches!(
            check(&d.join("file"), true, &FILES),
            Err(FolderError::NotAFolder(_))
        ));
    }
}
