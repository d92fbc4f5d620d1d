#!/usr/bin/env python3
"""Writes tests/reference/stats_cases.json: trend statistics computed by numpy, scipy and pandas
on fixed series, for sumpbook's physics::stats to be checked against.

- linear trend: scipy.stats.linregress (slope, intercept, stderr of the slope), t = slope/stderr;
  the crossing of a limit along the fitted line and along slope +/- 2 stderr through the centroid.
- EWMA: pandas Series.ewm(alpha=lambda, adjust=False).mean() over [baseline mean] + series, which
  starts the EWMA at the baseline mean; limits mu0 +/- L*sigma*sqrt(lambda/(2-lambda)*(1-(1-lambda)^(2i)))
  with numpy (Montgomery, Introduction to Statistical Quality Control, EWMA chart).
- median of the last n: numpy.median.
- the standard error of a step ahead from the latest reading, y_n + step * slope, every reading
  with the same scatter sigma: sigma * |c| with c = e_n + step * (the slope's row of numpy's
  pseudo-inverse of the design matrix [1, x]), the variance of a linear combination of the
  readings (the covariance of y_n with the slope included).

Run from the repository root:  python3 tests/reference/make_stats_cases.py
Needs:  pip install numpy scipy pandas
"""
import json
import pathlib

import numpy as np
import pandas as pd
import scipy
from scipy import stats

OUT = pathlib.Path(__file__).resolve().parent / "stats_cases.json"

# Fixed series (x in weeks, y in the indicator's unit). Not measurements: inputs only.
TREND_SERIES = [
    {"name": "rising_flow_loss", "x": list(range(12)),
     "y": [0.4, 1.1, 0.9, 1.8, 2.6, 2.2, 3.1, 3.9, 3.5, 4.6, 5.2, 4.9], "limit": 8.0},
    {"name": "falling_flow", "x": [0, 1, 2, 3.5, 4, 5, 6, 7.5, 8, 9, 10, 11],
     "y": [48.1, 47.9, 47.6, 47.7, 47.0, 46.9, 46.4, 46.6, 45.8, 45.9, 45.2, 45.3], "limit": 44.0},
    {"name": "noise_only", "x": list(range(10)),
     "y": [20.1, 19.7, 20.4, 19.9, 20.2, 19.6, 20.3, 20.0, 19.8, 20.2], "limit": 25.0},
    {"name": "short", "x": [0, 2, 3, 7],
     "y": [10.0, 10.8, 11.1, 12.9], "limit": 15.0},
]

EWMA_SERIES = [
    {"name": "shift_up", "mean": 10.0, "sigma": 1.0, "lambda": 0.2, "L": 3.0,
     "x": [10.2, 9.6, 10.4, 9.9, 10.8, 11.3, 11.9, 11.5, 12.2, 12.8, 12.1, 13.0]},
    {"name": "shift_down", "mean": 47.5, "sigma": 0.6, "lambda": 0.2, "L": 3.0,
     "x": [47.4, 47.9, 47.2, 46.8, 46.5, 46.9, 46.1, 45.8, 46.0, 45.5]},
    {"name": "engine_default_ramp", "mean": 100.0, "sigma": 2.5, "lambda": 0.25, "L": 3.0,
     "x": [99.1, 100.6, 98.8, 99.4, 97.9, 97.2, 96.0, 95.1, 93.6, 92.0]},
    {"name": "other_params", "mean": 0.0, "sigma": 2.0, "lambda": 0.1, "L": 2.7,
     "x": [0.5, -1.2, 2.3, 1.8, 3.1, 2.2, 4.0, 3.3]},
]

MEDIAN_SERIES = [
    {"x": [3.0, 9.0, 4.0, 8.0, 1.0], "n": 3},
    {"x": [3.0, 9.0, 4.0, 8.0, 1.0, 7.0], "n": 4},
    {"x": [5.0, 2.0], "n": 3},
]


def trend_case(c):
    x, y = np.asarray(c["x"], float), np.asarray(c["y"], float)
    r = stats.linregress(x, y)
    t = r.slope / r.stderr
    xm, ym = x.mean(), y.mean()
    out = {"name": c["name"], "x": c["x"], "y": c["y"], "limit": c["limit"],
           "slope": r.slope, "intercept": r.intercept, "slope_se": r.stderr, "t": t}
    if abs(t) >= 2.0:
        out["crossing"] = xm + (c["limit"] - ym) / r.slope
        steep = r.slope + np.sign(r.slope) * 2 * r.stderr
        shallow = r.slope - np.sign(r.slope) * 2 * r.stderr
        out["crossing_earliest"] = xm + (c["limit"] - ym) / steep
        out["crossing_latest"] = xm + (c["limit"] - ym) / shallow
    return out


def ewma_case(c):
    lam, mu, sig, L = c["lambda"], c["mean"], c["sigma"], c["L"]
    z = pd.Series([mu] + c["x"]).ewm(alpha=lam, adjust=False).mean().to_numpy()[1:]
    i = np.arange(1, len(c["x"]) + 1)
    half = L * sig * np.sqrt(lam / (2 - lam) * (1 - (1 - lam) ** (2 * i)))
    return dict(c, z=z.tolist(), lower=(mu - half).tolist(), upper=(mu + half).tolist())


AHEAD_SERIES = [
    {"x": [0.0, 28.0, 56.0], "step": 28.0, "sigma": 1.0},
    {"x": [0.0, 10.0, 20.0], "step": 10.0, "sigma": 40.0},
    {"x": [0.0, 21.0, 63.0], "step": 30.0, "sigma": 0.1},
    {"x": [3.0, 5.0, 6.0, 11.0], "step": 2.5, "sigma": 2.0},
]


def ahead_case(c):
    x = np.asarray(c["x"], float)
    design = np.column_stack([np.ones_like(x), x])
    slope_row = np.linalg.pinv(design)[1]
    comb = c["step"] * slope_row
    comb[-1] += 1.0
    return dict(c, se=float(c["sigma"] * np.linalg.norm(comb)))


def main() -> None:
    doc = {
        "source": f"numpy {np.__version__}, scipy {scipy.__version__}, pandas {pd.__version__}; "
                  "written by tests/reference/make_stats_cases.py, do not edit by hand",
        "trend": [trend_case(c) for c in TREND_SERIES],
        "ewma": [ewma_case(c) for c in EWMA_SERIES],
        "median": [dict(c, median=float(np.median(c["x"][-c["n"]:]))) for c in MEDIAN_SERIES],
        "ahead": [ahead_case(c) for c in AHEAD_SERIES],
    }
    OUT.write_text(json.dumps(doc, indent=1) + "\n", encoding="utf-8")
    print(f"wrote {OUT}")


if __name__ == "__main__":
    main()
