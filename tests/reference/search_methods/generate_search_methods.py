#!/usr/bin/env python3
"""Reference periodograms for the folding, entropy, multi-harmonic and box searches.

Library versions (pinned in tests/reference/requirements.txt): numpy 2.4.6, astropy 8.0.2.

- Phase dispersion (Stellingwerf 1978, ApJ 224, 953, eqs. 1-3; from memory), coded here:
  theta = s^2 / sigma^2, s^2 = sum_j (n_j - 1) s_j^2 / (sum_j n_j - M) over the M phase
  bins holding >= 2 points, sigma^2 the sample variance of all values; phase =
  frac((t - t_first) f), 10 equal bins, one cover. Reported as 1 - theta.
- Conditional entropy (Graham et al. 2013, MNRAS 434, 2629, eq. 1; from memory), coded here:
  values scaled to [0, 1] by their range, 10 phase x 5 value bins,
  H_c = sum_ij p_ij ln(p_j / p_ij), p_j the phase bin's probability. Reported as ln 5 - H_c.
- Multi-harmonic periodogram (Schwarzenberg-Czerny 1996, ApJ 460, L107): at each frequency
  the weighted linear least-squares fit (numpy.linalg.lstsq on the sqrt(w)-scaled design
  matrix) of a constant + 3 harmonics; power = (chi2_0 - chi2) / chi2_0, chi2_0 about the
  weighted mean. Written independently of skyclock's normal equations.
- Box search: astropy 8.0.2 `astropy.timeseries.BoxLeastSquares` (objective "likelihood",
  with dy) on a box-shaped invented transit light curve: its best period, duration, depth,
  depth uncertainty and log likelihood.

All light curves are invented (seeded); times in days.

    python tests/reference/search_methods/generate_search_methods.py   (writes search_methods.json here)
"""
import json
import math
import os
import sys

import numpy as np
import astropy
from astropy.timeseries import BoxLeastSquares

rng = np.random.default_rng(1978_224)

# Light curve 1: a non-sinusoidal invented variable (period 2.345 d), gappy sampling.
n = 320
nights = np.sort(rng.choice(np.arange(70), size=40, replace=False)).astype(float)
t = np.sort(np.concatenate([night + 0.1 + 0.35 * rng.uniform(size=8) for night in nights]))[:n]
P = 2.345
x = 2.0 * math.pi * (t - t[0]) / P
dy = 0.01 + 0.02 * rng.uniform(size=t.size)
y = 12.0 + 0.3 * np.sin(x) + 0.15 * np.sin(2 * x + 0.7) + 0.07 * np.sin(3 * x + 2.1) + dy * rng.normal(size=t.size)

f_start, f_step, f_len = 0.05, 0.0007, 1500
freqs = f_start + f_step * np.arange(f_len)


def pdm(t, y, f, nbins=10):
    var = np.sum((y - y.mean()) ** 2) / (len(y) - 1)
    xx = (t - t[0]) * f
    b = np.minimum(np.floor((xx - np.floor(xx)) * nbins).astype(int), nbins - 1)
    num, dof = 0.0, 0
    for j in range(nbins):
        v = y[b == j]
        if len(v) > 1:
            num += np.sum((v - v.mean()) ** 2)
            dof += len(v) - 1
    return 1.0 - (num / dof) / var


def entropy(t, y, f, nphase=10, nvalue=5):
    scaled = (y - y.min()) / (y.max() - y.min())
    vb = np.minimum((scaled * nvalue).astype(int), nvalue - 1)
    xx = (t - t[0]) * f
    pb = np.minimum(np.floor((xx - np.floor(xx)) * nphase).astype(int), nphase - 1)
    hist = np.zeros((nphase, nvalue))
    np.add.at(hist, (pb, vb), 1.0)
    p = hist / len(y)
    pj = p.sum(axis=1)
    h = 0.0
    for i in range(nphase):
        for j in range(nvalue):
            if p[i, j] > 0:
                h += p[i, j] * math.log(pj[i] / p[i, j])
    return math.log(nvalue) - h


def multiharmonic(t, y, w, f, k=3):
    mean = np.sum(w * y) / np.sum(w)
    chi0 = np.sum(w * (y - mean) ** 2)
    ph = 2.0 * math.pi * f * (t - t[0])
    cols = [np.ones_like(t)]
    for h in range(1, k + 1):
        cols += [np.cos(h * ph), np.sin(h * ph)]
    a = np.stack(cols, axis=1) * np.sqrt(w)[:, None]
    coef, *_ = np.linalg.lstsq(a, y * np.sqrt(w), rcond=None)
    r = y * np.sqrt(w) - a @ coef
    return (chi0 - np.dot(r, r)) / chi0


# Centring the values first (as a search would) changes nothing but rounding; keep the
# plain values here.
w = 1.0 / dy**2
pdm_power = [pdm(t, y, f) for f in freqs]
ce_power = [entropy(t, y, f) for f in freqs]
mh_power = [multiharmonic(t, y, w, f) for f in freqs]

# Light curve 2: an invented transiting system (flux), box dip of depth 0.004, duration
# 0.12 d, period 3.1416 d, 2000 points over 90 days.
tb = np.sort(rng.uniform(0.0, 90.0, 2000))
Pb, dur, depth, t_mid = 3.1416, 0.12, 0.004, 1.234
phase = ((tb - t_mid) / Pb + 0.5) % 1.0 - 0.5
dyb = np.full(tb.size, 0.002)
yb = 1.0 - depth * (np.abs(phase * Pb) < dur / 2) + dyb * rng.normal(size=tb.size)
durations = [0.06, 0.09, 0.12, 0.16]
bls_freqs = 0.2 + 0.00005 * np.arange(12000)  # 0.2 ... 0.8 per day
model = BoxLeastSquares(tb, yb, dy=dyb)
res = model.power(1.0 / bls_freqs, durations, objective="likelihood", oversample=20)
i = int(np.argmax(res.power))

out = {
    "source": f"generate_search_methods.py; numpy {np.__version__}, astropy {astropy.__version__}",
    "time_d": t.tolist(), "value": y.tolist(), "error": dy.tolist(),
    "grid_start_per_day": f_start, "grid_step_per_day": f_step, "grid_len": f_len,
    "true_period_d": P,
    "phase_dispersion_power": pdm_power, "conditional_entropy_power": ce_power,
    "multiharmonic3_power": mh_power,
    "box": {
        "time_d": tb.tolist(), "flux": yb.tolist(), "error": dyb.tolist(), "durations_d": durations,
        "grid_start_per_day": 0.2, "grid_step_per_day": 0.00005, "grid_len": 12000,
        "true_period_d": Pb, "true_duration_d": dur, "true_depth": depth,
        "astropy_best_period_d": float(res.period[i]), "astropy_best_duration_d": float(res.duration[i]),
        "astropy_best_depth": float(res.depth[i]), "astropy_best_depth_err": float(res.depth_err[i]),
        "astropy_best_transit_time_d": float(res.transit_time[i]),
        "astropy_best_log_likelihood": float(res.log_likelihood[i]),
    },
}
path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "search_methods.json")
with open(path, "w") as fh:
    json.dump(out, fh, indent=0)
    fh.write("\n")
print(f"box: astropy best period {res.period[i]:.5f} d, depth {res.depth[i]:.5f} ± {res.depth_err[i]:.5f}, "
      f"duration {res.duration[i]}, log L {res.log_likelihood[i]:.2f}", file=sys.stderr)
