#!/usr/bin/env bash
# Soak: does resident memory stay flat over a long run?
#
#  1. headless: `noblescope run` of the 32,000-atom reduced liquid for 10⁸ atom-steps
#     (3,125 steps × 32,000 atoms),
#     resident memory sampled every second;
#  2. window: `noblescope watch` of the same liquid, running, in the 3D view under Xvfb and
#     Mesa's software OpenGL for SOAK_MINUTES minutes (default 30), resident memory sampled
#     every minute.
#
# Allowance: after a warm-up (the first 10 % of the samples, at least one), resident memory may
# not grow by more than 2 % of its value at the end of the warm-up plus 4 MiB; glibc's arenas,
# llvmpipe's buffer pools and the plots' bounded histories settle within the first minutes (the
# CSV export log grows by about 0.6 kB/s at 32,000 atoms until its cap of 200,000 samples),
# after which growth means a leak. Fails
# (non-zero exit) otherwise. Not run by CI (it takes half an hour); the figures go into the
# README by hand.
#
# Needs: a release build, Xvfb and Mesa (scripts/window-smoke.sh installs them), python3.
set -euo pipefail
cd "$(dirname "$0")/.."
minutes="${SOAK_MINUTES:-30}"
target="${CARGO_TARGET_DIR:-target}"
bin="$target/release/noblescope"
cargo build --release --quiet
out="runs/soak"
rm -rf "$out"
mkdir -p "$out"

rss_kb() { awk '/^VmRSS:/ {print $2}' "/proc/$1/status" 2>/dev/null || true; }

# A setup of 3,125 steps: 10⁸ atom-steps at 32,000 atoms.
sed -e 's/steps: [0-9_]*,/steps: 3125,/' -e 's/equilibration_steps: [0-9_]*,/equilibration_steps: 0,/' \
    assets/reduced-liquid-32k.ron >"$out/soak-setup.ron"

flat() { # name file: checks the samples (one kB figure per line) against the allowance
    python3 - "$1" "$2" <<'EOF'
import sys
name, path = sys.argv[1], sys.argv[2]
kb = [int(l) for l in open(path) if l.strip()]
if len(kb) < 2:
    sys.exit(f"{name}: too few memory samples ({len(kb)})")
warm = min(max(1, len(kb) // 10), len(kb) - 1)
base = kb[warm]
peak = max(kb[warm:])
allowed = base * 0.02 + 4096
print(f"{name}: {len(kb)} samples, after warm-up {base / 1024:.1f} MiB, peak {peak / 1024:.1f} MiB, "
      f"growth {(peak - base) / 1024:+.1f} MiB (allowed {allowed / 1024:.1f} MiB)")
sys.exit(0 if peak - base <= allowed else f"{name}: resident memory grew beyond the allowance")
EOF
}

echo "== headless: 10^8 atom-steps"
"$bin" run "$out/soak-setup.ron" --out "$out/headless" --quiet &
pid=$!
: >"$out/headless-rss.txt"
while kill -0 "$pid" 2>/dev/null; do
    r=$(rss_kb "$pid")
    [[ -n "$r" ]] && echo "$r" >>"$out/headless-rss.txt"
    sleep 1
done
wait "$pid"
flat headless "$out/headless-rss.txt"

echo "== window: $minutes minutes at 32,000 atoms"
source scripts/xvfb.sh 87 88 89 90
# 40 frames a second; the window closes itself after the last frame.
frames=$((minutes * 60 * 40))
"$bin" watch assets/reduced-liquid-32k.ron --run --view 3d --size 1440x900 --frames "$frames" \
    --report "$out/window-report.json" 2>"$out/window.log" &
pid=$!
: >"$out/window-rss.txt"
for ((m = 0; m <= minutes; m++)); do
    kill -0 "$pid" 2>/dev/null || break
    r=$(rss_kb "$pid")
    [[ -n "$r" ]] && echo "$r" >>"$out/window-rss.txt"
    echo "  minute $m: $(( ${r:-0} / 1024 )) MiB"
    sleep 60
done
kill "$pid" 2>/dev/null || true
wait "$pid" 2>/dev/null || true
flat window "$out/window-rss.txt"
echo "== soak passed"
