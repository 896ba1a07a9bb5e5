//! The job-array batch script of a sweep for the Slurm scheduler: one array task per point,
//! each running `noblescope run` on its point's folder.

use std::path::Path;

/// Options of the batch script (the `sbatch` directives).
#[derive(Clone, Debug, Default, PartialEq)]
pub struct SlurmOptions {
    pub partition: Option<String>,
    /// `HH:MM:SS`.
    pub time: Option<String>,
    pub cpus_per_task: usize,
    /// Most array tasks running at once (`%K`).
    pub max_parallel: Option<usize>,
}

/// `0-3,7,9-12`: the indices as ranges, ascending.
pub fn array_ranges(indices: &[usize]) -> String {
    let mut out: Vec<String> = Vec::new();
    let mut i = 0;
    while i < indices.len() {
        let start = indices[i];
        let mut end = start;
        while i + 1 < indices.len() && indices[i + 1] == end + 1 {
            i += 1;
            end = indices[i];
        }
        out.push(if start == end {
            start.to_string()
        } else {
            format!("{start}-{end}")
        });
        i += 1;
    }
    out.join(",")
}

/// Checks `HH:MM:SS` (hours any number of digits, minutes and seconds below 60).
pub fn valid_time(t: &str) -> bool {
    let parts: Vec<&str> = t.split(':').collect();
    parts.len() == 3
        && parts
            .iter()
            .all(|p| !p.is_empty() && p.chars().all(|c| c.is_ascii_digit()))
        && parts[1].len() == 2
        && parts[2].len() == 2
        && parts[1].parse::<u32>().is_ok_and(|m| m < 60)
        && parts[2].parse::<u32>().is_ok_and(|s| s < 60)
}

fn quoted(p: &Path) -> String {
    format!("'{}'", p.display().to_string().replace('\'', "'\\''"))
}

/// The script text for the points `indices` of the sweep in `out` (an absolute path), run by
/// the program at `exe` (absolute).
pub fn script(out: &Path, exe: &Path, indices: &[usize], o: &SlurmOptions) -> String {
    let mut s = String::from("#!/bin/bash\n");
    s += "# Written by `noblescope sweep --slurm`: one array task per sweep point.\n";
    s += "#SBATCH --job-name=noblescope-sweep\n";
    s += &format!(
        "#SBATCH --array={}{}\n",
        array_ranges(indices),
        o.max_parallel.map(|k| format!("%{k}")).unwrap_or_default()
    );
    s += &format!("#SBATCH --cpus-per-task={}\n", o.cpus_per_task.max(1));
    s += "#SBATCH --ntasks=1\n";
    if let Some(p) = &o.partition {
        s += &format!("#SBATCH --partition={p}\n");
    }
    if let Some(t) = &o.time {
        s += &format!("#SBATCH --time={t}\n");
    }
    s += &format!("#SBATCH --output={}/slurm-%A_%a.out\n", out.display());
    s += "set -eu\n";
    s += &format!("cd {}\n", quoted(out));
    s += "point=$(printf 'point-%04d' \"$SLURM_ARRAY_TASK_ID\")\n";
    s += "rm -f \"$point/failed.txt\"\n";
    s += &format!(
        "if ! {} run \"$point/setup.ron\" --out \"$point\" --overwrite --quiet --threads \"${{SLURM_CPUS_PER_TASK:-1}}\" > \"$point/run.log\" 2>&1; then\n",
        quoted(exe)
    );
    s += "    code=$?\n";
    s += "    if ! grep -q '\"stopped_because\"' \"$point/summary.json\" 2>/dev/null; then\n";
    s += "        { echo \"exit code: $code\"; tail -n 20 \"$point/run.log\"; } > \"$point/failed.txt\"\n";
    s += "        exit \"$code\"\n";
    s += "    fi\n";
    s += "fi\n";
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ranges_compress_runs_and_times_are_checked() {
        assert_eq!(array_ranges(&[0, 1, 2, 3, 7, 9, 10]), "0-3,7,9-10");
        assert_eq!(array_ranges(&[5]), "5");
        assert!(valid_time("01:30:00") && valid_time("100:00:00"));
        assert!(!valid_time("1:60:00") && !valid_time("01:30") && !valid_time("aa:00:00"));
    }
}
