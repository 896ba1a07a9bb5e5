#!/usr/bin/env bash
# Smoke test of the desktop window for CI: installs a virtual X server and Mesa's software
# OpenGL, then runs scripts/screenshots.sh (which fails on missing or blank pictures).
set -euo pipefail
cd "$(dirname "$0")/.."
packages=(xvfb xauth libgl1 libglx-mesa0 libgl1-mesa-dri libegl1 libegl-mesa0 libxkbcommon0 libxkbcommon-x11-0 libx11-6 libx11-xcb1 libxcursor1 libxrandr2 libxi6 python3)
missing=()
for p in "${packages[@]}"; do
    dpkg -s "$p" >/dev/null 2>&1 || missing+=("$p")
done
if (( ${#missing[@]} )); then
    export DEBIAN_FRONTEND=noninteractive
    apt-get update
    apt-get install -y --no-install-recommends "${missing[@]}"
fi
# Only the three view pictures in CI; the 32k performance run is for people (SKIP_PERF=0).
SKIP_PERF="${SKIP_PERF:-1}" bash scripts/screenshots.sh
