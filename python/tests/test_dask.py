"""Survey batches on Dask: a LocalCluster with two worker processes gives exactly the
single-process result, and the Parquet table's row numbers, for an invented field
(tests/invented_field.py) split over several row groups."""

import pandas as pd
import pandas.testing as pdt

import skyclock
from skyclock.distributed import survey_batch_on_dask
from invented_field import invented_field

KEYWORDS = dict(time_column="time", value_column="mag", error_column="mag_err", max_freq_per_day=5.0, peaks=2)


def test_two_workers_give_the_single_process_result(tmp_path, monkeypatch):
    monkeypatch.setenv("DASK_TEMPORARY_DIRECTORY", str(tmp_path / "dask"))
    field = invented_field(sources=24)
    path = tmp_path / "field.parquet"
    field.to_parquet(path, row_group_size=700)
    single = skyclock.survey_batch(pd.read_parquet(path), table_name=str(path), **KEYWORDS)
    sources, summary = survey_batch_on_dask(path, n_workers=2, partitions=5, **KEYWORDS)
    pdt.assert_frame_equal(sources, single.sources, check_exact=True)
    assert summary["sources"] == single.to_dict()["sources"] == 25
    assert summary["skipped"] == 1 and (single.sources["status"] == "skipped").sum() == 1
    assert summary["first_skipped"] == single.first_skipped


def test_single_process_matches_the_command_line(cli, tmp_path):
    field = invented_field(sources=12, seed=5)
    path = tmp_path / "field.parquet"
    field.to_parquet(path, row_group_size=500)
    out = tmp_path / "periods.parquet"
    # The Python batch runs one method (sinusoid by default); the command line's default is the
    # per-source cascade, so the method is named.
    summary = cli("survey-batch", "--input", path, "--time-column", "time", "--value-column", "mag",
                  "--error-column", "mag_err", "--method", "sinusoid", "--max-freq-per-day", "5", "--peaks", "2",
                  "--output", out)
    result = skyclock.survey_batch(pd.read_parquet(path), table_name=str(path), **KEYWORDS)
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
                                   dec_column="dec_deg", site=(-105.123, 39.456, 2150), **KEYWORDS)
    written = pd.read_parquet(out)
    for c in ["period_d_1", "power_1", "false_alarm_probability_1", "baseline_d", "time_reference_bjd_tdb"]:
        pd.testing.assert_series_equal(result.sources[c].astype(float), written[c].astype(float), check_names=False,
                                       check_exact=True)
    assert list(result.sources["status"]) == list(written["status"])
