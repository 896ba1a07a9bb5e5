#!/usr/bin/env bash
# `noblescope sweep --slurm --submit` on a real single-node Slurm cluster (scripts/slurm-cluster.sh):
# a 4-point sweep runs as a job array, `sweep collect` gathers it, and its table must equal,
# bit for bit, the same sweep run locally (the timing columns aside), as must every point's
# energy log. Called by .ci/run after the tests; needs root. Usage: scripts/slurm-sweep-check.sh BINARY
set -euo pipefail
bin=$(realpath "${1:-target/release/noblescope}")
here=$(cd "$(dirname "$0")/.." && pwd)
work=$(mktemp -d /tmp/noblescope-slurm-check.XXXXXX)
cleanup() { "$here/scripts/slurm-cluster.sh" stop || true; }
trap cleanup EXIT
"$here/scripts/slurm-cluster.sh" start

cat > "$work/check.sweep.ron" <<'RON'
Sweep(
    base: Setup(
        title: "Slurm check",
        species: [(kind: Argon, share: 1.0)],
        atoms: 256,
        density: GramsPerCubicCentimetre(1.30),
        temperature: Kelvin(100.0),
        timestep: Femtoseconds(5.0),
        cutoff: Sigma(2.5),
        ensemble: Nvt(thermostat: Langevin(friction: PerPicosecond(2.0))),
        seed: 5,
        steps: 2000,
        sample_every: 10,
    ),
    temperature: [Kelvin(100.0), Kelvin(120.0)],
    replicas: 2,
)
RON

"$bin" sweep "$work/check.sweep.ron" --out "$work/cluster" --slurm --submit --cpus-per-task 1 | tee "$work/submit.txt"
job=$(sed -n 's/^submitted job \([0-9]*\).*/\1/p' "$work/submit.txt")
[ -n "$job" ] || { echo "slurm check: no job id" >&2; exit 1; }
for _ in $(seq 600); do
    if [ -z "$(squeue -h -j "$job" 2>/dev/null)" ]; then break; fi
    sleep 1
done
if [ -n "$(squeue -h -j "$job" 2>/dev/null)" ]; then
    echo "slurm check: job $job still queued after 10 minutes" >&2
    squeue >&2
    exit 1
fi
"$bin" sweep collect "$work/cluster"
"$bin" sweep "$work/check.sweep.ron" --out "$work/local" --jobs 2 --quiet

python3 - "$work/cluster/sweep.csv" "$work/local/sweep.csv" <<'PY'
import csv, sys
def table(p):
    rows = [r for r in csv.reader(l for l in open(p) if not l.startswith("#"))]
    head = rows[0]
    keep = [i for i, h in enumerate(head) if h not in ("wall_seconds", "atom_steps_per_second")]
    return [[r[i] for i in keep] for r in rows]
a, b = table(sys.argv[1]), table(sys.argv[2])
assert len(a) == 5, f"expected 4 points and a header, got {len(a)} rows"
assert all(r[a[0].index("state")] == "finished" for r in a[1:]), a
assert a == b, f"cluster and local tables differ:\n{a}\n{b}"
print(f"slurm check: {len(a) - 1} points, cluster and local tables identical ({len(a[0])} columns)")
PY
for p in "$work"/cluster/point-*; do
    cmp "$p/energy.csv" "$work/local/$(basename "$p")/energy.csv"
done
echo "slurm check: every point's energy.csv identical byte for byte"
rm -rf "$work"
