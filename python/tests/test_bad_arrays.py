"""Bad arrays raise clear exceptions naming the argument and the row (counted from 1, as
in a table); arrays of other dtypes and strides are accepted and give the same result as
contiguous float64. Data: invented (synthetic) light curves."""

import numpy as np
import pytest

import skyclock
from skyclock import SkyclockError


def light_curve(n=200, seed=11):
    rng = np.random.default_rng(seed)
    t = np.sort(2460200.0 + 30.0 * rng.random(n))
    y = 10.0 + 0.1 * np.sin(2 * np.pi * 1.7 * t) + 0.01 * rng.standard_normal(n)
    return t, y, np.full(n, 0.01)


def test_nan_time_names_row_and_argument():
    t, y, e = light_curve()
    t[4] = np.nan
    with pytest.raises(SkyclockError, match=r"row 5, column 'times'"):
        skyclock.search_periods(t, y, e)
    with pytest.raises(SkyclockError, match=r"row 5, column 'times'"):
        skyclock.barycentre(t, "jd_utc", ra=10.0, dec=20.0)


def test_wrong_length():
    t, y, e = light_curve()
    with pytest.raises(SkyclockError, match=r"'values' has 199 entries but the times have 200"):
        skyclock.search_periods(t, y[:-1], e)
    with pytest.raises(SkyclockError, match=r"'errors_d' has 3 entries"):
        skyclock.analyse_timings(t, [0.001] * 3, epoch_bjd_tdb=t[0], period_d=1.0)


def test_empty_arrays():
    with pytest.raises(SkyclockError, match="no usable time"):
        skyclock.search_periods([], [])
    with pytest.raises(SkyclockError):
        skyclock.analyse_timings([], [], epoch_bjd_tdb=2460000.0, period_d=1.0)


def test_two_dimensional_and_non_numeric():
    t, y, e = light_curve()
    with pytest.raises(SkyclockError, match="one-dimensional"):
        skyclock.search_periods(t, np.vstack([y, y]))
    with pytest.raises(SkyclockError, match="'values' must hold numbers"):
        skyclock.search_periods(t, np.array(["a"] * t.size, dtype=object))


def test_error_message_is_the_library_message():
    t, y, e = light_curve()
    with pytest.raises(SkyclockError, match="clock label"):
        skyclock.search_periods(t, y, e, clock="julian")
    with pytest.raises(TypeError, match="unknown keyword"):
        skyclock.search_periods(t, y, e, max_frequency=3)


def test_other_dtypes_and_strides_give_the_same_result():
    t, y, e = light_curve()
    reference = skyclock.search_periods(t, y, e, max_freq_per_day=4).to_dict()
    wide = np.empty((t.size, 2))
    wide[:, 0] = y
    strided = wide[:, 0]  # a non-contiguous view
    assert not strided.flags["C_CONTIGUOUS"]
    assert skyclock.search_periods(t, strided, e, max_freq_per_day=4).to_dict() == reference
    assert skyclock.search_periods(t, y.tolist(), list(e), max_freq_per_day=4).to_dict() == reference
    # float32 and int inputs are converted to float64 first (values differ by the rounding).
    r32 = skyclock.search_periods(t, y.astype(np.float32), e.astype(np.float32), max_freq_per_day=4).to_dict()
    assert r32["result"]["peaks"][0]["freq_per_day"] == pytest.approx(reference["result"]["peaks"][0]["freq_per_day"], rel=1e-6)
    ints = skyclock.search_periods(t, np.round(y * 1000).astype(np.int64), max_freq_per_day=4)
    assert ints.to_dict()["result"]["points"] == t.size


def test_two_part_times_keep_every_digit():
    whole, frac = np.full(3, 2460000.5), np.array([0.123456789012345, 0.2, 0.3])
    r = skyclock.barycentre(whole, "bjd_tdb", jd2=frac, ra=10.0, dec=20.0)
    np.testing.assert_array_equal(r.table["bjd_tdb_jd1"] + r.table["bjd_tdb_jd2"], whole + frac)
    assert r.table["bjd_tdb"][0].startswith("2460000.6234567890123")


def test_times_far_from_the_modern_era_raise_a_warning():
    # BMJD 900000 is the year 4322 (proleptic Gregorian calendar, common practice): read,
    # with a UserWarning naming the label and the years; modern times give none.
    t, y, e = light_curve()
    with pytest.warns(UserWarning, match=r"read as bmjd_tdb lie in the years 4322"):
        skyclock.search_periods(t - 2460200.0 + 900000.0, y, e, clock="bmjd_tdb", max_freq_per_day=5.0)
    import warnings

    with warnings.catch_warnings():
        warnings.simplefilter("error")
        skyclock.search_periods(t, y, e, max_freq_per_day=5.0)
    # JDs under an MJD label are refused with the label to use.
    with pytest.raises(SkyclockError, match=r"use the clock label 'bjd_tdb'"):
        skyclock.search_periods(t, y, e, clock="bmjd_tdb", max_freq_per_day=5.0)


def test_survey_batch_warns_once_for_a_field_far_from_the_modern_era():
    # Two invented sources at BMJD 900000 on (the year 4322): searched, one UserWarning for
    # the field naming the label and the years; the same field at BMJD 60100 gives none.
    import warnings

    import pandas as pd

    i = np.arange(80)
    t = np.tile(i * 0.173, 2)
    field = pd.DataFrame(
        {
            "source": ["Alder-1"] * 80 + ["Birch-2"] * 80,
            "time": t,
            "mag": 12.0 + 0.2 * np.sin(2 * np.pi * t / 0.61),
        }
    )
    far = field.assign(time=field["time"] + 900000.0)
    with pytest.warns(UserWarning, match=r"read as bmjd_tdb lie in the years 4322") as caught:
        skyclock.survey_batch(far, value_column="mag", clock="bmjd_tdb", max_freq_per_day=5.0)
    assert sum("lie in the years" in str(w.message) for w in caught) == 1
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        skyclock.survey_batch(field.assign(time=field["time"] + 60100.0), value_column="mag", clock="bmjd_tdb",
                              max_freq_per_day=5.0)
