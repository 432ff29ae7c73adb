//! One call for the prediction stage: the events of a fitted ephemeris in a UTC date range
//! at a site, as a typed, serde-serialisable [`Forecast`] with the Sun cautions and the
//! leap-second warning stated once. The command line prints it, writes its rows as a table
//! and its serialisation as `--json`.

use serde::{Deserialize, Serialize};

use super::PredictError;
use super::events::{PredictedEvent, PredictionOptions, predict_events};
use super::sky::{HorizontalPosition, SkyGeometry};
use crate::arrival::BarycentricCorrector;
use crate::observer::Site;
use crate::oc::{EventKind, FittedEphemeris, ModelKind};
use crate::time::format::format_iso;
use crate::time::{Instant, LeapSecondTable, TimeFormat, format_time};

/// What to predict.
#[derive(Debug, Clone, PartialEq)]
pub struct ForecastRequest<'a> {
    /// The fitted ephemeris (any O–C model).
    pub ephemeris: &'a FittedEphemeris,
    /// Where it came from, in words (file and model, or "command line").
    pub ephemeris_origin: String,
    /// Event kinds to list (duplicates ignored).
    pub kinds: &'a [EventKind],
    /// Start and end of the range (any scale; events are selected by their BJD_TDB).
    pub start: Instant,
    /// See `start`.
    pub end: Instant,
    /// The observing site.
    pub site: &'a Site,
    /// Observing limits.
    pub options: PredictionOptions,
    /// Keep only events observable at the site (whole window with a duration).
    pub only_observable: bool,
}

/// The fitted ephemeris a forecast used, in words and numbers.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ForecastEphemeris {
    /// O–C model.
    pub model: ModelKind,
    /// Where it came from.
    pub origin: String,
    /// Fitted epoch of cycle 0, BJD_TDB as a Julian Date (14 decimals).
    pub epoch_bjd_tdb: String,
    /// Fitted period at cycle 0, days.
    pub period_d: f64,
    /// Q = ½ dP/dE, days (0 without the quadratic term).
    pub quadratic_d: f64,
}

/// One predicted event as written to tables and JSON.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ForecastEvent {
    /// Kind of event.
    pub kind: EventKind,
    /// Cycle number (half-integer for secondary minima).
    pub cycle: f64,
    /// Predicted time at the barycentre, BJD_TDB as a Julian Date (14 decimals).
    pub bjd_tdb: String,
    /// The same as two parts (integer-ish day, fraction), full precision.
    pub bjd_tdb_jd1: f64,
    /// See `bjd_tdb_jd1`.
    pub bjd_tdb_jd2: f64,
    /// 1σ of the predicted time from the fit's covariance, days.
    pub sigma_d: f64,
    /// When the event is seen at the site, UTC, ISO 8601 to the millisecond.
    pub utc_iso: String,
    /// Target altitude and azimuth at the site, degrees (geometric).
    pub target: HorizontalPosition,
    /// The Sun's.
    pub sun: HorizontalPosition,
    /// The Moon's (~0.3°).
    pub moon: HorizontalPosition,
    /// Twilight class of the Sun's altitude (`day`, `civil twilight`, …).
    pub sky_condition: String,
    /// Target–Sun angle, degrees.
    pub sun_separation_deg: f64,
    /// Target–Moon angle, degrees.
    pub moon_separation_deg: f64,
    /// Illuminated fraction of the Moon, 0…1.
    pub moon_illuminated_fraction: f64,
    /// Observable at the event's centre.
    pub observable: bool,
    /// With an event duration: the whole window is observable.
    pub window_observable: Option<bool>,
    /// The Sun caution, when the target is near the Sun.
    pub caution: Option<String>,
}

impl ForecastEvent {
    fn from_event(e: &PredictedEvent) -> ForecastEvent {
        let (jd1, jd2) = e.bjd_tdb.jd_two_part();
        ForecastEvent {
            kind: e.kind,
            cycle: e.cycle,
            bjd_tdb: format_time(&e.bjd_tdb, TimeFormat::Jd),
            bjd_tdb_jd1: jd1,
            bjd_tdb_jd2: jd2,
            sigma_d: e.sigma_d,
            utc_iso: format_iso(&e.utc, 3),
            target: e.sky.target,
            sun: e.sky.sun,
            moon: e.sky.moon,
            sky_condition: e.condition.name().to_string(),
            sun_separation_deg: e.sky.sun_separation_deg,
            moon_separation_deg: e.sky.moon_separation_deg,
            moon_illuminated_fraction: e.sky.moon_illuminated_fraction,
            observable: e.observable,
            window_observable: e.window_observable,
            caution: e.sun_caution.clone(),
        }
    }

    /// Observable at its centre and, with a duration, over its whole window.
    pub fn fully_observable(&self) -> bool {
        self.observable && self.window_observable.unwrap_or(true)
    }
}

/// The result of the prediction stage.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Forecast {
    /// The ephemeris used.
    pub ephemeris: ForecastEphemeris,
    /// Site name.
    pub site: String,
    /// Source name.
    pub source: String,
    /// Start of the range, UTC ISO 8601.
    pub from_utc: String,
    /// End of the range, UTC ISO 8601.
    pub until_utc: String,
    /// Whether only observable events were kept.
    pub only_observable: bool,
    /// Whether whole event windows were checked (an event duration was given).
    pub checked_windows: bool,
    /// The events, in time order.
    pub events: Vec<ForecastEvent>,
    /// One Sun caution per event with the target near the Sun (kept even when the event
    /// was filtered out as unobservable).
    pub cautions: Vec<String>,
    /// Warnings (UTC beyond the leap-second table).
    pub warnings: Vec<String>,
}

/// The warning for UTC instants that lie `max_days` beyond the leap-second table's
/// validity (`count` of them), or `None` when there are none.
pub fn leap_second_horizon_warning(count: usize, max_days: i64, table: &LeapSecondTable) -> Option<String> {
    (count > 0).then(|| {
        format!(
            "warning: {count} UTC time(s) lie up to {max_days} days beyond the leap-second table's validity ({}); \
             if a leap second was announced since, those times are off by 1 s. Load a newer table with --leap-seconds FILE.",
            table.source()
        )
    })
}

/// Predicts the events of `request` seen from its site: [`predict_events`], then the Sun
/// cautions, the leap-second warning and the observability filter.
pub fn forecast(
    request: &ForecastRequest,
    corrector: &BarycentricCorrector,
    sky: &SkyGeometry,
) -> Result<Forecast, PredictError> {
    let events = predict_events(
        request.ephemeris,
        request.kinds,
        &request.start,
        &request.end,
        request.site,
        corrector,
        sky,
        &request.options,
    )?;
    let cautions = events
        .iter()
        .filter_map(|e| {
            e.sun_caution.as_ref().map(|c| format!("{} {} at {} UTC: {c}", e.kind, e.cycle, format_iso(&e.utc, 0)))
        })
        .collect();
    let leap = corrector.converter().leap_seconds();
    let beyond: Vec<i64> = events.iter().filter_map(|e| leap.days_beyond_horizon(e.utc.mjd_day())).collect();
    let warnings = leap_second_horizon_warning(beyond.len(), beyond.iter().copied().max().unwrap_or(0), leap)
        .into_iter()
        .collect();
    let mut rows: Vec<ForecastEvent> = events.iter().map(ForecastEvent::from_event).collect();
    if request.only_observable {
        rows.retain(ForecastEvent::fully_observable);
    }
    let e = request.ephemeris;
    Ok(Forecast {
        ephemeris: ForecastEphemeris {
            model: e.kind,
            origin: request.ephemeris_origin.clone(),
            epoch_bjd_tdb: format_time(&e.epoch(), TimeFormat::Jd),
            period_d: e.period_d(),
            quadratic_d: e.quadratic_d(),
        },
        site: request.site.name.clone(),
        source: corrector.source().name.clone(),
        from_utc: format_iso(&request.start, 0),
        until_utc: format_iso(&request.end, 0),
        only_observable: request.only_observable,
        checked_windows: request.options.event_duration_d.is_some(),
        events: rows,
        cautions,
        warnings,
    })
}

impl Forecast {
    /// The events as a table, one row per event: kind, cycle, bjd_tdb (text, 14 decimals),
    /// bjd_tdb_jd1, bjd_tdb_jd2, sigma_d, utc_iso, target_altitude_deg, target_azimuth_deg,
    /// sun_altitude_deg, sky_condition, sun_separation_deg, moon_altitude_deg,
    /// moon_separation_deg, moon_illuminated_fraction, observable, window_observable (only
    /// when the forecast checked event windows), caution (empty when none).
    pub fn table(&self) -> polars::prelude::PolarsResult<polars::prelude::DataFrame> {
        use polars::prelude::{Column, DataFrame};
        let e = &self.events;
        let mut columns = vec![
            Column::new("kind".into(), e.iter().map(|e| e.kind.name()).collect::<Vec<_>>()),
            Column::new("cycle".into(), e.iter().map(|e| e.cycle).collect::<Vec<_>>()),
            Column::new("bjd_tdb".into(), e.iter().map(|e| e.bjd_tdb.clone()).collect::<Vec<_>>()),
            Column::new("bjd_tdb_jd1".into(), e.iter().map(|e| e.bjd_tdb_jd1).collect::<Vec<_>>()),
            Column::new("bjd_tdb_jd2".into(), e.iter().map(|e| e.bjd_tdb_jd2).collect::<Vec<_>>()),
            Column::new("sigma_d".into(), e.iter().map(|e| e.sigma_d).collect::<Vec<_>>()),
            Column::new("utc_iso".into(), e.iter().map(|e| e.utc_iso.clone()).collect::<Vec<_>>()),
            Column::new("target_altitude_deg".into(), e.iter().map(|e| e.target.altitude_deg).collect::<Vec<_>>()),
            Column::new("target_azimuth_deg".into(), e.iter().map(|e| e.target.azimuth_deg).collect::<Vec<_>>()),
            Column::new("sun_altitude_deg".into(), e.iter().map(|e| e.sun.altitude_deg).collect::<Vec<_>>()),
            Column::new("sky_condition".into(), e.iter().map(|e| e.sky_condition.clone()).collect::<Vec<_>>()),
            Column::new("sun_separation_deg".into(), e.iter().map(|e| e.sun_separation_deg).collect::<Vec<_>>()),
            Column::new("moon_altitude_deg".into(), e.iter().map(|e| e.moon.altitude_deg).collect::<Vec<_>>()),
            Column::new("moon_separation_deg".into(), e.iter().map(|e| e.moon_separation_deg).collect::<Vec<_>>()),
            Column::new(
                "moon_illuminated_fraction".into(),
                e.iter().map(|e| e.moon_illuminated_fraction).collect::<Vec<_>>(),
            ),
            Column::new("observable".into(), e.iter().map(|e| e.observable).collect::<Vec<_>>()),
        ];
        if self.checked_windows {
            columns.push(Column::new(
                "window_observable".into(),
                e.iter().map(|e| e.window_observable.unwrap_or(false)).collect::<Vec<_>>(),
            ));
        }
        columns.push(Column::new(
            "caution".into(),
            e.iter().map(|e| e.caution.clone().unwrap_or_default()).collect::<Vec<_>>(),
        ));
        DataFrame::new(e.len(), columns)
    }

    /// Events observable at their centre and, with a duration, over their whole window.
    pub fn fully_observable(&self) -> usize {
        self.events.iter().filter(|e| e.fully_observable()).count()
    }
}

/// The forecast of the first of successive windows of `window_d` days, starting at
/// `request.start` (its `end` is ignored), that holds at least one fully observable event;
/// at most `max_windows` are tried. Returns the forecast and how many windows were passed
/// over (0: the first one held events). When none of them holds any, the last window's
/// forecast is returned with `max_windows − 1` passed: the caller should say that no
/// observable event was found (e.g. the target stays in daylight).
///
/// This is what a user asks with "when can I next observe it?", and what keeps an output
/// the same whatever the date it is run on.
pub fn first_observable_window(
    request: &ForecastRequest,
    window_d: f64,
    max_windows: usize,
    corrector: &BarycentricCorrector,
    sky: &SkyGeometry,
) -> Result<(Forecast, usize), PredictError> {
    if !(window_d.is_finite() && window_d > 0.0 && window_d <= 366.0) {
        return Err(PredictError::BadOption(format!("the window must be 0–366 days long, got {window_d}")));
    }
    if max_windows == 0 {
        return Err(PredictError::BadOption("at least one window must be tried".into()));
    }
    let mut last = None;
    for k in 0..max_windows {
        let start = request.start.add_seconds(k as f64 * window_d * crate::constants::SECONDS_PER_DAY);
        let end = start.add_seconds(window_d * crate::constants::SECONDS_PER_DAY);
        let r = forecast(&ForecastRequest { start, end, ..request.clone() }, corrector, sky)?;
        if r.fully_observable() > 0 {
            return Ok((r, k));
        }
        last = Some((r, k));
    }
    last.ok_or_else(|| PredictError::BadOption("at least one window must be tried".into()))
}
