#!/usr/bin/env python3
"""Generate reference values for skyclock's time-scale layer.

Writes, next to this script:
  tai_minus_utc.csv  TAI-UTC from erfa.dat, cross-checked against the IERS
                     Leap_Second.dat shipped in astropy-iers-data
  tdb_minus_tt.csv   TDB-TT from erfa.dtdb (geocentric and topocentric)
  scales.csv         UTC -> TAI, TT, TDB, TCB (astropy Time) and GPS (TAI - 19 s)
  calendar.csv       calendar date/time <-> two-part JD via erfa.dtf2d / erfa.d2dtf

Deterministic: fixed seeds, no network.  Run with the reference virtual
environment described in README.md:
    python tests/reference/generate_time_references.py
"""
import csv
import os
import warnings

import numpy as np
import erfa
import erfa.version

HERE = os.path.dirname(os.path.abspath(__file__))
SECONDS_PER_DAY = 86400.0


def r(x):
    """Shortest repr that round-trips an IEEE double (<= 17 significant digits)."""
    return repr(float(x))


def write_csv(name, header, rows):
    path = os.path.join(HERE, name)
    with open(path, "w", newline="") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(header)
        w.writerows(rows)
    print(f"wrote {name}: {len(rows)} rows")


# ---------------------------------------------------------------------------
# 1. TAI - UTC
# ---------------------------------------------------------------------------
def iers_leap_second_table():
    """Parse the IERS Leap_Second.dat carried by astropy-iers-data.

    Returns a list of (mjd, tai_minus_utc_s)."""
    import astropy_iers_data
    path = os.path.join(os.path.dirname(astropy_iers_data.__file__), "data", "Leap_Second.dat")
    out = []
    with open(path) as fh:
        for line in fh:
            if line.startswith("#") or not line.strip():
                continue
            mjd, _d, _m, _y, dat = line.split()
            out.append((float(mjd), int(dat)))
    return out


def iers_value(table, mjd):
    val = None
    for m, d in table:
        if mjd >= m:
            val = d
    return val


def tai_minus_utc():
    # erfa's built-in table (not modified: astropy is not imported yet).
    steps = erfa.leap_seconds.get()
    iers_tab = iers_leap_second_table()
    rows = []
    seen = set()

    def add(y, m, d, fd, kind):
        key = (y, m, d, fd)
        if y < 1960 or key in seen:   # erfa.dat is undefined before 1960
            return
        seen.add(key)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            dat = erfa.dat(y, m, d, fd)
        djm0, djm = erfa.cal2jd(y, m, d)
        mjd = djm + fd
        regime = "rate_formula_1960_1971" if y < 1972 else "integer_step"
        iers = ""
        if regime == "integer_step":
            iv = iers_value(iers_tab, mjd)
            assert iv is not None and float(iv) == float(dat), (y, m, d, dat, iv)
            iers = str(iv)
        rows.append([y, m, d, r(fd), r(mjd), r(dat), regime, iers, kind])

    for y, m, tai_utc in steps:
        y, m = int(y), int(m)
        # last day of the previous month
        djm0, djm = erfa.cal2jd(y, m, 1)
        py, pm, pd, _ = erfa.jd2cal(djm0, djm - 1.0)
        add(int(py), int(pm), int(pd), 0.5, "day_before_step_noon")
        add(int(py), int(pm), int(pd), 0.99999999, "day_before_step_last_ms")
        add(y, m, 1, 0.0, "first_instant_after_step")
        add(y, m, 1, 0.5, "day_after_step_noon")

    # Instants inside 1960-1971 where the drift (rate) formula applies.
    rng = np.random.default_rng(19601)
    mjd0, _ = erfa.cal2jd(1960, 1, 1)[1], None
    mjd1 = erfa.cal2jd(1971, 12, 31)[1]
    for mjd in np.sort(rng.uniform(mjd0, mjd1, 40)):
        day = np.floor(mjd)
        fd = round(float(mjd - day), 9)
        y, m, d, _ = erfa.jd2cal(2400000.5, day)
        add(int(y), int(m), int(d), fd, "rate_formula_interior")

    # A few recent instants.
    for (y, m, d, fd) in [(2017, 6, 15, 0.25), (2020, 2, 29, 0.75), (2022, 9, 1, 0.0),
                          (2024, 3, 20, 0.123456789), (2025, 7, 4, 0.5), (2026, 1, 1, 0.0)]:
        add(y, m, d, fd, "recent")

    rows.sort(key=lambda row: (float(row[4])))
    write_csv("tai_minus_utc.csv",
              ["utc_year", "utc_month", "utc_day", "utc_day_fraction", "utc_mjd",
               "tai_minus_utc_s", "regime", "iers_leap_second_dat_tai_minus_utc_s", "case"],
              rows)


# ---------------------------------------------------------------------------
# 2. TDB - TT (erfa.dtdb)
# ---------------------------------------------------------------------------
# Invented sites: (name, east longitude deg, geodetic latitude deg, height m)
DTDB_SITES = [
    ("geocentre", None, None, None),
    ("invented_plateau", 23.456, -12.345, 1520.0),
    ("invented_prairie", -101.234, 44.567, 910.0),
    ("invented_tundra", 141.9, 63.21, 35.0),
    ("invented_atoll", -8.76, 0.123, 3.0),
    ("invented_summit", 77.77, -33.33, 4321.0),
]


def tdb_minus_tt():
    rng = np.random.default_rng(20241)
    rows = []
    mjd_lo = erfa.cal2jd(1950, 1, 1)[1]
    mjd_hi = erfa.cal2jd(2100, 1, 1)[1]
    n = 240
    mjds = np.sort(rng.uniform(mjd_lo, mjd_hi, n))
    for i, mjd in enumerate(mjds):
        day = np.floor(mjd)
        jd1 = 2400000.5 + day                    # half-integer JD (0h)
        jd2 = float(mjd - day)                   # fraction of day
        ut = (jd2 - 64.0 / SECONDS_PER_DAY) % 1.0   # approximate UT1 day fraction
        name, lon, lat, h = DTDB_SITES[i % len(DTDB_SITES)]
        if name == "geocentre":
            elong, u_km, v_km = 0.0, 0.0, 0.0
        else:
            xyz = erfa.gd2gc(1, np.radians(lon), np.radians(lat), h)   # WGS84, metres
            elong = np.radians(lon)
            u_km = float(np.hypot(xyz[0], xyz[1]) / 1000.0)
            v_km = float(xyz[2] / 1000.0)
        val = erfa.dtdb(jd1, jd2, ut, elong, u_km, v_km)
        rows.append([name, r(jd1), r(jd2), r(ut), r(elong), r(u_km), r(v_km), r(val)])
    write_csv("tdb_minus_tt.csv",
              ["site_name", "tdb_jd1", "tdb_jd2", "ut1_day_fraction", "east_longitude_rad",
               "distance_from_spin_axis_km", "distance_north_of_equator_km", "tdb_minus_tt_s"],
              rows)


# ---------------------------------------------------------------------------
# 3. Scales via astropy Time
# ---------------------------------------------------------------------------
def scales():
    from astropy.utils import iers
    iers.conf.auto_download = False
    iers.conf.auto_max_age = None
    from astropy.time import Time

    rng = np.random.default_rng(19722030)
    mjd_lo = erfa.cal2jd(1972, 1, 1)[1]
    mjd_hi = erfa.cal2jd(2030, 12, 31)[1]
    utc = []
    for mjd in np.sort(rng.uniform(mjd_lo, mjd_hi, 110)):
        day = np.floor(mjd)
        utc.append((2400000.5 + day, float(mjd - day), "random"))
    # Instants on leap-second days: 23:59:59.5, 23:59:60.5 and 00:00:00.5 next day.
    for (y, m, d) in [(1972, 6, 30), (1989, 12, 31), (2005, 12, 31), (2016, 12, 31)]:
        for (hh, mm, ss) in [(23, 59, 59.5), (23, 59, 60.5)]:
            j1, j2 = erfa.dtf2d("UTC", y, m, d, hh, mm, ss)
            utc.append((j1, j2, "leap_second_day"))
        j1, j2 = erfa.dtf2d("UTC", y, m, d, 0, 0, 0.0)
        j1n, j2n = erfa.dtf2d("UTC", *erfa.jd2cal(j1 + 1.0, 0.0)[:3], 0, 0, 0.5)
        utc.append((j1n, j2n, "after_leap_second"))
    rows = []
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        for j1, j2, case in utc:
            t = Time(j1, j2, format="jd", scale="utc", precision=9)
            tai, tt, tdb, tcb = t.tai, t.tt, t.tdb, t.tcb
            # GPS time scale: TAI - 19 s exactly (common practice; GPS ICD).
            gps_jd1 = tai.jd1
            gps_jd2 = tai.jd2 - 19.0 / SECONDS_PER_DAY
            rows.append([r(j1), r(j2), t.iso, r(tai.jd1), r(tai.jd2), r(tt.jd1), r(tt.jd2),
                         r(tdb.jd1), r(tdb.jd2), r(tcb.jd1), r(tcb.jd2), r(gps_jd1), r(gps_jd2),
                         case])
    write_csv("scales.csv",
              ["utc_jd1", "utc_jd2", "utc_iso", "tai_jd1", "tai_jd2", "tt_jd1", "tt_jd2",
               "tdb_jd1", "tdb_jd2", "tcb_jd1", "tcb_jd2", "gps_jd1", "gps_jd2", "case"],
              rows)


# ---------------------------------------------------------------------------
# 4. Calendar <-> two-part JD
# ---------------------------------------------------------------------------
def calendar():
    rng = np.random.default_rng(36524)
    cases = []
    for scale in ("UTC", "TT"):
        lo = 1960 if scale == "UTC" else 1900
        for _ in range(100):
            y = int(rng.integers(lo, 2100))
            m = int(rng.integers(1, 13))
            d = int(rng.integers(1, 29))
            hh = int(rng.integers(0, 24))
            mi = int(rng.integers(0, 60))
            ss = round(float(rng.uniform(0, 60)), 9)
            cases.append((scale, y, m, d, hh, mi, ss, "random"))
        for (y, m, d, hh, mi, ss) in [(2000, 1, 1, 12, 0, 0.0), (2000, 2, 29, 0, 0, 0.0),
                                      (1999, 12, 31, 23, 59, 59.999999999),
                                      (2024, 12, 31, 23, 59, 59.5), (2100, 3, 1, 0, 0, 0.0)]:
            cases.append((scale, y, m, d, hh, mi, ss, "edge"))
    # Leap-second days (UTC only): 23:59:60.5 and neighbours.
    steps = erfa.leap_seconds.get()
    for y, m, _dat in steps:
        y, m = int(y), int(m)
        if (y, m) <= (1972, 1):
            continue   # 1971-12-31 ended with a fractional (0.107758 s) step, not a leap second
        djm0, djm = erfa.cal2jd(y, m, 1)
        py, pm, pd, _ = erfa.jd2cal(djm0, djm - 1.0)
        for ss in (59.5, 60.5):
            cases.append(("UTC", int(py), int(pm), int(pd), 23, 59, ss, "leap_second_day"))
    rows = []
    for scale, y, m, d, hh, mi, ss, case in cases:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            j1, j2 = erfa.dtf2d(scale, y, m, d, hh, mi, ss)
            by, bm, bd, ihmsf = erfa.d2dtf(scale, 9, j1, j2)
        h_, mi_, s_, f_ = (int(v) for v in ihmsf.tolist()) if hasattr(ihmsf, "tolist") else ihmsf
        rows.append([scale, y, m, d, hh, mi, r(ss), r(j1), r(j2),
                     int(by), int(bm), int(bd), h_, mi_, s_, f_, case])
    write_csv("calendar.csv",
              ["scale", "year", "month", "day", "hour", "minute", "second",
               "jd1", "jd2", "back_year", "back_month", "back_day", "back_hour", "back_minute",
               "back_second", "back_nanosecond", "case"],
              rows)


if __name__ == "__main__":
    print("pyerfa", erfa.__version__, "ERFA", erfa.version.erfa_version,
          "SOFA", erfa.version.sofa_version)
    tai_minus_utc()   # before astropy is imported (astropy may update erfa's leap table)
    tdb_minus_tt()
    calendar()
    scales()
