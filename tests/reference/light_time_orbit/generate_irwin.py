#!/usr/bin/env python3
"""Reference light-time delays of an eclipsing pair in a triple, written independently.

Library versions (pinned in tests/reference/requirements.txt): numpy 2.4.6, scipy 1.17.1.

Formula, coded here from Irwin (1952, ApJ 116, 211, eq. 1):

    tau = (a12 sin i / c) * [ (1 - e^2) / (1 + e cos nu) * sin(nu + omega) + e sin omega ]

with the true anomaly nu from the eccentric anomaly E by
tan(nu/2) = sqrt((1+e)/(1-e)) tan(E/2), and E from Kepler's equation M = E - e sin E solved
by bracketing root search (scipy.optimize.brentq, xtol 1e-15, rtol 8.9e-16) - a different solver from
skyclock's. M = M0 + 2 pi t / P3, t in days since the reference epoch.

Mass function f(M3) = (a12 sin i [au])^3 / (P3 [yr])^2 (Kepler's third law in solar units,
common practice), a12 sin i [au] = (a12 sin i / c) [s] / 499.004784 s (1 au / c, IAU 2012 B2
au and SI c); year = 365.25 d.

Writes (invented systems only):
  irwin_delays.csv   - tau at seeded instants for 12 orbits, e = 0 ... 0.9
  irwin_timings.csv  - an invented eclipsing binary (linear ephemeris + one companion) timed
                       160 times over 40 years with seeded Gaussian errors, for a fit test;
                       its true parameters are in irwin_system.csv

    python tests/reference/light_time_orbit/generate_irwin.py
"""
import csv
import math
import os

import numpy as np
import scipy
from scipy.optimize import brentq


def eccentric_anomaly(m, e):
    m = math.remainder(m, 2.0 * math.pi)  # (-pi, pi]
    if e == 0.0:
        return m
    return brentq(lambda x: x - e * math.sin(x) - m, -math.pi, math.pi, xtol=1e-15, rtol=8.9e-16, maxiter=200)


def irwin(a, e, omega, m):
    ea = eccentric_anomaly(m, e)
    nu = 2.0 * math.atan2(math.sqrt(1.0 + e) * math.sin(ea / 2.0), math.sqrt(1.0 - e) * math.cos(ea / 2.0))
    return a * ((1.0 - e * e) / (1.0 + e * math.cos(nu)) * math.sin(nu + omega) + e * math.sin(omega))


here = os.path.dirname(os.path.abspath(__file__))
rng = np.random.default_rng(1952_116)

rows = []
for orbit, e in enumerate([0.0, 0.05, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.85, 0.9]):
    a = float(rng.uniform(0.001, 0.02))      # a12 sin i / c, days
    p3 = float(rng.uniform(500.0, 20000.0))  # days
    omega = float(rng.uniform(0.0, 2.0 * math.pi))
    m0 = float(rng.uniform(0.0, 2.0 * math.pi))
    for _ in range(25):
        t = float(rng.uniform(-2.0 * p3, 2.0 * p3))
        m = m0 + 2.0 * math.pi * t / p3
        rows.append([orbit, repr(a), repr(p3), repr(e), repr(omega), repr(m0), repr(t), repr(irwin(a, e, omega, m))])
with open(os.path.join(here, "irwin_delays.csv"), "w", newline="") as fh:
    w = csv.writer(fh, lineterminator="\n")
    w.writerow(["orbit", "projected_light_time_d", "companion_period_d", "eccentricity", "omega_rad",
                "mean_anomaly_at_epoch_rad", "t_d", "delay_d"])
    w.writerows(rows)

# One invented system for the fit: epoch BJD_TDB 2445000.3, P = 0.6512345 d.
EPOCH, PERIOD = 2445000.3, 0.6512345
A, P3, E, OMEGA, M0 = 0.0062, 5400.0, 0.42, 2.2, 1.1
timings = []
used = set()
while len(timings) < 160:
    year = len(timings) // 4
    day = year * 365.25 + rng.uniform(0.0, 150.0)
    cycle = round(day / PERIOD)
    if cycle in used:
        continue
    used.add(cycle)
    sigma = 0.0015 if year < 15 else 0.0003
    t_lin = cycle * PERIOD
    tau = irwin(A, E, OMEGA, M0 + 2.0 * math.pi * t_lin / P3)
    noise = float(rng.normal()) * sigma
    timings.append([cycle, repr(EPOCH + t_lin + tau + noise), repr(sigma), repr(tau), repr(noise)])
with open(os.path.join(here, "irwin_timings.csv"), "w", newline="") as fh:
    w = csv.writer(fh, lineterminator="\n")
    w.writerow(["cycle", "bjd_tdb", "error_d", "light_time_d", "noise_d"])
    w.writerows(timings)

a_au = A * 86400.0 / 499.004784
mass_function = a_au**3 / (P3 / 365.25) ** 2
with open(os.path.join(here, "irwin_system.csv"), "w", newline="") as fh:
    w = csv.writer(fh, lineterminator="\n")
    w.writerow(["epoch_bjd_tdb", "period_d", "projected_light_time_s", "companion_period_d", "eccentricity",
                "periastron_argument_deg", "mean_anomaly_at_epoch_rad", "semi_amplitude_s", "mass_function_msun"])
    w.writerow([repr(EPOCH), repr(PERIOD), repr(A * 86400.0), repr(P3), repr(E), repr(math.degrees(OMEGA)),
                repr(M0), repr(A * 86400.0 * math.sqrt(1.0 - E * E * math.cos(OMEGA) ** 2)), repr(mass_function)])
print(f"wrote {len(rows)} delays and {len(timings)} timings (numpy {np.__version__}, scipy {scipy.__version__})")
