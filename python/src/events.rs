//! Bindings of the event stages: times of minimum or maximum of a light curve around a
//! linear ephemeris (`minima::time_light_curve`), and upcoming events of a fitted or given
//! ephemeris seen from a site (`predict::forecast`).

use numpy::{AllowTypeChange, PyArrayLike1};
use pyo3::prelude::*;
use pyo3::types::PyDict;
use skyclock::arrival::DelayOptions;
use skyclock::minima::{
    Brightness, EventCurve, EventTimingRequest, EventWindow, SegmentOptions, SymmetricOptions, SymmetricShape,
    TimingMethod, time_light_curve,
};
use skyclock::oc::{EventKind, FittedEphemeris, ModelKind, OcAnalysis, ReferenceEphemeris};
use skyclock::predict::{ForecastRequest, PredictionOptions, SkyGeometry, forecast};
use skyclock::time::{LeapSecondTable, TimeFormat, TimeScale, parse_time};

use crate::convert::{error, floats, table_to_python, to_json};
use crate::place::Place;
use crate::search::LightCurveInput;

/// Options of `time_events`, spelled as the command line spells them.
#[derive(Debug, serde::Deserialize)]
#[serde(deny_unknown_fields)]
struct TimingOptions {
    epoch_bjd_tdb: String,
    period_d: f64,
    event_kind: String,
    half_width_phase: Option<f64>,
    half_width_d: Option<f64>,
    method: String,
    polynomial_degree: u32,
    min_points: usize,
    min_points_per_side: usize,
    bootstrap: usize,
    seed: u64,
    brightness: String,
}

fn event_kind(text: &str) -> PyResult<EventKind> {
    EventKind::parse(text)
        .ok_or_else(|| error(format!("event kind '{text}' is not one of primary, secondary, maximum")))
}

/// Times of minimum (or maximum) of every event of a light curve around the ephemeris
/// (library: `minima::time_light_curve`). Returns (report JSON, the timed and the skipped
/// events as the command line writes them).
#[pyfunction]
#[pyo3(signature = (times, values, options, place, clock, errors=None, clocks=None, site_names=None))]
#[allow(clippy::type_complexity)] // (report JSON, timed columns, skipped columns)
pub fn time_events<'py>(
    py: Python<'py>,
    times: Vec<Option<String>>,
    values: PyArrayLike1<'py, f64, AllowTypeChange>,
    options: &str,
    place: &str,
    clock: String,
    errors: Option<PyArrayLike1<'py, f64, AllowTypeChange>>,
    clocks: Option<Vec<Option<String>>>,
    site_names: Option<Vec<Option<String>>>,
) -> PyResult<(String, Bound<'py, PyDict>, Bound<'py, PyDict>)> {
    let o: TimingOptions = crate::convert::options(options, "event timing options")?;
    if !(o.period_d.is_finite() && o.period_d > 0.0) {
        return Err(error(format!("period_d must be a positive number of days, got {}", o.period_d)));
    }
    let window = match (o.half_width_phase, o.half_width_d) {
        (Some(p), None) => EventWindow::HalfWidthPhase(p),
        (None, Some(d)) => EventWindow::HalfWidthDays(d),
        _ => return Err(error("give exactly one of half_width_phase and half_width_d")),
    };
    let method = match o.method.as_str() {
        "kwee-van-woerden" => TimingMethod::KweeVanWoerden,
        "symmetric-polynomial" => {
            let shape = match o.polynomial_degree {
                2 => SymmetricShape::Polynomial2,
                4 => SymmetricShape::Polynomial4,
                d => return Err(error(format!("polynomial_degree must be 2 or 4, got {d}"))),
            };
            TimingMethod::Symmetric(SymmetricOptions { shape, bootstrap_resamples: o.bootstrap, seed: o.seed })
        }
        "symmetric-gaussian" => TimingMethod::Symmetric(SymmetricOptions {
            shape: SymmetricShape::Gaussian,
            bootstrap_resamples: o.bootstrap,
            seed: o.seed,
        }),
        other => {
            return Err(error(format!(
                "method '{other}' is not one of kwee-van-woerden, symmetric-polynomial, symmetric-gaussian"
            )));
        }
    };
    let kind = event_kind(&o.event_kind)?;
    let brightness = match o.brightness.as_str() {
        "magnitude" => Brightness::Magnitude,
        "flux" => Brightness::Flux,
        other => return Err(error(format!("brightness '{other}' is not one of magnitude, flux"))),
    };
    let input = LightCurveInput {
        times,
        values: floats(&values),
        errors: errors.as_ref().map(floats),
        bands: None,
        clock,
        clocks,
        site_names,
        place: crate::convert::options(place, "place options")?,
    };
    let epoch = parse_time(&o.epoch_bjd_tdb, TimeFormat::Jd, TimeScale::Tdb, &LeapSecondTable::builtin())
        .map_err(|e| error(format!("epoch_bjd_tdb '{}': {e}", o.epoch_bjd_tdb)))?;
    let report = py.detach(|| -> PyResult<_> {
        let (lc, _note) = input.load()?;
        let series = lc.series().map_err(error)?;
        let errors = series.errors();
        let input_rows = lc.input_rows(&series);
        let request = EventTimingRequest {
            curve: EventCurve {
                reference: lc.epoch,
                time_d: series.time_d(),
                value: series.value(),
                error: errors.as_deref(),
                brightness,
            },
            input_rows: &input_rows,
            ephemeris: ReferenceEphemeris { epoch, period_d: o.period_d, period_sigma_d: 0.0 },
            kind,
            window,
            segmenting: SegmentOptions { min_points: o.min_points, min_points_per_branch: o.min_points_per_side },
            method,
        };
        time_light_curve(&request).map_err(|e| error(format!("{}: column 'values': {e}", lc.file)))
    })?;
    let timed = report.timed_table().map_err(error)?;
    let skipped = report.skipped_table().map_err(error)?;
    Ok((to_json(&report)?, table_to_python(py, &timed)?, table_to_python(py, &skipped)?))
}

/// The ephemeris of a prediction: a fitted O–C analysis (its JSON) and a model, or values.
#[derive(Debug, serde::Deserialize)]
#[serde(deny_unknown_fields)]
struct EphemerisGiven {
    epoch_bjd_tdb: Option<String>,
    period_d: Option<f64>,
    epoch_sigma_d: f64,
    period_sigma_d: f64,
    period_change_per_cycle_d: f64,
    period_change_per_cycle_sigma_d: f64,
    model: String,
}

/// Options of `predict_events`.
#[derive(Debug, serde::Deserialize)]
#[serde(deny_unknown_fields)]
struct ForecastOptions {
    kinds: Vec<String>,
    from_utc: String,
    until_utc: String,
    min_target_altitude_deg: f64,
    max_sun_altitude_deg: f64,
    min_moon_separation_deg: f64,
    event_duration_hours: Option<f64>,
    sun_caution_deg: f64,
    only_observable: bool,
}

/// Upcoming events of an ephemeris between two UTC dates at a site, with σ, altitudes,
/// twilight, the Moon and the Sun caution (library: `predict::forecast`). `analysis` is the
/// JSON of an O–C analysis (`analyse_timings(...).to_dict()`), or `None` with the ephemeris
/// values in `ephemeris`. Returns (forecast JSON, the events table the command line writes).
#[pyfunction]
#[pyo3(signature = (ephemeris, options, place, analysis=None))]
pub fn predict_events<'py>(
    py: Python<'py>,
    ephemeris: &str,
    options: &str,
    place: &str,
    analysis: Option<&str>,
) -> PyResult<(String, Bound<'py, PyDict>)> {
    let e: EphemerisGiven = crate::convert::options(ephemeris, "ephemeris")?;
    let o: ForecastOptions = crate::convert::options(options, "prediction options")?;
    let place: Place = crate::convert::options(place, "place options")?;
    let kinds: Vec<EventKind> = o.kinds.iter().map(|k| event_kind(k)).collect::<PyResult<_>>()?;
    let description = place.description()?;
    let site = place.single_site(description.as_ref())?.ok_or_else(|| {
        error("no site given: predictions need a ground site (site=(lon, lat, height), or sites_file= with site=NAME)")
    })?;
    let source = place.source(description.as_ref())?;
    let reference = place.reference()?;
    let leap = reference.converter.leap_seconds().clone();
    let start = parse_time(&o.from_utc, TimeFormat::Iso, TimeScale::Utc, &leap)
        .map_err(|err| error(format!("from_utc '{}': {err}", o.from_utc)))?;
    let end = parse_time(&o.until_utc, TimeFormat::Iso, TimeScale::Utc, &leap)
        .map_err(|err| error(format!("until_utc '{}': {err}", o.until_utc)))?;
    let (fitted, origin) = match analysis {
        Some(json) => {
            if e.epoch_bjd_tdb.is_some() || e.period_d.is_some() {
                return Err(error("give either a fitted analysis or epoch_bjd_tdb with period_d, not both"));
            }
            let analysis: OcAnalysis = serde_json::from_str(json)
                .map_err(|err| error(format!("the analysis is not an O–C analysis result: {err}")))?;
            let kind: ModelKind = e.model.parse().map_err(|err| error(format!("model: {err}")))?;
            (analysis.ephemeris(kind).map_err(error)?, format!("{kind} model of the analysis given"))
        }
        None => {
            let (Some(epoch_text), Some(period)) = (&e.epoch_bjd_tdb, e.period_d) else {
                return Err(error("no ephemeris given: give an analysis, or epoch_bjd_tdb with period_d"));
            };
            let epoch = parse_time(epoch_text, TimeFormat::Jd, TimeScale::Tdb, &leap)
                .map_err(|err| error(format!("epoch_bjd_tdb '{epoch_text}': {err}")))?;
            if !(e.period_change_per_cycle_sigma_d.is_finite() && e.period_change_per_cycle_sigma_d >= 0.0)
                || !e.period_change_per_cycle_d.is_finite()
            {
                return Err(error("period_change_per_cycle_d and its sigma must be finite (the sigma non-negative)"));
            }
            let fitted = if e.period_change_per_cycle_d == 0.0 && e.period_change_per_cycle_sigma_d == 0.0 {
                FittedEphemeris::linear(epoch, period, e.epoch_sigma_d, e.period_sigma_d)
            } else {
                FittedEphemeris::quadratic(
                    epoch,
                    period,
                    0.5 * e.period_change_per_cycle_d,
                    [e.epoch_sigma_d, e.period_sigma_d, 0.5 * e.period_change_per_cycle_sigma_d],
                )
            }
            .map_err(error)?;
            (fitted, "values given".to_string())
        }
    };
    let options = PredictionOptions {
        min_target_altitude_deg: o.min_target_altitude_deg,
        max_sun_altitude_deg: o.max_sun_altitude_deg,
        event_duration_d: o.event_duration_hours.map(|h| h / 24.0),
        sun_caution_deg: o.sun_caution_deg,
        min_moon_separation_deg: o.min_moon_separation_deg,
    };
    let corrector = reference.corrector(source, DelayOptions::default());
    let sky = SkyGeometry::from_reference(&reference);
    let request = ForecastRequest {
        ephemeris: &fitted,
        ephemeris_origin: origin,
        kinds: &kinds,
        start,
        end,
        site: &site,
        options,
        only_observable: o.only_observable,
    };
    let result = py.detach(|| forecast(&request, &corrector, &sky)).map_err(error)?;
    let events = result.table().map_err(error)?;
    Ok((to_json(&result)?, table_to_python(py, &events)?))
}
