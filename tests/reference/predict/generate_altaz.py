#!/usr/bin/env python3
"""Reference topocentric altitudes and azimuths for the prediction stage.

Writes altaz.csv next to this script: for an invented site and invented targets at
seeded UTC instants (2024-2026), the altitude and azimuth of the target, the Sun and
the Moon, the Moon-target separation and the Moon's illuminated fraction, all from
astropy (AltAz frame with pressure = 0, i.e. no refraction; built-in ephemeris, which
is ERFA epv00 for the Sun/Earth and ERFA moon98 for the Moon).

UT1 - UTC is set to 0 on every Time (skyclock without an Earth-orientation table
assumes UT1 = UTC), so the comparison tests the geometry, not the UT1 model.
Polar motion comes from astropy's bundled IERS data (<= 0.5 arcsec effect).
astropy is told never to download anything.

    python tests/reference/predict/generate_altaz.py
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
from astropy.coordinates import AltAz, EarthLocation, SkyCoord, get_body

# Invented site "Quarry Hill Station": WGS84 east longitude, latitude, height.
LON_DEG, LAT_DEG, HEIGHT_M = -7.625, 38.418, 740.0
# Invented targets (ICRS, no space motion).
TARGETS = [("invented-A", 71.2500, 17.5000), ("invented-B", 266.4000, 44.1000),
           ("invented-C", 23.9000, -36.7500), ("invented-D", 195.1250, -8.3000),
           ("invented-E", 140.6000, 3.2500)]

rng = np.random.default_rng(20261202)
site = EarthLocation.from_geodetic(LON_DEG * u.deg, LAT_DEG * u.deg, HEIGHT_M * u.m, ellipsoid="WGS84")
start = Time("2024-01-01T00:00:00", scale="utc")
rows = []
for i in range(60):
    t = start + rng.uniform(0.0, 1000.0) * u.day
    t = Time(t.isot, scale="utc", precision=3)
    t.delta_ut1_utc = 0.0
    name, ra, dec = TARGETS[i % len(TARGETS)]
    frame = AltAz(obstime=t, location=site, pressure=0.0 * u.hPa)
    star = SkyCoord(ra=ra * u.deg, dec=dec * u.deg, frame="icrs")
    star_aa = star.transform_to(frame)
    sun = get_body("sun", t, site)
    moon = get_body("moon", t, site)
    sun_aa = sun.transform_to(frame)
    moon_aa = moon.transform_to(frame)
    sep = moon_aa.separation(star_aa).deg
    # Illuminated fraction (1 + cos i)/2 with i the Sun-Moon-Earth phase angle (geocentric).
    sun_g = get_body("sun", t)
    moon_g = get_body("moon", t)
    s = sun_g.cartesian.xyz.to(u.km).value
    m = moon_g.cartesian.xyz.to(u.km).value
    a, b = s - m, -m
    cos_i = np.dot(a, b) / np.linalg.norm(a) / np.linalg.norm(b)
    rows.append([t.isot, name, f"{ra:.4f}", f"{dec:.4f}",
                 f"{star_aa.alt.deg:.6f}", f"{star_aa.az.deg:.6f}",
                 f"{sun_aa.alt.deg:.6f}", f"{sun_aa.az.deg:.6f}",
                 f"{moon_aa.alt.deg:.6f}", f"{moon_aa.az.deg:.6f}",
                 f"{sep:.6f}", f"{(1 + cos_i) / 2:.6f}"])

out = os.path.join(os.path.dirname(os.path.abspath(__file__)), "altaz.csv")
with open(out, "w", newline="") as f:
    w = csv.writer(f)
    w.writerow(["utc_iso", "target", "ra_deg", "dec_deg", "target_altitude_deg", "target_azimuth_deg",
                "sun_altitude_deg", "sun_azimuth_deg", "moon_altitude_deg", "moon_azimuth_deg",
                "moon_target_separation_deg", "moon_illuminated_fraction"])
    w.writerows(rows)
print(f"wrote {len(rows)} rows to {out} with astropy {astropy.__version__}")
