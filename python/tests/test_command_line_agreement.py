"""The bindings agree bit for bit with the command line: the same inputs through
`skyclock <command> --json` and through the Python function give identical typed results
(every float compared exactly) and identical tables (read back from Parquet, which keeps
every bit). Data: the invented demo scenario in datasets/ (datasets/README.md)."""

import numpy as np
import pandas as pd
import pandas.testing as pdt
import pytest

import skyclock
from conftest import DATASETS

SITES = DATASETS / "kx_inventa_sites.toml"
MINIMA = DATASETS / "kx_inventa_minima.csv"
PHOTOMETRY = DATASETS / "kx_inventa_photometry.csv"
PULSAR = DATASETS / "veyra_beacon.toml"
TOAS = DATASETS / "veyra_beacon_radio_toas.csv"
START_MODEL = DATASETS / "veyra_beacon_start_model.toml"
RIDGE = "Ridge Hollow Observatory"


def exact_frame(python: pd.DataFrame, command_line: pd.DataFrame, columns):
    for c in columns:
        a, b = python[c].to_numpy(), command_line[c].to_numpy()
        if a.dtype.kind == "f" or b.dtype.kind == "f":
            np.testing.assert_array_equal(a.astype(float), b.astype(float), err_msg=f"column {c}")
        else:
            assert list(map(str, a)) == list(map(str, b)), f"column {c}"


def test_barycentre_mixed_clocks_and_sites(cli, tmp_path):
    out = tmp_path / "minima_bjd.parquet"
    summary = cli(
        "barycentre", "--input", MINIMA, "--time-column", "time", "--clock-column", "clock",
        "--sites-file", SITES, "--site-column", "site", "--source-file", SITES, "--output", out,
    )
    table = pd.read_csv(MINIMA, dtype=str)
    result = skyclock.barycentre(
        table["time"], clocks=table["clock"], site_names=table["site"], sites_file=SITES, source_file=SITES
    )
    assert result.to_dict() == summary
    written = pd.read_parquet(out)
    added = ["bjd_tdb", "bjd_tdb_jd1", "bjd_tdb_jd2", "observer_tdb", "clock_to_tt_s", "einstein_delay_s",
             "roemer_delay_s", "curvature_delay_s", "shapiro_sun_delay_s", "shapiro_planets_delay_s",
             "heliocentric_removed_s", "total_correction_s", "input_clock"]
    exact_frame(result.table, written, added)
    out = tmp_path / "exact.parquet"
    summary = cli(
        "barycentre", "--input", MINIMA, "--time-column", "time", "--clock-column", "clock",
        "--sites-file", SITES, "--site-column", "site", "--source-file", SITES, "--exact-per-row", "--output", out,
    )
    exact = skyclock.barycentre(table["time"], clocks=table["clock"], site_names=table["site"], sites_file=SITES,
                                source_file=SITES, exact_per_row=True)
    assert exact.to_dict() == summary
    exact_frame(exact.table, pd.read_parquet(out), added)


def test_convert_and_observer_times(cli):
    summary = cli("convert-time", "2460000.25", "2451545.0", "--format", "jd", "--scale", "utc",
                  "--site-coordinates=-105.1,39.4,2150")
    result = skyclock.convert_times(["2460000.25", "2451545.0"], "utc", format="jd", site=(-105.1, 39.4, 2150))
    assert result.to_dict() == summary
    assert list(result.table["input"]) == ["2460000.25", "2451545.0"]
    summary = cli("observer-time", "2461010.5+0.4321", "--ra", "05:12:33.2", "--dec", "+21:07:44",
                  "--site-coordinates=-105.1,39.4,2150", "--to-scale", "utc")
    result = skyclock.observer_times([2461010.5], jd2=[0.4321], ra="05:12:33.2", dec="+21:07:44",
                                     site=(-105.1, 39.4, 2150), to_scale="utc")
    # The command line keeps the text it was given; the instants and readings are the same.
    assert result.to_dict()["readings"] == summary["readings"]
    assert {k: v for k, v in result.to_dict().items() if k != "readings"} == \
        {k: v for k, v in summary.items() if k != "readings"}


def photometry():
    return pd.read_csv(PHOTOMETRY, dtype={"time": str})


PLACE = dict(sites_file=SITES, site=RIDGE, source_file=SITES)


def test_period_search_with_spectrum(cli, tmp_path):
    out = tmp_path / "spectrum.parquet"
    summary = cli(
        "find-periods", "--input", PHOTOMETRY, "--time-column", "time", "--value-column", "mag",
        "--error-column", "mag_err", "--clock", "jd_utc", "--sites-file", SITES, "--site", RIDGE,
        "--source-file", SITES, "--method", "harmonics", "--harmonics", "8", "--max-freq-per-day", "4",
        "--peaks", "3", "--output", out,
    )
    lc = photometry()
    result = skyclock.search_periods(lc["time"], lc["mag"], lc["mag_err"], clock="jd_utc", method="harmonics",
                                     harmonics=8, max_freq_per_day=4, peaks=3, **PLACE)
    assert result.to_dict() == summary
    exact_frame(result.spectrum, pd.read_parquet(out), ["freq_per_day", "period_d", "power"])


@pytest.mark.parametrize("method", ["sinusoid", "classical-sinusoid", "phase-dispersion", "conditional-entropy", "box"])
def test_every_search_method(cli, method):
    summary = cli(
        "find-periods", "--input", PHOTOMETRY, "--time-column", "time", "--value-column", "mag",
        "--error-column", "mag_err", "--clock", "jd_utc", "--sites-file", SITES, "--site", RIDGE,
        "--source-file", SITES, "--method", method, "--max-freq-per-day", "3", "--peaks", "2",
        "--kernel", "exact", "--durations-d", "0.05,0.1",
    )
    lc = photometry()
    result = skyclock.search_periods(lc["time"], lc["mag"], lc["mag_err"], clock="jd_utc", method=method,
                                     max_freq_per_day=3, peaks=2, kernel="exact", durations_d=(0.05, 0.1), **PLACE)
    assert result.to_dict() == summary


def test_fold_and_frequencies(cli, tmp_path):
    points, binned = tmp_path / "folded.parquet", tmp_path / "bins.parquet"
    common = ["--input", PHOTOMETRY, "--time-column", "time", "--value-column", "mag", "--error-column", "mag_err",
              "--clock", "jd_utc", "--sites-file", SITES, "--site", RIDGE, "--source-file", SITES]
    summary = cli("fold-curve", *common, "--period-d", "0.83712345", "--epoch-bjd-tdb", "2459000.34567890",
                  "--bins", "40", "--output", points, "--binned-output", binned)
    lc = photometry()
    result = skyclock.fold(lc["time"], lc["mag"], lc["mag_err"], period_d=0.83712345, epoch_bjd_tdb="2459000.34567890",
                           bins=40, clock="jd_utc", **PLACE)
    assert result.to_dict() == summary
    exact_frame(result.points, pd.read_parquet(points), ["input_row", "phase", "days_since_epoch", "value", "error"])
    exact_frame(result.bins, pd.read_parquet(binned), ["phase_center", "value", "error", "count"])

    summary = cli("extract-frequencies", *common, "--max-freq-per-day", "6", "--max-frequencies", "4")
    result = skyclock.extract_frequencies(lc["time"], lc["mag"], lc["mag_err"], max_freq_per_day=6, max_frequencies=4,
                                          clock="jd_utc", **PLACE)
    assert result.to_dict() == summary
    assert len(result.frequencies) == len(summary["frequencies"])


def test_oc_analysis(cli, tmp_path):
    out = tmp_path / "oc.parquet"
    summary = cli(
        "timing-residuals", "--input", MINIMA, "--time-column", "time", "--clock-column", "clock",
        "--error-column", "error_d", "--kind-column", "kind", "--origin-column", "observer",
        "--sites-file", SITES, "--site-column", "site", "--source-file", SITES,
        "--epoch-bjd-tdb", "2459000.34567890", "--period-d", "0.83712345", "--period-sigma-d", "2e-7",
        "--models", "linear,quadratic,quadratic+light-time", "--binary-mass-msun", "2.3", "--output", out,
    )
    t = pd.read_csv(MINIMA, dtype=str)
    result = skyclock.analyse_timings(
        t["time"], t["error_d"].astype(float), clocks=t["clock"], kinds=t["kind"], origins=t["observer"],
        site_names=t["site"], sites_file=SITES, source_file=SITES, epoch_bjd_tdb="2459000.34567890",
        period_d=0.83712345, period_sigma_d=2e-7, models=["linear", "quadratic", "quadratic+light-time"],
        binary_mass_msun=2.3,
    )
    assert result.to_dict() == summary
    written = pd.read_parquet(out)
    exact_frame(result.oc, written, list(written.columns))


def test_pulsar_timing_fit(cli, tmp_path):
    summary = cli(
        "fit-timing", "--input", TOAS, "--time-column", "time", "--clock", "mjd_utc", "--sites-file", PULSAR,
        "--site", "Harrow Moss Radio Array", "--source-file", PULSAR, "--model", START_MODEL,
        "--output", tmp_path / "res.csv", "--model-output", tmp_path / "fitted.toml",
    )
    t = pd.read_csv(TOAS, dtype={"time": str})
    result = skyclock.fit_pulsar_timing(
        t["time"], t["error_us"], START_MODEL, freq_mhz=t["freq_mhz"], instrument=t["instrument"], clock="mjd_utc",
        sites_file=PULSAR, site="Harrow Moss Radio Array", source_file=PULSAR,
    )
    assert result.to_dict() == summary
    assert result.fitted_model_toml == (tmp_path / "fitted.toml").read_text()
    written = pd.read_csv(tmp_path / "res.csv")
    np.testing.assert_allclose(result.residuals["residual_us"], written["residual_us"], rtol=0, atol=5e-7)


def test_times_of_minimum(cli, tmp_path):
    summary = cli(
        "time-events", "--input", PHOTOMETRY, "--time-column", "time", "--value-column", "mag",
        "--error-column", "mag_err", "--clock", "jd_utc", "--sites-file", SITES, "--site", RIDGE,
        "--source-file", SITES, "--epoch-bjd-tdb", "2459000.34567890", "--period-d", "0.83712345",
        "--event-kind", "primary", "--half-width-phase", "0.09", "--output", tmp_path / "minima.parquet",
    )
    lc = photometry()
    result = skyclock.time_events(lc["time"], lc["mag"], lc["mag_err"], epoch_bjd_tdb="2459000.34567890",
                                  period_d=0.83712345, half_width_phase=0.09, clock="jd_utc", **PLACE)
    assert result.to_dict() == summary
    written = pd.read_parquet(tmp_path / "minima.parquet")
    assert len(written) > 0
    exact_frame(result.timed, written, list(written.columns))


def test_predictions_from_the_fitted_analysis(cli, tmp_path):
    oc_summary = tmp_path / "oc.json"
    cli(
        "timing-residuals", "--input", MINIMA, "--time-column", "time", "--clock-column", "clock",
        "--error-column", "error_d", "--kind-column", "kind", "--sites-file", SITES, "--site-column", "site",
        "--source-file", SITES, "--epoch-bjd-tdb", "2459000.34567890", "--period-d", "0.83712345",
        "--models", "linear,quadratic+light-time", "--output", tmp_path / "oc.csv", "--summary", oc_summary,
    )
    # Fixed dates: the same verdict on any day of the year.
    window = ["--from", "2027-01-10T00:00:00", "--until", "2027-01-24T00:00:00"]
    summary = cli("predict-events", "--ephemeris-summary", oc_summary, "--summary-model", "quadratic+light-time",
                  *window, "--sites-file", SITES, "--site", RIDGE, "--source-file", SITES, "--kinds", "primary,secondary",
                  "--output", tmp_path / "events.parquet")
    t = pd.read_csv(MINIMA, dtype=str)
    analysis = skyclock.analyse_timings(
        t["time"], t["error_d"].astype(float), clocks=t["clock"], kinds=t["kind"], site_names=t["site"],
        sites_file=SITES, source_file=SITES, epoch_bjd_tdb="2459000.34567890", period_d=0.83712345,
        models=["linear", "quadratic+light-time"],
    )
    result = skyclock.predict_events(analysis, model="quadratic+light-time", from_utc="2027-01-10T00:00:00",
                                     until_utc="2027-01-24T00:00:00", kinds=["primary", "secondary"], **PLACE)
    got = result.to_dict()
    # The command line names the summary file it read the ephemeris from; all else is equal.
    assert got["ephemeris"].pop("origin") == "quadratic+light-time model of the analysis given"
    summary["ephemeris"].pop("origin")
    assert got == summary
    written = pd.read_parquet(tmp_path / "events.parquet")
    assert len(written) > 10
    exact_frame(result.events, written, list(written.columns))


def fitted_pulsar_model(tmp_path):
    t = pd.read_csv(TOAS, dtype={"time": str})
    fit = skyclock.fit_pulsar_timing(
        t["time"], t["error_us"], START_MODEL, freq_mhz=t["freq_mhz"], instrument=t["instrument"], clock="mjd_utc",
        sites_file=PULSAR, site="Harrow Moss Radio Array", source_file=PULSAR,
    )
    path = tmp_path / "fitted.toml"
    path.write_text(fit.fitted_model_toml)
    return path


def test_pulse_profile_and_pulsation_search(cli, tmp_path):
    model = fitted_pulsar_model(tmp_path)
    events = DATASETS / "veyra_beacon_xray_events.csv"
    summary = cli("pulse-profile", "--input", events, "--time-column", "time", "--clock", "bmjd_tdb",
                  "--source-file", PULSAR, "--model", model, "--bins", "32", "--harmonics", "3",
                  "--output", tmp_path / "profile.csv")
    times = pd.read_csv(events, dtype=str)["time"]
    result = skyclock.pulse_profile(times, model, bins=32, harmonics=3, clock="bmjd_tdb", source_file=PULSAR)
    assert result.to_dict() == summary
    assert len(result.profile) == 32

    spin = [line for line in model.read_text().splitlines() if line.strip().startswith("freq_hz")]
    freq = float(spin[0].split("=")[1])
    args = ["--min-freq-hz", repr(freq - 2e-4), "--max-freq-hz", repr(freq + 2e-4)]
    summary = cli("search-pulsations", "--input", events, "--time-column", "time", "--clock", "bmjd_tdb",
                  "--source-file", PULSAR, *args, "--output", tmp_path / "z2.csv")
    found = skyclock.search_pulsations(times, min_freq_hz=freq - 2e-4, max_freq_hz=freq + 2e-4, clock="bmjd_tdb",
                                       source_file=PULSAR)
    assert found.to_dict() == summary
    # The command line writes the grid as text with 6 decimals (z2) and 12 (frequency).
    written = pd.read_csv(tmp_path / "z2.csv")
    np.testing.assert_allclose(found.grid["z2"], written["z2"], rtol=0, atol=5.1e-7)
    np.testing.assert_allclose(found.grid["freq_hz"], written["freq_hz"], rtol=0, atol=5.1e-13)


def test_arrival_times_from_events(cli, tmp_path):
    model = fitted_pulsar_model(tmp_path)
    events = DATASETS / "veyra_beacon_xray_events.csv"
    template = tmp_path / "template.json"
    cli("pulse-profile", "--input", events, "--time-column", "time", "--clock", "bmjd_tdb", "--source-file", PULSAR,
        "--model", model, "--bins", "32", "--harmonics", "3", "--output", tmp_path / "profile.csv",
        "--template-output", template)
    summary = cli("event-arrival-times", "--input", events, "--time-column", "time", "--clock", "bmjd_tdb",
                  "--source-file", PULSAR, "--model", model, "--template", template, "--segment-photons", "1500",
                  "--output", tmp_path / "toas.csv")
    times = pd.read_csv(events, dtype=str)["time"]
    profile = skyclock.pulse_profile(times, model, bins=32, harmonics=3, clock="bmjd_tdb", source_file=PULSAR)
    result = skyclock.event_arrival_times(times, model, profile, segment_photons=1500, clock="bmjd_tdb",
                                          source_file=PULSAR)
    assert result.to_dict() == summary
    from_file = skyclock.event_arrival_times(times, model, template, segment_photons=1500, clock="bmjd_tdb",
                                             source_file=PULSAR)
    assert from_file.to_dict() == summary
