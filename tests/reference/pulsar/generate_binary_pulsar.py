#!/usr/bin/env python3
"""Reference pulse phases of an invented binary pulsar, written independently of skyclock.

Library versions (pinned in tests/reference/requirements.txt): scipy 1.17.1 (constants from
CODATA 2018 and optimize.brentq), numpy 2.4.6.

Model, coded here from the papers:
- Binary delay of Blandford & Teukolsky (1976, ApJ 205, 580, eqs. 2.33-2.36; from memory):
  Roemer + Einstein  x [(cos E - e) sin w + sqrt(1 - e^2) sin E cos w] + gamma sin E,
  E from Kepler's equation E - e sin E = 2 pi (t_e - T0) / Pb (brentq, xtol 1e-15);
  plus the Shapiro delay of Damour & Deruelle (1986, Ann. Inst. H. Poincare 44, 263; from
  memory) -2 r ln[1 - e cos E - s (sin w (cos E - e) + sqrt(1 - e^2) cos w sin E)].
  The delay is evaluated at the emission time t_e, found exactly by root search on
  t_e + Delta(t_e) = t_arrival - Delta_dispersion (brentq, xtol 1e-12 s).
- Dispersion delay K DM / f^2 with K = e^2 / (8 pi^2 eps0 m_e c) in s MHz^2 pc^-1 cm^3,
  from CODATA 2018 (scipy.constants) and the IAU 2015 B2 parsec: printed below and in
  dispersion_constant.csv. Lorimer & Kramer (2005, Handbook of Pulsar Astronomy, eq. 4.7;
  from memory) give 4.148808e3.
- Spin phase phi = phi0 + nu t_e + nudot t_e^2 / 2.

The pulsar, its orbit and the arrival times are invented.

    python tests/reference/pulsar/generate_binary_pulsar.py
"""
import csv
import math
import os

import numpy as np
import scipy
from scipy import constants as k
from scipy.optimize import brentq

PC_M = 3.0856775814913673e16
K_S_MHZ2 = k.e**2 / (8.0 * math.pi**2 * k.epsilon_0 * k.m_e * k.c) * (PC_M * 1e6) / 1e12

K_PUBLISHED = 4.148808e3  # Lorimer & Kramer (2005) eq. 4.7, from memory

MODEL = dict(nu=5.123456789, nudot=-2.5e-14, phi0=0.25, dm=43.21,
             pb_d=1.7654321, x=4.321, e=0.27, w_deg=123.4, t0_s=12345.6, gamma=0.004,
             r=6.2e-6, s=0.93)


def kepler(m, e):
    m = math.remainder(m, 2.0 * math.pi)
    return brentq(lambda x: x - e * math.sin(x) - m, -math.pi, math.pi, xtol=1e-15, rtol=8.9e-16, maxiter=200)


def binary_delay(t_e, p=MODEL):
    e, w = p["e"], math.radians(p["w_deg"])
    ea = kepler(2.0 * math.pi * (t_e - p["t0_s"]) / (p["pb_d"] * 86400.0), e)
    geom = (math.cos(ea) - e) * math.sin(w) + math.sqrt(1.0 - e * e) * math.sin(ea) * math.cos(w)
    roemer = p["x"] * geom
    einstein = p["gamma"] * math.sin(ea)
    shapiro = -2.0 * p["r"] * math.log(1.0 - e * math.cos(ea) - p["s"] * geom)
    return roemer + einstein + shapiro


def phase(t_s, f_mhz, p=MODEL):
    fixed = t_s - K_PUBLISHED * p["dm"] / f_mhz**2
    span = 2.0 * (p["x"] + 1.0)
    t_e = brentq(lambda te: te + binary_delay(te) - fixed, fixed - span, fixed + span, xtol=1e-12, rtol=8.9e-16)
    return p["phi0"] + p["nu"] * t_e + 0.5 * p["nudot"] * t_e * t_e, t_e


here = os.path.dirname(os.path.abspath(__file__))
rng = np.random.default_rng(1976_205)
rows = []
for i in range(200):
    t = float(rng.uniform(-5.0, 5.0) * 86400.0)
    f = float(rng.choice([327.0, 430.0, 820.0, 1400.0, 2300.0]))
    ph, t_e = phase(t, f)
    rows.append([i, repr(t), repr(f), repr(ph), repr(t_e), repr(binary_delay(t_e))])
with open(os.path.join(here, "binary_pulsar_phases.csv"), "w", newline="") as fh:
    w = csv.writer(fh, lineterminator="\n")
    w.writerow(["row", "t_s", "freq_mhz", "phase_cycles", "emission_t_s", "binary_delay_s"])
    w.writerows(rows)
with open(os.path.join(here, "binary_pulsar_model.csv"), "w", newline="") as fh:
    w = csv.writer(fh, lineterminator="\n")
    w.writerow(list(MODEL))
    w.writerow([repr(v) for v in MODEL.values()])
with open(os.path.join(here, "dispersion_constant.csv"), "w", newline="") as fh:
    w = csv.writer(fh, lineterminator="\n")
    w.writerow(["k_s_mhz2_cm3_per_pc", "codata_e_c", "codata_m_e_kg", "codata_epsilon_0_f_per_m", "parsec_m"])
    w.writerow([repr(K_S_MHZ2), repr(k.e), repr(k.m_e), repr(k.epsilon_0), repr(PC_M)])
print(f"K = {K_S_MHZ2!r} s MHz^2 pc^-1 cm^3; wrote {len(rows)} phases (scipy {scipy.__version__}, numpy {np.__version__})")
