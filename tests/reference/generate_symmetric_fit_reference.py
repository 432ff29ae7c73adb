"""Reference centres and covariance errors of symmetric model fits, from scipy.

Invented data: one eclipse-like dip (an invented star, seeded numpy noise). scipy's
`optimize.curve_fit` (Levenberg–Marquardt, MINPACK) fits the same three symmetric models
that `skyclock::minima::symmetric_fit` offers; its T0 and the 1σ error of T0 from the
covariance are written for the Rust test `tests/minima.rs`:
- with the uncertainties as weights and `absolute_sigma=True` (the covariance as is);
- without uncertainties (`sigma=None`, covariance scaled by χ²/dof).

Run: python3 generate_symmetric_fit_reference.py  (scipy 1.17.1, numpy 2.4.6)
Writes symmetric_fit_points.csv and symmetric_fit_reference.csv next to this script.
"""
import os

import numpy as np
from scipy.optimize import curve_fit

here = os.path.dirname(os.path.abspath(__file__))
rng = np.random.default_rng(20261202)
t = np.sort(2.3 + rng.uniform(-0.045, 0.045, 70))
centre, depth, width = 2.30137, 0.45, 0.018
err = 0.004 + 0.004 * rng.uniform(size=t.size)
y = 11.5 + depth * np.exp(-0.5 * ((t - centre) / width) ** 2) + err * rng.normal(size=t.size)

with open(os.path.join(here, "symmetric_fit_points.csv"), "w") as f:
    f.write("time_d,value,error\n")
    for a, b, c in zip(t, y, err):
        f.write(f"{a:.12f},{b:.12f},{c:.12f}\n")
# Fit exactly the numbers the Rust test reads.
t, y, err = np.loadtxt(os.path.join(here, "symmetric_fit_points.csv"), delimiter=",", skiprows=1, unpack=True)


def poly2(x, t0, c0, c2):
    return c0 + c2 * (x - t0) ** 2


def poly4(x, t0, c0, c2, c4):
    u = x - t0
    return c0 + c2 * u**2 + c4 * u**4


def gauss(x, t0, b, d, s):
    return b + d * np.exp(-0.5 * ((x - t0) / s) ** 2)


models = {
    "symmetric-polynomial-2": (poly2, [2.3, 11.95, -800.0]),
    "symmetric-polynomial-4": (poly4, [2.3, 11.95, -800.0, 0.0]),
    "symmetric-gaussian": (gauss, [2.3, 11.5, 0.4, 0.02]),
}
# The polynomials describe only the core of the dip: fit them within ±0.02 d of 2.3.
rows = []
for name, (fun, p0) in models.items():
    sel = np.abs(t - 2.3) <= 0.02 if name.startswith("symmetric-polynomial") else np.ones(t.size, bool)
    for weighted in (True, False):
        kw = dict(sigma=err[sel], absolute_sigma=True) if weighted else {}
        p, cov = curve_fit(fun, t[sel], y[sel], p0=p0, maxfev=20000, xtol=1e-15, ftol=1e-15, gtol=1e-15, **kw)
        rows.append((name, "weighted" if weighted else "unweighted", int(sel.sum()), p[0], np.sqrt(cov[0, 0])))

with open(os.path.join(here, "symmetric_fit_reference.csv"), "w") as f:
    f.write("model,weights,points,centre_d,centre_sigma_d\n")
    for r in rows:
        f.write(f"{r[0]},{r[1]},{r[2]},{r[3]:.15f},{r[4]:.6e}\n")
