"""Survey batches on Dask: a LocalCluster with two worker processes gives exactly the
single-process result, and the Parquet table's row numbers, for an invented field
(tests/invented_field.py) split over several row groups — with the default per-source
cascade, the class, the variability flag and its field false-alarm probability counted
over every source of the field, not those of one partition."""

import numpy as np
import pandas as pd
import pandas.testing as pdt

import skyclock
from skyclock.distributed import survey_batch_on_dask
from invented_field import invented_field

KEYWORDS = dict(time_column="time", value_column="mag", error_column="mag_err", max_freq_per_day=5.0, peaks=2)
SINUSOID = dict(KEYWORDS, method="sinusoid")


def test_two_workers_give_the_single_process_result(tmp_path, monkeypatch):
    monkeypatch.setenv("DASK_TEMPORARY_DIRECTORY", str(tmp_path / "dask"))
    field = invented_field(sources=24)
    path = tmp_path / "field.parquet"
    field.to_parquet(path, row_group_size=700)
    single = skyclock.survey_batch(pd.read_parquet(path), table_name=str(path), **KEYWORDS)
    assert "class" in single.sources.columns, "the default method is the cascade"
    sources, summary = survey_batch_on_dask(path, n_workers=2, partitions=5, **KEYWORDS)
    pdt.assert_frame_equal(sources, single.sources, check_exact=True)
    assert summary["sources"] == single.to_dict()["sources"] == 25
    assert summary["skipped"] == 1 and (single.sources["status"] == "skipped").sum() == 1
    assert summary["first_skipped"] == single.first_skipped
    assert summary["class_counts"] == single.to_dict()["class_counts"]


def test_dask_flags_count_every_source_of_the_field(tmp_path, monkeypatch):
    # Every other invented source made weak (a 2–4 mmag sinusoid in 10 mmag noise), and a
    # field level at which one of them is variable in a part of 5 sources but not in the
    # whole field of 25: the Dask flags must be the whole field's (flags left per partition
    # fail this test).
    monkeypatch.setenv("DASK_TEMPORARY_DIRECTORY", str(tmp_path / "dask"))
    field = invented_field(sources=24, seed=11)
    rng = np.random.default_rng(12)
    for k, name in enumerate(field["source"].unique()[1:-1:2]):
        rows = field["source"] == name
        t = field.loc[rows, "time"].to_numpy()
        period = field.loc[rows, "period_true_d"].to_numpy()[0]
        amp = 0.002 + 0.0002 * k
        field.loc[rows, "mag"] = 14.0 + amp * np.sin(2 * np.pi * t / period) + 0.01 * rng.standard_normal(len(t))
    path = tmp_path / "field.parquet"
    field.to_parquet(path, row_group_size=700)
    table = pd.read_parquet(path)
    single = skyclock.survey_batch(table, table_name=str(path), **KEYWORDS)
    p = single.sources["source_false_alarm_probability"].astype(float).to_numpy()
    weak = np.sort(p[(p > 1e-250) & (p < 1e-3)])
    assert len(weak) > 0, f"the test field needs sources of moderate significance: {p}"
    p0 = weak[len(weak) // 2]

    def in_field(n):  # the test's own reckoning of a field of n sources, 1 − (1 − p)^n
        return -np.expm1(n * np.log1p(-p0))

    level = float(np.sqrt(in_field(5) * in_field(25)))
    whole = skyclock.survey_batch(table, table_name=str(path), false_alarm_level=level, **KEYWORDS)
    names = list(table["source"].unique())
    flagged_in_parts = 0
    for part in range(5):
        rows = np.flatnonzero(table["source"].isin(names[5 * part:5 * part + 5]).to_numpy())
        r = skyclock.survey_batch(table.iloc[rows], table_name=str(path), false_alarm_level=level,
                                  row_numbers=rows + 1, **KEYWORDS)
        assert r.to_dict()["sources"] == 5
        flagged_in_parts += int((r.sources["variable"] == True).sum())  # noqa: E712
    flagged_whole = int((whole.sources["variable"] == True).sum())  # noqa: E712
    assert flagged_in_parts > flagged_whole, (flagged_in_parts, flagged_whole)
    sources, summary = survey_batch_on_dask(path, n_workers=2, partitions=5, false_alarm_level=level, **KEYWORDS)
    pdt.assert_frame_equal(sources, whole.sources, check_exact=True)
    assert summary["class_counts"] == whole.to_dict()["class_counts"]


def test_single_process_matches_the_command_line(cli, tmp_path):
    field = invented_field(sources=12, seed=5)
    path = tmp_path / "field.parquet"
    field.to_parquet(path, row_group_size=500)
    out = tmp_path / "periods.parquet"
    # One search method named on both sides (the default of both is the per-source cascade,
    # compared in test_survey_cascade.py).
    summary = cli("survey-batch", "--input", path, "--time-column", "time", "--value-column", "mag",
                  "--error-column", "mag_err", "--method", "sinusoid", "--max-freq-per-day", "5", "--peaks", "2",
                  "--output", out)
    result = skyclock.survey_batch(pd.read_parquet(path), table_name=str(path), **SINUSOID)
    written = pd.read_parquet(out)
    for c in written.columns:
        a, b = result.sources[c], written[c]
        if b.dtype.kind == "f":
            pd.testing.assert_series_equal(a.astype(float), b.astype(float), check_names=False, check_exact=True)
        else:
            assert list(a.astype(str)) == list(b.astype(str)), c
    assert result.to_dict()["sources"] == summary["summary"]["sources"]
    assert result.to_dict()["searched"] == summary["summary"]["searched"]


def test_survey_in_an_observer_clock_matches_the_command_line(cli, tmp_path):
    # The invented field's times read as JD UTC at an invented site, each source at its own
    # (invented) position: the batch carries them to BJD_TDB per source before the search.
    field = invented_field(sources=6, seed=8)
    field["ra_deg"] = 10.0 + 7.0 * field["source"].astype("category").cat.codes
    field["dec_deg"] = -20.0 + 5.0 * field["source"].astype("category").cat.codes
    path = tmp_path / "field_utc.parquet"
    field.to_parquet(path)
    out = tmp_path / "periods.parquet"
    cli("survey-batch", "--input", path, "--time-column", "time", "--value-column", "mag", "--error-column",
        "mag_err", "--method", "sinusoid", "--clock", "jd_utc", "--ra-column", "ra_deg", "--dec-column", "dec_deg",
        "--site-coordinates=-105.123,39.456,2150", "--max-freq-per-day", "5", "--peaks", "2", "--output", out)
    result = skyclock.survey_batch(pd.read_parquet(path), table_name=str(path), clock="jd_utc", ra_column="ra_deg",
                                   dec_column="dec_deg", site=(-105.123, 39.456, 2150), **SINUSOID)
    written = pd.read_parquet(out)
    for c in ["period_d_1", "power_1", "false_alarm_probability_1", "baseline_d", "time_reference_bjd_tdb"]:
        pd.testing.assert_series_equal(result.sources[c].astype(float), written[c].astype(float), check_names=False,
                                       check_exact=True)
    assert list(result.sources["status"]) == list(written["status"])
