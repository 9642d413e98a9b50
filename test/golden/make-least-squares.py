"""Reference values for test/core/least-squares.test.ts, from SciPy and NumPy (general-purpose libraries).

Run: python3 -m venv venv && venv/bin/pip install scipy numpy && venv/bin/python test/golden/make-least-squares.py
Writes test/golden/least-squares.json. The data are pseudo-random (a fixed seed); nothing here is flight data.
"""
import json
import numpy as np
import scipy
from scipy import stats

rng = np.random.default_rng(20261202)
cases = []
for n, a, b, sd in [(5, 0.03, 0.05, 0.002), (40, 0.032, 0.047, 0.001), (200, -3.0, 12.5, 4.0), (31, 1e4, -2.0, 50.0)]:
    x = np.sort(rng.uniform(0.1, 1.2, n))
    y = a + b * x + rng.normal(0, sd, n)
    r = stats.linregress(x, y)
    t = stats.t.ppf(0.975, n - 2)
    cases.append({
        "kind": "line",
        "x": x.tolist(), "y": y.tolist(),
        "intercept": r.intercept, "intercept_se": r.intercept_stderr,
        "slope": r.slope, "slope_se": r.stderr,
        "r2": r.rvalue ** 2,
        "slope_ci95": [r.slope - t * r.stderr, r.slope + t * r.stderr],
        "intercept_ci95": [r.intercept - t * r.intercept_stderr, r.intercept + t * r.intercept_stderr],
    })
for n, s, sd in [(12, 0.9, 0.5), (60, 1.1, 2.0)]:
    x = rng.uniform(5, 20, n)
    y = s * x + rng.normal(0, sd, n)
    # Through the origin: numpy.linalg.lstsq on a one-column design matrix; covariance s²·(XᵀX)⁻¹.
    X = x.reshape(-1, 1)
    coef, res, _, _ = np.linalg.lstsq(X, y, rcond=None)
    dof = n - 1
    s2 = float(res[0]) / dof
    se = float(np.sqrt(s2 / float((X.T @ X)[0, 0])))
    t = stats.t.ppf(0.975, dof)
    cases.append({"kind": "scale", "x": x.tolist(), "y": y.tolist(), "scale": float(coef[0]), "scale_se": se,
                  "scale_ci95": [float(coef[0]) - t * se, float(coef[0]) + t * se]})
quantiles = [{"p": p, "dof": d, "t": float(stats.t.ppf(p, d))}
             for d in [1, 2, 3, 5, 10, 29, 30, 100, 1000] for p in [0.975, 0.95, 0.5, 0.025, 0.9995]]
json.dump({"generator": f"scipy {scipy.__version__}, numpy {np.__version__}", "cases": cases, "quantiles": quantiles},
          open("test/golden/least-squares.json", "w"), indent=1)
