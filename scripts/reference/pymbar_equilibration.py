#!/usr/bin/env python3
"""Reference values for noblescope::analysis::{statistical_inefficiency, detect_equilibration}.

Source of truth: pymbar 4.0.3 (`pip install pymbar==4.0.3`), module pymbar.timeseries:
  statistical_inefficiency(A_n, fast=False|True)  -- Chodera et al., JCTC 3, 26 (2007)
  detect_equilibration(A_t, fast=True, nskip=k)   -- Chodera, JCTC 12, 1799 (2016)

The test series are synthetic (invented data, generated here from fixed seeds with numpy's
PCG64) and are written to tests/data/series_<name>.csv with 17 significant digits, so the Rust
test reads exactly the numbers pymbar saw.  Results go to tests/data/pymbar_reference.json.

pymbar's detect_equilibration stores g_t and Neff_t in float32 arrays, so the g and Neff it
returns are float32-rounded.  To tell that rounding apart from a real disagreement, this script
also records `detect_float64`: the same loop as pymbar's detect_equilibration (copied from
pymbar 4.0.3 timeseries.py, calling pymbar's own statistical_inefficiency) but with float64
arrays.  It is labelled as such in the JSON and is not pymbar output.

Run from the crate root:  python3 scripts/reference/pymbar_equilibration.py
"""
import json
import os
import sys

import numpy as np
import pymbar
from pymbar.timeseries import statistical_inefficiency, detect_equilibration
from pymbar.utils import ParameterError

ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
DATA = os.path.join(ROOT, "tests", "data")


def ar1(rng, n, phi):
    """AR(1) with unit stationary variance: x_t = phi x_{t-1} + sqrt(1-phi^2) e_t, x_0 ~ N(0,1)."""
    x = np.empty(n)
    x[0] = rng.standard_normal()
    e = rng.standard_normal(n)
    s = np.sqrt(1.0 - phi * phi)
    for t in range(1, n):
        x[t] = phi * x[t - 1] + s * e[t]
    return x


def make_series():
    series = {}
    rng = np.random.Generator(np.random.PCG64(20240601))
    t = np.arange(2000)
    # AR(1), phi = 0.9, with an exponential relaxation transient (amplitude 5, decay 60 samples).
    series["ar1_transient"] = ar1(rng, 2000, 0.9) + 5.0 * np.exp(-t / 60.0)
    # Independent normal samples.
    series["white_noise"] = rng.standard_normal(1500)
    # Strongly correlated AR(1), phi = 0.99, offset so the mean is far from zero.
    series["strongly_correlated"] = ar1(rng, 3000, 0.99) * 0.01 - 3.7
    # A short AR(1) series (edge of the lag loop).
    series["short"] = ar1(rng, 12, 0.5)
    # Noise followed by a constant tail: pymbar counts Neff = 1 where the tail has zero variance.
    tail = np.concatenate([rng.standard_normal(150) + 2.0, np.full(50, 2.0)])
    series["noise_then_constant"] = tail
    # A constant series: pymbar raises ParameterError for g and returns (0, 1, 1) from detection.
    series["constant"] = np.full(40, -5.25)
    return series


def detect_float64(A_t, fast=True, nskip=1):
    """pymbar 4.0.3 detect_equilibration loop, but with float64 g_t / Neff_t (see module doc)."""
    T = A_t.size
    if A_t.std() == 0.0:
        return 0, 1.0, 1.0
    g_t = np.ones([T - 1], np.float64)
    Neff_t = np.ones([T - 1], np.float64)
    for t in range(0, T - 1, nskip):
        try:
            g_t[t] = statistical_inefficiency(A_t[t:T], fast=fast)
        except ParameterError:
            g_t[t] = T - t + 1
        Neff_t[t] = (T - t + 1) / g_t[t]
    t = int(Neff_t.argmax())
    return t, float(g_t[t]), float(Neff_t.max())


def g_or_none(x, fast):
    try:
        return float(statistical_inefficiency(x, fast=fast))
    except ParameterError:
        return None


def main():
    os.makedirs(DATA, exist_ok=True)
    out = {
        "source": "pymbar.timeseries (pymbar %s), numpy %s" % (pymbar.__version__, np.__version__),
        "pymbar_version": pymbar.__version__,
        "note": "detect.* is pymbar's own output (float32 g and Neff); detect_float64.* is pymbar's "
                "detect_equilibration loop re-run with float64 arrays, not pymbar output.",
        "series": {},
    }
    for name, x in make_series().items():
        path = os.path.join(DATA, "series_%s.csv" % name)
        with open(path, "w") as f:
            f.write("# synthetic test series '%s' from scripts/reference/pymbar_equilibration.py (invented data)\n" % name)
            for v in x:
                f.write("%s\n" % repr(float(v)))
        # Read back what was written so pymbar sees exactly the file's numbers.
        xs = np.array([float(l) for l in open(path) if not l.startswith("#")])
        assert np.array_equal(xs, x)
        entry = {
            "file": "series_%s.csv" % name,
            "n": int(xs.size),
            "g": g_or_none(xs, False),
            "g_fast": g_or_none(xs, True),
            "detect": [],
            "detect_float64": [],
        }
        for nskip in (1, 3, 50):
            t, g, neff = detect_equilibration(xs, fast=True, nskip=nskip)
            entry["detect"].append({"nskip": nskip, "start": int(t), "g": float(g), "neff": float(neff)})
            t, g, neff = detect_float64(xs, fast=True, nskip=nskip)
            entry["detect_float64"].append({"nskip": nskip, "start": t, "g": g, "neff": neff})
        out["series"][name] = entry
    with open(os.path.join(DATA, "pymbar_reference.json"), "w") as f:
        json.dump(out, f, indent=1, sort_keys=True)
        f.write("\n")
    print(json.dumps(out, indent=1, sort_keys=True))


if __name__ == "__main__":
    sys.exit(main())
