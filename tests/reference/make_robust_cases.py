#!/usr/bin/env python3
"""Writes tests/reference/robust_cases.json: robust location and spread, and straight-line fits
with their standard errors, computed by numpy, scipy and statsmodels on fixed series, for
sumpbook's physics::stats and health::baseline to be checked against.

- median: numpy.median; scaled MAD: scipy.stats.median_abs_deviation(x, scale="normal")
  (1.4826 * MAD, Hampel's consistency constant for the normal distribution).
- straight line y = a + b*x by ordinary least squares: statsmodels.api.OLS(y, add_constant(x)).fit()
  params (a, b), bse (standard errors of a and b), sqrt(scale) (the residual standard deviation),
  and the standard error of the fitted mean at a chosen x0 (get_prediction(...).se_mean).

Run from the repository root:  python3 tests/reference/make_robust_cases.py
Needs:  pip install numpy scipy statsmodels
"""
import json
import pathlib

import numpy as np
import scipy
import statsmodels
import statsmodels.api as sm
from scipy import stats

OUT = pathlib.Path(__file__).resolve().parent / "robust_cases.json"

# Fixed series: inputs only, not measurements.
ROBUST_SERIES = [
    {"name": "one_gross_reading", "x": [4.02, 3.97, 4.05, 40.1, 3.99, 4.01]},
    {"name": "odd_count", "x": [20.5, 21.3, 19.8, 22.0, 20.9, 21.1, 3.46]},
    {"name": "identical", "x": [12.0, 12.0, 12.0, 12.0]},
    {"name": "two_values", "x": [1.5, 2.5]},
    {"name": "skewed", "x": [0.8, 1.1, 0.9, 1.6, 2.9, 1.0, 1.2, 0.7, 1.3]},
]

# Effective flow (L/min) against p/nu (bar per cSt) of a pump: Q = D - G * p/nu + scatter.
FIT_SERIES = [
    {"name": "two_job_pressures", "x0": 3.0,
     "x": [2.17, 2.21, 3.91, 3.88, 2.19, 3.95, 2.23, 3.86, 2.20, 3.93],
     "y": [39.12, 38.71, 37.64, 37.98, 39.03, 37.40, 38.84, 37.83, 39.31, 37.55]},
    {"name": "seasons_only", "x0": 2.5,
     "x": [1.74, 1.86, 2.02, 2.31, 2.55, 2.79, 3.02, 3.11, 2.96, 2.70, 2.38, 2.05],
     "y": [62.4, 62.1, 62.3, 61.6, 61.9, 61.2, 60.8, 61.3, 61.0, 61.5, 61.7, 62.2]},
    {"name": "no_spread_to_speak_of", "x0": 2.0,
     "x": [2.00, 2.01, 1.99, 2.02, 2.00],
     "y": [45.1, 44.6, 45.3, 44.9, 45.0]},
]


def robust_case(c):
    x = np.asarray(c["x"], float)
    return dict(c, median=float(np.median(x)),
                mad_sigma=float(stats.median_abs_deviation(x, scale="normal")))


def fit_case(c):
    x = np.asarray(c["x"], float)
    y = np.asarray(c["y"], float)
    r = sm.OLS(y, sm.add_constant(x)).fit()
    pred = r.get_prediction(np.array([[1.0, c["x0"]]]))
    return dict(c, intercept=float(r.params[0]), slope=float(r.params[1]),
                intercept_se=float(r.bse[0]), slope_se=float(r.bse[1]),
                residual_sd=float(np.sqrt(r.scale)), se_mean_at_x0=float(pred.se_mean[0]))


def main() -> None:
    doc = {
        "source": f"numpy {np.__version__}, scipy {scipy.__version__}, statsmodels {statsmodels.__version__}; "
                  "written by tests/reference/make_robust_cases.py, do not edit by hand",
        "robust": [robust_case(c) for c in ROBUST_SERIES],
        "fit": [fit_case(c) for c in FIT_SERIES],
    }
    OUT.write_text(json.dumps(doc, indent=1) + "\n")
    print(f"wrote {OUT}")


if __name__ == "__main__":
    main()
