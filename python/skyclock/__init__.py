"""skyclock for Python: timing periodic astronomical sources.

Arrival times from any clock and site to BJD_TDB with every delay term, periodograms with
peaks and false-alarm probabilities, folding, frequency extraction, survey batches, the
O–C analysis of times of minimum, and pulsar timing — computed by the skyclock Rust
library (the same functions the ``skyclock`` command line calls), with numpy arrays in and
pandas DataFrames out. See ``docs/python.md`` in the repository.

Times are given as float JD arrays (optionally a second array ``jd2`` for two-part JDs
that keep every digit) or as text (e.g. read from a table with ``dtype=str``: every digit
kept). Rows in error messages count from 1, as in a file; the input arrays are named by
their keyword (``column 'times'``).

Place keywords (``**place``), shared by every function that needs an observer or a source:
``site`` (a name from ``sites_file``, or ``(east_longitude_deg, latitude_deg, height_m)``),
``sites_file``, ``source_file``, ``ra``, ``dec`` (text ``hh:mm:ss.s`` / ``±dd:mm:ss`` or
decimal degrees), ``proper_motion_ra_mas_per_yr``, ``proper_motion_dec_mas_per_yr``,
``parallax_mas``, ``radial_velocity_km_per_s``, ``position_epoch`` (default ``"J2000.0"``),
``ephemeris_kernel``, ``leap_seconds``, ``earth_orientation`` (files; built-in data
otherwise). Without a site the observer is the geocentre.
"""

from __future__ import annotations

import json
import os
from typing import Any, Iterable, Optional, Sequence

import numpy as np
import pandas as pd

from . import _native
from ._native import SkyclockError
from ._results import Result, frame

__version__ = _native.__version__

__all__ = [
    "SkyclockError",
    "Result",
    "barycentre",
    "convert_times",
    "observer_times",
    "search_periods",
    "fold",
    "extract_frequencies",
    "survey_batch",
    "time_events",
    "analyse_timings",
    "predict_events",
    "fit_pulsar_timing",
    "search_pulsations",
    "pulse_profile",
    "event_arrival_times",
]

_PLACE_KEYS = {
    "site",
    "sites_file",
    "source_file",
    "ra",
    "dec",
    "proper_motion_ra_mas_per_yr",
    "proper_motion_dec_mas_per_yr",
    "parallax_mas",
    "radial_velocity_km_per_s",
    "position_epoch",
    "ephemeris_kernel",
    "leap_seconds",
    "earth_orientation",
}


def _place(place: dict) -> str:
    unknown = sorted(set(place) - _PLACE_KEYS)
    if unknown:
        raise TypeError(f"unknown keyword(s) {', '.join(unknown)}; place keywords are {', '.join(sorted(_PLACE_KEYS))}")
    doc = {}
    for key, value in place.items():
        if value is None:
            continue
        if key in ("ra", "dec"):
            value = value if isinstance(value, str) else repr(float(value))
        elif key == "site":
            value = value if isinstance(value, str) else [float(v) for v in value]
        elif key in ("sites_file", "source_file", "ephemeris_kernel", "leap_seconds", "earth_orientation"):
            value = os.fspath(value)
        elif key != "position_epoch":
            value = float(value)
        doc[key] = value
    return json.dumps(doc)


def _one_dimensional(values: Any, name: str) -> np.ndarray:
    a = np.asarray(values)
    if a.ndim != 1:
        raise SkyclockError(f"'{name}' must be one-dimensional, got an array of shape {a.shape}")
    return a


def _floats(values: Any, name: str) -> np.ndarray:
    """A 1-D array for the native module, which converts any numeric dtype and strides."""
    a = _one_dimensional(values, name)
    if a.dtype.kind not in "biuf":
        try:
            a = a.astype(np.float64)
        except (TypeError, ValueError) as e:
            raise SkyclockError(f"'{name}' must hold numbers: {e}") from None
    return a


def _texts(values: Any, name: str) -> Optional[list]:
    if values is None:
        return None
    a = _one_dimensional(values, name)
    return [None if (v is None or (isinstance(v, float) and np.isnan(v))) else str(v) for v in a.tolist()]


def _times(times: Any, jd2: Any = None, name: str = "times") -> list:
    """Times as the text the library parses: text kept as given, floats written in their
    shortest round-trip form, two-part JDs as "jd1 jd2"."""
    a = _one_dimensional(times, name)
    if a.dtype.kind in "USO":
        if jd2 is not None:
            raise SkyclockError(f"'{name}' given as text cannot take a second part jd2")
        return [None if v is None else (repr(v) if isinstance(v, float) else str(v)) for v in a.tolist()]
    a = _floats(a, name)
    return _native.times_as_text(a, None if jd2 is None else _floats(jd2, "jd2"), name)


def _epoch_text(value: Any, name: str) -> Optional[str]:
    if value is None:
        return None
    return value if isinstance(value, str) else repr(float(value))


def _light_curve(times, values, errors, jd2, bands):
    return _times(times, jd2), _floats(values, "values"), None if errors is None else _floats(errors, "errors"), _texts(bands, "bands")


# ----------------------------------------------------------------------------------------
# Arrival times


def barycentre(
    times,
    clock: Optional[str] = None,
    *,
    jd2=None,
    clocks=None,
    site_names=None,
    solar_shapiro: bool = True,
    planet_shapiro: bool = False,
    exact_per_row: bool = False,
    **place,
) -> Result:
    """Arrival times to BJD_TDB with every delay term (library ``arrival::barycentre_table``).

    ``times`` in the clock ``clock`` (``jd_utc``, ``mjd_tt``, ``hjd_utc``, ``iso_utc``,
    ``bjd_tdb``…; or one label per row in ``clocks``), observed at ``site`` (or per row at
    ``site_names`` described in ``sites_file``) from ``source``. Accuracy as the library's
    correction (sub-µs with the built-in DE440 pack); dense rows are interpolated between
    exactly corrected nodes (≤ 1 ns from the exact correction) unless ``exact_per_row``.

    Returns a Result (``BarycentreRun``) whose ``table`` has ``bjd_tdb`` (JD text, 14
    decimals), ``bjd_tdb_jd1``/``bjd_tdb_jd2`` (two parts), ``observer_tdb`` and one column
    per delay term in seconds (``einstein_delay_s``, ``roemer_delay_s``, …,
    ``total_correction_s``).
    """
    texts = _times(times, jd2)
    options = json.dumps(
        {
            "clock": clock,
            "solar_shapiro": bool(solar_shapiro),
            "planet_shapiro": bool(planet_shapiro),
            "exact_per_row": bool(exact_per_row),
        }
    )
    data, columns = _native.barycentre(texts, options, _place(place), _texts(clocks, "clocks"), _texts(site_names, "site_names"))
    return Result("BarycentreRun", data, {"table": frame(columns)})


def convert_times(times, scale: str, *, format: str = "jd", to_scale: Optional[str] = None, to_format: Optional[str] = None, **place) -> Result:
    """Single times between scales (utc, tai, tt, tdb, tcb, gps) and formats (jd, mjd,
    reduced-jd, iso) (library ``arrival::convert_times``). Without ``to_scale`` every scale
    is given. TDB includes the site's topocentric term when a site is given.

    Returns a Result (``ConvertTimeResult``) with ``table``: one row per time, the input and
    one text column per scale.
    """
    texts = _times(times) if not isinstance(times, str) else [times]
    if any(t is None for t in texts):
        raise SkyclockError("convert_times: a time is missing (None)")
    options = json.dumps({"format": format, "scale": scale, "to_scale": to_scale, "to_format": to_format})
    data = _native.convert_times(texts, options, _place(place))
    parsed = json.loads(data)
    rows = [{"input": t["input"], **t["scales"]} for t in parsed["times"]]
    return Result("ConvertTimeResult", data, {"table": pd.DataFrame(rows)})


def observer_times(bjd_tdb, *, jd2=None, to_scale: str = "utc", **place) -> Result:
    """BJD_TDB instants carried back to the clock reading (``to_scale``) at which the signal
    reaches the site (library ``arrival::observer_times``; the inverse of ``barycentre``).

    Returns a Result (``ObserverTimes``) with ``table``: ``bjd_tdb``, ``iso`` and ``jd``
    (text, in ``to_scale``) per instant.
    """
    texts = _times(bjd_tdb, jd2, "bjd_tdb")
    if any(t is None for t in texts):
        raise SkyclockError("observer_times: a BJD_TDB is missing (None)")
    data = _native.observer_times(texts, to_scale, _place(place))
    parsed = json.loads(data)
    rows = [{"bjd_tdb": r["bjd_tdb_jd"], "iso": r["iso"], "jd": r["jd"]} for r in parsed["readings"]]
    return Result("ObserverTimes", data, {"table": pd.DataFrame(rows)})


# ----------------------------------------------------------------------------------------
# Light curves


def _search_options(
    method="sinusoid",
    harmonics=3,
    phase_bins=10,
    durations_d=(0.05, 0.1, 0.2),
    brightness="magnitude",
    max_freq_per_day=10.0,
    min_freq_per_day=None,
    oversampling=5.0,
    kernel="auto",
    peaks=5,
    memory_limit_gib=2.0,
    bootstrap_trials=None,
    seed=1,
) -> str:
    return json.dumps(
        {
            "method": method,
            "harmonics": int(harmonics),
            "phase_bins": int(phase_bins),
            "durations_d": [float(d) for d in durations_d],
            "brightness": brightness,
            "max_freq_per_day": float(max_freq_per_day),
            "min_freq_per_day": None if min_freq_per_day is None else float(min_freq_per_day),
            "oversampling": float(oversampling),
            "kernel": kernel,
            "peaks": int(peaks),
            "memory_limit_gib": float(memory_limit_gib),
            "bootstrap_trials": None if bootstrap_trials is None else int(bootstrap_trials),
            "seed": int(seed),
        }
    )


_SEARCH_KEYS = set(_search_options.__code__.co_varnames[: _search_options.__code__.co_argcount])


def _split_search(kwargs: dict):
    search = {k: kwargs.pop(k) for k in list(kwargs) if k in _SEARCH_KEYS}
    return _search_options(**search), kwargs


def search_periods(
    times,
    values,
    errors=None,
    *,
    jd2=None,
    bands=None,
    clock: str = "bjd_tdb",
    clocks=None,
    site_names=None,
    **keywords,
) -> Result:
    """Periodogram of one light curve, its top peaks with least-squares errors,
    false-alarm probabilities and alias notes (library ``survey::search::search_series``).

    Search keywords: ``method`` (``sinusoid`` — generalised Lomb–Scargle, per-band zero
    points with ``bands``; ``classical-sinusoid``; ``harmonics``; ``phase-dispersion``;
    ``conditional-entropy``; ``box``), ``harmonics``, ``phase_bins``, ``durations_d``,
    ``brightness`` (``magnitude``/``flux``), ``max_freq_per_day`` (10), ``min_freq_per_day``
    (1/baseline), ``oversampling`` (5), ``kernel`` (``auto``/``exact``/``fast``), ``peaks``
    (5), ``memory_limit_gib``, ``bootstrap_trials``, ``seed``; and the place keywords when
    ``clock`` is not barycentric. Values that are NaN are dropped and counted
    (``result.result['rows_dropped_nan']``), as the command line drops empty cells.

    Returns a Result (``PeriodSearchReport``) with tables ``spectrum`` (``freq_per_day``,
    ``period_d``, ``power``[, ``amplitude``]) and ``peaks``.
    """
    search, place = _split_search(dict(keywords))
    t, v, e, b = _light_curve(times, values, errors, jd2, bands)
    data, spectrum = _native.search_periods(t, v, search, _place(place), clock, e, b, _texts(clocks, "clocks"), _texts(site_names, "site_names"))
    peaks = pd.json_normalize(json.loads(data)["result"]["peaks"])
    return Result("PeriodSearchReport", data, {"spectrum": frame(spectrum), "peaks": peaks})


def fold(
    times,
    values,
    errors=None,
    *,
    period_d: float,
    epoch_bjd_tdb=None,
    refine_harmonics: Optional[int] = None,
    bins: int = 50,
    bin_statistic: str = "mean",
    jd2=None,
    bands=None,
    clock: str = "bjd_tdb",
    clocks=None,
    site_names=None,
    **place,
) -> Result:
    """Folds a light curve at ``period_d`` days from ``epoch_bjd_tdb`` (default: the first
    time), optionally refining the period with a Fourier series of ``refine_harmonics``
    terms, into ``bins`` phase bins (``mean`` or ``median``) (library
    ``fold::fold_light_curve``).

    Returns a Result (``FoldReport``) with tables ``points`` (``input_row``, ``phase``,
    ``days_since_epoch``, ``value``[, ``error``]) and ``bins`` (``phase_center``, ``value``,
    ``error``, ``count``).
    """
    t, v, e, b = _light_curve(times, values, errors, jd2, bands)
    options = json.dumps(
        {
            "period_d": float(period_d),
            "epoch_bjd_tdb": _epoch_text(epoch_bjd_tdb, "epoch_bjd_tdb"),
            "refine_harmonics": refine_harmonics,
            "bins": int(bins),
            "bin_statistic": bin_statistic,
        }
    )
    data, points, binned = _native.fold_light_curve(t, v, options, _place(place), clock, e, b, _texts(clocks, "clocks"), _texts(site_names, "site_names"))
    return Result("FoldReport", data, {"points": frame(points), "bins": frame(binned)})


def extract_frequencies(
    times,
    values,
    errors=None,
    *,
    max_freq_per_day: float = 50.0,
    oversampling: float = 10.0,
    signal_to_noise_stop: float = 4.0,
    max_frequencies: int = 20,
    noise_box_per_day: float = 2.0,
    kernel: str = "auto",
    detrend_polynomial_degree: Optional[int] = None,
    segment_gap_d: Optional[float] = None,
    jd2=None,
    bands=None,
    clock: str = "bjd_tdb",
    clocks=None,
    site_names=None,
    **place,
) -> Result:
    """Iterative frequency extraction (prewhitening) to an amplitude signal-to-noise limit,
    optionally after removing a polynomial or per-segment zero points (library
    ``frequencies::prewhiten``). Phases are of maximum of A cos(2π(f t − φ)) with t in days
    since ``phase_reference_bjd_tdb``.

    Returns a Result (``FrequencyExtractionResult``) with table ``frequencies``.
    """
    t, v, e, b = _light_curve(times, values, errors, jd2, bands)
    options = json.dumps(
        {
            "max_freq_per_day": float(max_freq_per_day),
            "oversampling": float(oversampling),
            "signal_to_noise_stop": float(signal_to_noise_stop),
            "max_frequencies": int(max_frequencies),
            "noise_box_per_day": float(noise_box_per_day),
            "kernel": kernel,
            "detrend_polynomial_degree": detrend_polynomial_degree,
            "segment_gap_d": None if segment_gap_d is None else float(segment_gap_d),
        }
    )
    data = _native.extract_frequencies(t, v, options, _place(place), clock, e, b, _texts(clocks, "clocks"), _texts(site_names, "site_names"))
    return Result("FrequencyExtractionResult", data, {"frequencies": pd.DataFrame(json.loads(data)["frequencies"])})


# ----------------------------------------------------------------------------------------
# Surveys


def _cell_texts(column: pd.Series) -> list:
    """A table column as the text cells the batch reads (missing → None; floats in their
    shortest round-trip form, as the command line reads them from a file)."""
    out = []
    for v in column.tolist():
        if v is None or (isinstance(v, float) and np.isnan(v)) or v is pd.NA:
            out.append(None)
        elif isinstance(v, float):
            out.append(repr(v))
        else:
            out.append(str(v))
    return out


def survey_batch(
    table,
    *,
    source_column: str = "source",
    time_column: str = "time",
    value_column: str = "value",
    error_column: Optional[str] = None,
    band_column: Optional[str] = None,
    clock: str = "bjd_tdb",
    ra_column: Optional[str] = None,
    dec_column: Optional[str] = None,
    refine_peaks: bool = False,
    batch_points: int = 2_000_000,
    row_numbers=None,
    table_name: str = "input table",
    false_alarm_level: float = 0.01,
    **keywords,
) -> Result:
    """Period search of every source of a survey table (pandas DataFrame or pyarrow
    Table), one row per source (library ``survey::batch::run_batch_with_arrival``). Rows
    of one source must be contiguous. Takes the search keywords of ``search_periods``;
    ``clock`` other than ``bjd_tdb``/``bmjd_tdb`` needs ``ra_column``/``dec_column`` (ICRS
    degrees) and a ``site`` (or the geocentre). ``row_numbers`` (1-based) name the rows in
    messages and ``first_row`` (default 1, 2, …); ``table_name`` names the table.

    Returns a Result (``BatchSummary`` fields with ``times`` and ``first_skipped``) with
    table ``sources``: ``source_id``, ``status``, ``message``, ``first_row``, ``points``,
    ``rows_dropped_nan``, ``baseline_d``, ``time_reference_bjd_tdb`` and per peak k
    ``period_d_k``, ``period_err_d_k``, ``freq_per_day_k``, ``power_k``,
    ``false_alarm_probability_k``, ``log10_false_alarm_probability_k`` (computed in log
    space: its digits survive where the probability underflows), ``amplitude_k``,
    ``alias_note_k``.

    ``method="cascade"`` (the default, as on the command line; name another ``method`` to
    run that one search instead) describes every source by a
    sinusoid, a harmonic series and a box search, takes the best by BIC and gives a class
    at the field false-alarm level ``false_alarm_level`` (library
    ``survey::cascade_table::CascadeTable``): the table then also holds ``class``,
    ``variable``, ``field_false_alarm_probability``, ``model``, ``period_d``, the BIC of
    each model, the box measurements and ``decision_note``, as ``survey-batch`` writes
    them, and the result ``class_counts``. The cascade uses its own box durations (duty
    cycles of the trial period); ``durations_d`` applies to ``method="box"``.
    """
    keywords.setdefault("method", "cascade")
    search, place = _split_search(dict(keywords))
    if not isinstance(table, pd.DataFrame):
        if hasattr(table, "to_pandas"):
            table = table.to_pandas()
        else:
            raise SkyclockError("survey_batch: table must be a pandas DataFrame or a pyarrow Table")

    def column(name: Optional[str], what: str):
        if name is None:
            return None
        if name not in table.columns:
            raise SkyclockError(f"{table_name}: no column '{name}' ({what}); columns: {', '.join(map(str, table.columns))}")
        return _cell_texts(table[name])

    n = len(table)
    rows = np.arange(1, n + 1, dtype=np.int64) if row_numbers is None else np.asarray(row_numbers, dtype=np.int64)
    options = json.dumps(
        {
            "clock": clock,
            "refine_peaks": bool(refine_peaks),
            "batch_points": int(batch_points),
            "table_name": table_name,
            "source_column": source_column,
            "time_column": time_column,
            "value_column": value_column,
            "error_column": error_column,
            "band_column": band_column,
            "ra_column": ra_column,
            "dec_column": dec_column,
            "false_alarm_level": float(false_alarm_level),
        }
    )
    data, columns = _native.survey_batch(
        rows.tolist(),
        column(source_column, "source id"),
        column(time_column, "time"),
        column(value_column, "value"),
        options,
        search,
        _place(place),
        column(error_column, "error"),
        column(band_column, "band"),
        column(ra_column, "right ascension"),
        column(dec_column, "declination"),
    )
    parsed = json.loads(data)
    flat = json.dumps(
        {
            **parsed["summary"],
            "times": parsed["times"],
            "first_skipped": parsed["first_skipped"],
            "class_counts": parsed["class_counts"],
        }
    )
    return Result("BatchSummary", flat, {"sources": frame(columns)})


# ----------------------------------------------------------------------------------------
# Timing


def analyse_timings(
    times,
    errors_d,
    *,
    epoch_bjd_tdb,
    period_d: float,
    period_sigma_d: float = 0.0,
    kinds=None,
    origins=None,
    models: Sequence[str] = ("linear", "quadratic"),
    allow_ambiguous_cycles: bool = False,
    companion_period_range_d=None,
    rescale_per_source: bool = False,
    robust_loss: bool = False,
    robust_tuning_constant: Optional[float] = None,
    bootstrap: int = 0,
    seed: int = 1,
    binary_mass_msun: Optional[float] = None,
    jd2=None,
    clock: Optional[str] = "bjd_tdb",
    clocks=None,
    site_names=None,
    **place,
) -> Result:
    """O–C analysis of times of minimum or maximum (library ``oc::analyse``): cycles
    against the ephemeris ``epoch_bjd_tdb`` + E × ``period_d``, fits of ``models``
    (``linear``, ``quadratic``, ``light-time``, ``quadratic+light-time``, ``two-light-time``,
    ``quadratic+two-light-time``) with 1σ errors ``errors_d`` (days), nested comparisons,
    companions' minimum masses (with ``binary_mass_msun``) and verdicts. ``kinds`` per row:
    ``primary``, ``secondary``, ``maximum``; ``origins``: who measured each time (for
    ``rescale_per_source``). Times in another clock are carried to BJD_TDB first (place
    keywords).

    Returns a Result (``OcAnalysis``) with tables ``oc`` (``row``, ``bjd_tdb``, ``cycle``,
    ``kind``, ``source``, ``error_d``, ``observed_minus_computed_d``, and per model
    ``model_<m>_d``, ``model_sigma_<m>_d``, ``residual_<m>_d``) and ``models``.
    """
    if isinstance(models, str):
        models = [m.strip() for m in models.split(",")]
    options = json.dumps(
        {
            "epoch_bjd_tdb": _epoch_text(epoch_bjd_tdb, "epoch_bjd_tdb"),
            "period_d": float(period_d),
            "period_sigma_d": float(period_sigma_d),
            "models": list(models),
            "allow_ambiguous_cycles": bool(allow_ambiguous_cycles),
            "companion_period_range_d": None if companion_period_range_d is None else [float(x) for x in companion_period_range_d],
            "rescale_per_source": bool(rescale_per_source),
            "robust_loss": bool(robust_loss),
            "robust_tuning_constant": None if robust_tuning_constant is None else float(robust_tuning_constant),
            "bootstrap": int(bootstrap),
            "seed": int(seed),
            "binary_mass_msun": None if binary_mass_msun is None else float(binary_mass_msun),
        }
    )
    if clocks is not None:
        clock = None
    data, columns = _native.analyse_timings(
        _times(times, jd2),
        _floats(errors_d, "errors_d"),
        options,
        _place(place),
        clock,
        _texts(kinds, "kinds"),
        _texts(origins, "origins"),
        _texts(clocks, "clocks"),
        _texts(site_names, "site_names"),
    )
    models_table = pd.json_normalize(json.loads(data)["models"])
    return Result("OcAnalysis", data, {"oc": frame(columns), "models": models_table})


def _model_text(model):
    """(name, TOML text) of a timing model given as a file or as its text."""
    if isinstance(model, os.PathLike) or (isinstance(model, str) and "\n" not in model and os.path.exists(model)):
        name = os.fspath(model)
        with open(name, encoding="utf-8") as f:
            return name, f.read()
    if isinstance(model, str):
        return "model text", model
    raise SkyclockError("model must be a timing-model file or its TOML text")


def fit_pulsar_timing(
    times,
    error_us,
    model,
    *,
    freq_mhz=None,
    instrument=None,
    max_iterations: int = 20,
    jd2=None,
    clock: Optional[str] = None,
    clocks=None,
    site_names=None,
    **place,
) -> Result:
    """Phase-connected fit of a pulsar timing model to arrival times (library
    ``pulsar::timing_fit::fit_timing``). ``model`` is a timing-model file (TOML, see
    docs/pulsar_timing.md) or its text; ``error_us`` the 1σ errors in µs; ``freq_mhz`` and
    ``instrument`` per row as in a timing table; times in ``clock`` (e.g. ``mjd_utc``) at
    ``site`` (place keywords).

    Returns a Result (``TimingSolution``) with table ``residuals``
    (``seconds_after_epoch_tdb``, ``residual_us``, ``residual_cycles``, ``error_us``,
    ``freq_mhz``, ``instrument``, ``orbital_phase`` — NaN without an orbit) and ``fitted_model_toml``.
    """
    name, text = _model_text(model)
    if clocks is not None:
        clock = None
    data, columns, toml = _native.fit_pulsar_timing(
        _times(times, jd2),
        _floats(error_us, "error_us"),
        text,
        name,
        int(max_iterations),
        _place(place),
        clock,
        None if freq_mhz is None else _floats(freq_mhz, "freq_mhz"),
        _texts(instrument, "instrument"),
        _texts(clocks, "clocks"),
        _texts(site_names, "site_names"),
    )
    return Result("TimingSolution", data, {"residuals": frame(columns)}, fitted_model_toml=toml)


def time_events(
    times,
    values,
    errors=None,
    *,
    epoch_bjd_tdb,
    period_d: float,
    event_kind: str = "primary",
    half_width_phase: Optional[float] = None,
    half_width_d: Optional[float] = None,
    method: str = "kwee-van-woerden",
    polynomial_degree: int = 2,
    min_points: int = 12,
    min_points_per_side: int = 3,
    bootstrap: int = 200,
    seed: int = 1,
    brightness: str = "magnitude",
    jd2=None,
    clock: str = "bjd_tdb",
    clocks=None,
    site_names=None,
    **place,
) -> Result:
    """Times of minimum (or maximum, ``event_kind``) of every event of a light curve
    around the ephemeris ``epoch_bjd_tdb`` + E × ``period_d``, within ``half_width_phase``
    (or ``half_width_d``) of each predicted event (library ``minima::time_light_curve``):
    ``kwee-van-woerden`` (Kwee & van Woerden 1956), ``symmetric-polynomial`` (degree 2 or 4)
    or ``symmetric-gaussian`` with ``bootstrap`` resamples. Events with too few points are
    listed with the reason.

    Returns a Result (``EventTimingReport``) with tables ``timed`` and ``skipped``.
    """
    if half_width_phase is None and half_width_d is None:
        raise SkyclockError("give one of half_width_phase and half_width_d")
    t, v, e, _ = _light_curve(times, values, errors, jd2, None)
    options = json.dumps(
        {
            "epoch_bjd_tdb": _epoch_text(epoch_bjd_tdb, "epoch_bjd_tdb"),
            "period_d": float(period_d),
            "event_kind": event_kind,
            "half_width_phase": None if half_width_phase is None else float(half_width_phase),
            "half_width_d": None if half_width_d is None else float(half_width_d),
            "method": method,
            "polynomial_degree": int(polynomial_degree),
            "min_points": int(min_points),
            "min_points_per_side": int(min_points_per_side),
            "bootstrap": int(bootstrap),
            "seed": int(seed),
            "brightness": brightness,
        }
    )
    data, timed, skipped = _native.time_events(t, v, options, _place(place), clock, e, _texts(clocks, "clocks"), _texts(site_names, "site_names"))
    return Result("EventTimingReport", data, {"timed": frame(timed), "skipped": frame(skipped)})


def predict_events(
    ephemeris=None,
    *,
    from_utc: str,
    until_utc: str,
    model: str = "linear",
    epoch_bjd_tdb=None,
    period_d: Optional[float] = None,
    epoch_sigma_d: float = 0.0,
    period_sigma_d: float = 0.0,
    period_change_per_cycle_d: float = 0.0,
    period_change_per_cycle_sigma_d: float = 0.0,
    kinds: Sequence[str] = ("primary",),
    min_target_altitude_deg: float = 30.0,
    max_sun_altitude_deg: float = -12.0,
    min_moon_separation_deg: float = 0.0,
    event_duration_hours: Optional[float] = None,
    sun_caution_deg: Optional[float] = None,
    only_observable: bool = False,
    **place,
) -> Result:
    """Upcoming events between ``from_utc`` and ``until_utc`` (ISO UTC) seen from ``site``
    (library ``predict::forecast``): BJD_TDB with σ propagated from the fit's covariance,
    UTC, target and Sun altitude, twilight, Moon separation and phase, observability, and a
    caution for targets within ``sun_caution_deg`` (default 15°) of the Sun.

    ``ephemeris`` is a Result of ``analyse_timings`` (its ``model``: ``linear``,
    ``quadratic``, ``quadratic+light-time``, … with every fitted term and covariance); or
    give ``epoch_bjd_tdb`` and ``period_d`` (with σ and an optional period change per cycle).

    Returns a Result (``Forecast``) with table ``events``; read ``cautions`` before
    planning an observation.
    """
    if isinstance(kinds, str):
        kinds = [k.strip() for k in kinds.split(",")]
    given = json.dumps(
        {
            "epoch_bjd_tdb": _epoch_text(epoch_bjd_tdb, "epoch_bjd_tdb"),
            "period_d": None if period_d is None else float(period_d),
            "epoch_sigma_d": float(epoch_sigma_d),
            "period_sigma_d": float(period_sigma_d),
            "period_change_per_cycle_d": float(period_change_per_cycle_d),
            "period_change_per_cycle_sigma_d": float(period_change_per_cycle_sigma_d),
            "model": model,
        }
    )
    options = json.dumps(
        {
            "kinds": list(kinds),
            "from_utc": from_utc,
            "until_utc": until_utc,
            "min_target_altitude_deg": float(min_target_altitude_deg),
            "max_sun_altitude_deg": float(max_sun_altitude_deg),
            "min_moon_separation_deg": float(min_moon_separation_deg),
            "event_duration_hours": None if event_duration_hours is None else float(event_duration_hours),
            "sun_caution_deg": float(_native.SUN_CAUTION_DEG if sun_caution_deg is None else sun_caution_deg),
            "only_observable": bool(only_observable),
        }
    )
    analysis = None
    if ephemeris is not None:
        if isinstance(ephemeris, Result):
            analysis = json.dumps(ephemeris.to_dict())
        elif isinstance(ephemeris, dict):
            analysis = json.dumps(ephemeris)
        else:
            raise SkyclockError("predict_events: ephemeris must be the Result of analyse_timings (or its to_dict())")
    data, events = _native.predict_events(given, options, _place(place), analysis)
    return Result("Forecast", data, {"events": frame(events)})


def search_pulsations(
    times,
    *,
    min_freq_hz: float,
    max_freq_hz: float,
    min_freq_deriv_hz_per_s: float = 0.0,
    max_freq_deriv_hz_per_s: float = 0.0,
    oversampling: float = 4.0,
    harmonics: int = 2,
    weights=None,
    jd2=None,
    clock: str = "bjd_tdb",
    **place,
) -> Result:
    """Z²ₙ search (Buccheri et al. 1983) of photon events over frequency (Hz) and its
    derivative (Hz/s), with the trials-corrected false alarm of the best trial (library
    ``pulsar::search::search_pulsations``). ``weights`` in [0, 1] per photon.

    Returns a Result (``PulsationSearch``) with table ``grid`` (``freq_hz``,
    ``freq_deriv_hz_per_s``, ``z2``).
    """
    options = json.dumps(
        {
            "min_freq_hz": float(min_freq_hz),
            "max_freq_hz": float(max_freq_hz),
            "min_freq_deriv_hz_per_s": float(min_freq_deriv_hz_per_s),
            "max_freq_deriv_hz_per_s": float(max_freq_deriv_hz_per_s),
            "oversampling": float(oversampling),
            "harmonics": int(harmonics),
        }
    )
    data, grid = _native.search_pulsations_in_events(
        _times(times, jd2), options, _place(place), clock, None if weights is None else _floats(weights, "weights")
    )
    return Result("PulsationSearch", data, {"grid": frame(grid)})


def pulse_profile(
    times,
    model,
    *,
    bins: int = 32,
    harmonics: int = 5,
    gaussian_components: Optional[int] = None,
    model_validity_days: float = 1100.0,
    instrument: str = "default",
    weights=None,
    jd2=None,
    clock: str = "bjd_tdb",
    **place,
) -> Result:
    """Folds photon events with a timing model (file or TOML text) into a binned profile
    with errors, a Fourier (``harmonics``) or Gaussian-component template and the H test
    (de Jager et al. 1989) (library ``pulsar::profile::pulse_profile``). The model is
    trusted within ``model_validity_days`` of its epoch.

    Returns a Result (``PulseProfile``) with table ``profile`` (``phase_center_cycles``,
    ``counts``, ``count_error``, ``relative_intensity``, ``relative_intensity_error``,
    ``template_density``).
    """
    name, text = _model_text(model)
    options = json.dumps(
        {
            "bins": int(bins),
            "harmonics": int(harmonics),
            "gaussian_components": None if gaussian_components is None else int(gaussian_components),
            "model_validity_days": float(model_validity_days),
            "instrument": instrument,
        }
    )
    data = _native.fold_pulse_profile(
        _times(times, jd2), text, name, options, _place(place), clock, None if weights is None else _floats(weights, "weights")
    )
    parsed = json.loads(data)
    p = parsed["profile"]
    table = pd.DataFrame(
        {
            "phase_center_cycles": p["phase_center_cycles"],
            "counts": p["counts"],
            "count_error": p["count_errors"],
            "relative_intensity": p["relative_intensity"],
            "relative_intensity_error": p["relative_intensity_errors"],
            "template_density": parsed["template_density"],
        }
    )
    return Result("PulseProfile", data, {"profile": table})


def event_arrival_times(
    times,
    model,
    template,
    *,
    segment_duration_s: Optional[float] = None,
    segment_photons: Optional[int] = None,
    min_photons: int = 100,
    model_validity_days: float = 1100.0,
    instrument: str = "default",
    weights=None,
    jd2=None,
    clock: str = "bjd_tdb",
    **place,
) -> Result:
    """Arrival times from photon events: the events are cut into segments (by
    ``segment_duration_s`` or ``segment_photons``), each is folded with the timing model
    and cross-correlated with the pulse template (library
    ``pulsar::event_toas::event_arrival_times``); segments with fewer than ``min_photons``
    are skipped and listed. ``template`` is a ``pulse_profile`` Result, its ``to_dict()``,
    or a template file written by ``skyclock pulse-profile --template-output``.

    Returns a Result (``EventArrivalTimes``); ``to_dict()`` holds the arrival times.
    """
    name, text = _model_text(model)
    if isinstance(template, Result):
        template = template.to_dict()["template"]
    elif isinstance(template, (str, os.PathLike)):
        with open(template, encoding="utf-8") as f:
            doc = json.load(f)
        if "template" not in doc:
            raise SkyclockError(f"{os.fspath(template)}: no 'template' key; write templates with pulse_profile")
        template = doc["template"]
    elif isinstance(template, dict) and "template" in template:
        template = template["template"]
    options = json.dumps(
        {
            "segment_duration_s": None if segment_duration_s is None else float(segment_duration_s),
            "segment_photons": None if segment_photons is None else int(segment_photons),
            "min_photons": int(min_photons),
            "model_validity_days": float(model_validity_days),
            "instrument": instrument,
        }
    )
    data = _native.arrival_times_from_events(
        _times(times, jd2), text, name, json.dumps(template), options, _place(place), clock,
        None if weights is None else _floats(weights, "weights"),
    )
    return Result("EventArrivalTimes", data)
