"""The survey cascade from Python (``survey_batch(method="cascade")``) gives, bit for bit,
the table the command line's default writes — class, variability flag, model, period and
every evidence column — on an invented field (tests/invented_field.py; invented stars)."""

import numpy as np
import pandas as pd

import skyclock
from invented_field import invented_field


def test_cascade_matches_the_command_line(cli, tmp_path):
    field = invented_field(sources=6, seed=14)
    path = tmp_path / "field.parquet"
    field.to_parquet(path)
    out = tmp_path / "classes.parquet"
    summary = cli("survey-batch", "--input", path, "--time-column", "time", "--value-column", "mag",
                  "--error-column", "mag_err", "--max-freq-per-day", "5", "--peaks", "2",
                  "--false-alarm-level", "0.01", "--output", out)
    result = skyclock.survey_batch(pd.read_parquet(path), table_name=str(path), time_column="time",
                                   value_column="mag", error_column="mag_err", max_freq_per_day=5.0, peaks=2,
                                   method="cascade", false_alarm_level=0.01)
    written = pd.read_parquet(out)
    for c in ["class", "variable", "model", "period_d", "field_false_alarm_probability", "bic_box",
              "box_depth", "decision_note"]:
        assert c in result.sources.columns, c
    for c in written.columns:
        a, b = result.sources[c], written[c]
        if b.dtype.kind == "f":
            pd.testing.assert_series_equal(a.astype(float), b.astype(float), check_names=False, check_exact=True)
        else:
            assert list(a.astype(str)) == list(b.astype(str)), c
    assert result.to_dict()["sources"] == summary["summary"]["sources"]
    # every searched source gets a class; the variable ones a period near the invented one
    searched = result.sources[result.sources["status"] == "searched"]
    assert searched["class"].notna().all()
    counts = result.to_dict()["class_counts"]
    assert sum(counts.values()) == len(searched)
    truth = field.groupby("source")["period_true_d"].first()
    variable = searched[searched["variable"].astype(bool)]
    assert len(variable) >= 4
    ratio = variable["period_d"].to_numpy() / truth[variable["source_id"]].to_numpy()
    assert np.all(np.min(np.abs(ratio[:, None] / np.array([0.5, 1.0, 2.0]) - 1.0), axis=1) < 1e-2), ratio


def test_cascade_refuses_a_bad_false_alarm_level():
    field = invented_field(sources=2, seed=3)
    try:
        skyclock.survey_batch(field, time_column="time", value_column="mag", method="cascade", false_alarm_level=2.0)
    except skyclock.SkyclockError as e:
        assert "false_alarm_level" in str(e)
    else:
        raise AssertionError("a false-alarm level of 2 was accepted")
