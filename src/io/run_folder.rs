//! The output folder of a headless run, written so that it always holds exactly one run.
//!
//! A run writes into a staging folder beside the output folder (`.NAME.staging-PID`, in the same
//! parent, so on the same file system). When it ends (finished, or stopped by an alarm) its
//! files are renamed into the output folder, each replacing the earlier run's file of the same
//! name in one step, and the earlier run's other files are removed; files that are not a run's
//! (the user's notes, plots) stay. A folder that did not exist is the staging folder renamed.
//! So:
//! - a run that fails or is killed before it ends leaves the earlier run untouched;
//! - a finished run never shares its folder with another run's files;
//! - files are created anew in a folder the program made itself and renamed into place, so
//!   nothing is written through a symbolic link; an output folder that is a link is refused.
//!
//! Before the renames begin, a mark (`.committing`) is written into the staging folder. A run
//! killed during the renames (a few milliseconds) leaves that mark, and the next run into the
//! same folder finishes the renames first; a staging folder without the mark is a run killed
//! before it ended and is removed, as are temporary checkpoint files of dead processes inside
//! the output folder.

use std::fs;
use std::io::{self, Write};
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
    run_files: Vec<String>,
    committed: bool,
}

/// Checks that `out` can take a run whose files are named `run_files`, without changing
/// anything: it is absent or a folder, not a symbolic link, and holds none of a run's files
/// unless `overwrite` is set.
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
    if overwrite {
        return Ok(());
    }
    // Named in the order the run writes them.
    match run_files
        .iter()
        .find(|f| fs::symlink_metadata(out.join(f)).is_ok())
    {
        Some(file) => Err(FolderError::HoldsRun {
            path: out.to_path_buf(),
            file: file.to_string(),
        }),
        None => Ok(()),
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

/// The mark a staging folder carries while its files are renamed into place.
const COMMIT_MARK: &str = ".committing";

/// Renames every file of `staging` (but the mark) into `out`, removes the run files of `out`
/// that the new run does not have (the mark lists the new run's files, so this holds after a
/// kill part-way too), then the staging folder. Safe to repeat after a kill.
fn finish_commit(staging: &Path, out: &Path, run_files: &[&str]) -> Result<(), FolderError> {
    let io_err = |p: &Path, e| FolderError::Io {
        path: p.to_path_buf(),
        source: e,
    };
    let mark = staging.join(COMMIT_MARK);
    let listed = fs::read_to_string(&mark).map_err(|e| io_err(&mark, e))?;
    let new: Vec<&str> = listed.lines().collect();
    fs::create_dir_all(out).map_err(|e| FolderError::NotWritable {
        path: out.to_path_buf(),
        source: e,
    })?;
    for name in &new {
        let from = staging.join(name);
        if fs::symlink_metadata(&from).is_ok() {
            fs::rename(&from, out.join(name)).map_err(|e| io_err(&out.join(name), e))?;
        }
    }
    for f in run_files {
        let p = out.join(f);
        if !new.contains(f) && fs::symlink_metadata(&p).is_ok() {
            fs::remove_file(&p).map_err(|e| io_err(&p, e))?;
        }
    }
    sync_folder(out);
    fs::remove_dir_all(staging).map_err(|e| io_err(staging, e))
}

/// Finishes or removes what killed runs into `out` left behind.
fn clean_leftovers(out: &Path, run_files: &[&str]) -> Result<(), FolderError> {
    let parent = parent_of(out);
    let prefix = format!(".{}.staging-", name_of(out));
    let io_err = |p: &Path, e| FolderError::Io {
        path: p.to_path_buf(),
        source: e,
    };
    let Ok(entries) = fs::read_dir(&parent) else {
        return Ok(());
    };
    for entry in entries.flatten() {
        let file = entry.file_name().to_string_lossy().into_owned();
        let Some(pid) = file.strip_prefix(&prefix).and_then(|p| p.parse::<u32>().ok()) else {
            continue;
        };
        if process_alive(pid) {
            continue;
        }
        if entry.path().join(COMMIT_MARK).exists() {
            finish_commit(&entry.path(), out, run_files)?;
        } else {
            fs::remove_dir_all(entry.path()).map_err(|e| io_err(&entry.path(), e))?;
        }
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
        clean_leftovers(out, run_files)?;
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
            run_files: run_files.iter().map(|f| f.to_string()).collect(),
            committed: false,
        })
    }

    /// The folder to write the run's files into.
    pub fn path(&self) -> &Path {
        &self.staging
    }

    /// Creates a new file `name` in the staging folder (never opens an existing file or link).
    pub fn create(&self, name: &str) -> io::Result<fs::File> {
        fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(self.staging.join(name))
    }

    /// Puts the staged run in place: renames the staging folder to the output folder if there
    /// is none yet, else renames its files into it (see the module's documentation).
    pub fn commit(mut self) -> Result<PathBuf, FolderError> {
        let io_err = |p: &Path, e| FolderError::Io {
            path: p.to_path_buf(),
            source: e,
        };
        sync_folder(&self.staging);
        if fs::symlink_metadata(&self.out).is_err() {
            fs::rename(&self.staging, &self.out).map_err(|e| io_err(&self.out, e))?;
        } else {
            // The mark lists the new run's files, so a kill part-way can be finished exactly.
            let mut names = String::new();
            for entry in fs::read_dir(&self.staging).map_err(|e| io_err(&self.staging, e))? {
                let entry = entry.map_err(|e| io_err(&self.staging, e))?;
                names.push_str(&entry.file_name().to_string_lossy());
                names.push('\n');
            }
            let mark = self.staging.join(COMMIT_MARK);
            fs::File::create(&mark)
                .and_then(|mut f| f.write_all(names.as_bytes()).and_then(|()| f.sync_all()))
                .map_err(|e| io_err(&mark, e))?;
            sync_folder(&self.staging);
            let files: Vec<&str> = self.run_files.iter().map(String::as_str).collect();
            finish_commit(&self.staging, &self.out, &files)?;
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
    fn a_run_killed_during_its_renames_is_finished_by_the_next_and_one_killed_earlier_is_removed() {
        let d = scratch("killed");
        let out = d.join("out");
        write_run(&out, "old");
        fs::write(out.join("notes.txt"), "mine").unwrap();
        // Killed while committing: the mark is there, energy.csv already moved, summary not.
        let committing = d.join(".out.staging-999999999");
        fs::create_dir_all(&committing).unwrap();
        fs::write(committing.join(COMMIT_MARK), "energy.csv\ntrajectory.xyz\n").unwrap();
        fs::write(out.join("energy.csv"), "new").unwrap();
        fs::write(committing.join("trajectory.xyz"), "new").unwrap();
        // Killed mid-run: no mark.
        let running = d.join(".out.staging-999999998");
        fs::create_dir_all(&running).unwrap();
        fs::write(running.join("energy.csv"), "partial").unwrap();
        let staged = StagedRun::begin(&out, true, &["energy.csv", "summary.json", "trajectory.xyz"]).unwrap();
        assert!(!committing.exists() && !running.exists());
        let mut names: Vec<_> = fs::read_dir(&out)
            .unwrap()
            .map(|e| e.unwrap().file_name().into_string().unwrap())
            .collect();
        names.sort();
        // The committing run's files, without the old run's summary; the user's notes stay.
        assert_eq!(names, ["energy.csv", "notes.txt", "trajectory.xyz"]);
        assert_eq!(fs::read_to_string(out.join("energy.csv")).unwrap(), "new");
        drop(staged);
    }

    #[test]
    fn links_and_earlier_runs_are_refused_by_name_and_other_files_are_kept() {
        let d = scratch("refuse");
        let out = d.join("out");
        write_run(&out, "old");
        let e = check(&out, false, &FILES).unwrap_err();
        assert!(
            e.is_bad_input() && e.to_string().contains("already holds a run (energy.csv)"),
            "{e}"
        );
        fs::write(out.join("notes.txt"), "mine").unwrap();
        let staged = StagedRun::begin(&out, true, &FILES).unwrap();
        fs::write(staged.path().join("energy.csv"), "new").unwrap();
        staged.commit().unwrap();
        assert_eq!(fs::read_to_string(out.join("notes.txt")).unwrap(), "mine");
        assert!(!out.join("summary.json").exists());
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
