#!/usr/bin/env python3
"""Reference values for the equilibration evidence (noblescope::analysis::{series_statistics,
evidence}) on series that make the verdict matter.

Source of truth: pymbar 4.0.3 (`pip install pymbar==4.0.3`), module pymbar.timeseries:
  detect_equilibration(A_t, fast=True, nskip=k)   -- Chodera, JCTC 12, 1799 (2016)
  statistical_inefficiency(A_n, fast=False)       -- Chodera et al., JCTC 3, 26 (2007)

The series are synthetic (invented data, generated here from fixed seeds with numpy's PCG64)
and written to tests/data/evidence_<name>.csv with 17 significant digits.  For each series the
JSON holds pymbar's detected start (for the nskip listed), its g and Neff, and at that start
the mean and statistical inefficiency (fast=False) of the rest.

Run from the crate root:  python3 scripts/reference/pymbar_evidence.py
"""
import json
import os

import numpy as np
import pymbar
from pymbar.timeseries import detect_equilibration, statistical_inefficiency

ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
DATA = os.path.join(ROOT, "tests", "data")


def ar1(rng, n, phi):
    x = np.empty(n)
    x[0] = rng.standard_normal()
    e = rng.standard_normal(n)
    s = np.sqrt(1.0 - phi * phi)
    for t in range(1, n):
        x[t] = phi * x[t - 1] + s * e[t]
    return x


def make_series():
    rng = np.random.Generator(np.random.PCG64(20261204))
    series = {}
    t = np.arange(3000)
    # Never equilibrates: a steady linear drift of 6 noise widths over the run, AR(1) noise.
    series["steady_drift"] = ar1(rng, 3000, 0.8) + 6.0 * t / 3000.0
    # Settled noise, then a jump by 4 noise widths at 80 % of the run (a late change of state).
    x = ar1(rng, 4000, 0.8)
    x[3200:] += 4.0
    series["late_jump"] = x
    # A lattice-like start: one sample far off, then a relaxation into AR(1) noise.
    t = np.arange(3000)
    x = ar1(rng, 3000, 0.9) + 3.0 * np.exp(-t / 150.0)
    x[0] = -80.0
    series["far_first_sample"] = x
    # A long equilibrated AR(1) series with a short transient (the blocked path).
    t = np.arange(60000)
    series["long_ar1"] = ar1(rng, 60000, 0.95) + 8.0 * np.exp(-t / 400.0)
    return series


def main():
    out = {"pymbar_version": pymbar.__version__, "series": {}}
    for name, x in make_series().items():
        path = os.path.join(DATA, f"evidence_{name}.csv")
        with open(path, "w") as f:
            f.write(f"# synthetic series '{name}' (invented data; scripts/reference/pymbar_evidence.py)\n")
            for v in x:
                f.write(f"{v:.17g}\n")
        n = len(x)
        nskip = max(1, -(-n // 100))
        t0, g, neff = detect_equilibration(x, fast=True, nskip=nskip)
        rest = x[t0:]
        # Without the first 1 % of samples (as noblescope's detection runs), same candidates.
        first = -(-n // 100)
        t1, g1, neff1 = detect_equilibration(x[first:], fast=True, nskip=nskip)
        out["series"][name] = {
            "file": os.path.basename(path),
            "n": n,
            "nskip": nskip,
            "start": int(t0),
            "g": float(g),
            "neff": float(neff),
            "mean_after": float(np.mean(rest)),
            "g_after_slow": float(statistical_inefficiency(rest, fast=False)),
            "first_percent_dropped": {"first": first, "start": int(t1) + first, "g": float(g1), "neff": float(neff1)},
        }
        print(name, out["series"][name])
    with open(os.path.join(DATA, "pymbar_evidence.json"), "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
