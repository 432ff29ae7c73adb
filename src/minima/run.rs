//! One call for the times-of-minimum stage: every event of a light curve timed against a
//! reference ephemeris, returned as a typed, serde-serialisable [`EventTimingReport`] in
//! the user's units (BJD_TDB, cycle, 1-based input rows). The command line writes its rows
//! as the timing table (read directly by the O–C stage) and its serialisation as `--json`.

use serde::{Deserialize, Serialize};

use super::{EventCurve, EventWindow, MinimaError, SegmentOptions, TimingMethod, time_events};
use crate::constants::SECONDS_PER_DAY;
use crate::light_curve::Brightness;
use crate::oc::{EventKind, ReferenceEphemeris, ReferenceEphemerisSummary};
use crate::time::{Instant, TimeFormat, format_time};

/// Stated with every Kwee–van Woerden run (docs/minima.md): its error formula rests on an
/// assumed number of independent pairs and is known to mislead for few points or red noise.
pub const KWEE_VAN_WOERDEN_NOTE: &str = "note: the Kwee–van Woerden error assumes Z = N/4 independent pairs and white \
noise; it can be too small for few points or correlated noise — compare with a symmetric polynomial fit and its \
bootstrap error";

/// What to time.
#[derive(Debug, Clone, Copy)]
pub struct EventTimingRequest<'a> {
    /// The light curve (times in days since its reference instant, BJD_TDB).
    pub curve: EventCurve<'a>,
    /// 1-based input row of every point of the curve (for messages and the table).
    pub input_rows: &'a [usize],
    /// Reference ephemeris: epoch of cycle 0 (BJD_TDB) and period (days).
    pub ephemeris: ReferenceEphemeris,
    /// Which events.
    pub kind: EventKind,
    /// Window around each predicted centre.
    pub window: EventWindow,
    /// Minimum data per event.
    pub segmenting: SegmentOptions,
    /// How each event is timed.
    pub method: TimingMethod,
}

/// One timed event, as a row of the timing table.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TimedEventRow {
    /// Measured time, BJD_TDB as a Julian Date (14 decimals).
    pub time: String,
    /// Adopted 1σ, days.
    pub error_d: f64,
    /// Kind of event.
    pub kind: EventKind,
    /// Cycle number (half-integer for secondaries).
    pub cycle: f64,
    /// Timing method.
    pub method: String,
    /// Points used.
    pub points: usize,
    /// Covariance or Kwee–van Woerden formula error, days.
    pub error_formal_d: f64,
    /// Bootstrap error, days (symmetric fits with resamples).
    pub error_bootstrap_d: Option<f64>,
    /// Predicted time, BJD_TDB as a Julian Date.
    pub predicted_bjd_tdb: String,
    /// First input row used (1-based).
    pub first_row: usize,
    /// Last input row used.
    pub last_row: usize,
}

/// One event with data that could not be timed.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SkippedEventRow {
    /// Cycle number.
    pub cycle: f64,
    /// Predicted time, BJD_TDB as a Julian Date.
    pub predicted_bjd_tdb: String,
    /// Points in its window.
    pub points: usize,
    /// First input row of its window (1-based).
    pub first_row: usize,
    /// Last input row of its window.
    pub last_row: usize,
    /// Machine-readable reason (`branch_missing`, `too_few_points`, `timing_failed`,
    /// `centre_outside_window`).
    pub reason_code: String,
    /// The reason in words.
    pub reason: String,
}

impl SkippedEventRow {
    /// One line for a listing: cycle, rows, predicted time and reason.
    pub fn describe(&self) -> String {
        format!(
            "cycle {} (rows {}–{}, predicted BJD_TDB {}): {}",
            self.cycle, self.first_row, self.last_row, self.predicted_bjd_tdb, self.reason
        )
    }
}

/// The result of the times-of-minimum stage.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct EventTimingReport {
    /// Timing method.
    pub method: String,
    /// Kind of event timed.
    pub event_kind: EventKind,
    /// How the values were written.
    pub brightness: Brightness,
    /// The reference ephemeris.
    pub ephemeris: ReferenceEphemerisSummary,
    /// Half-width of each window, days.
    pub window_half_width_d: f64,
    /// Points of the light curve.
    pub points: usize,
    /// Events timed.
    pub timed: Vec<TimedEventRow>,
    /// Events with data that could not be timed, with their reasons.
    pub skipped: Vec<SkippedEventRow>,
    /// Predicted events inside the light curve's span whose window held no point.
    pub predicted_events_without_data: usize,
    /// Median adopted error of the timed events, days.
    pub median_error_d: f64,
    /// Notes on the method.
    pub notes: Vec<String>,
}

impl EventTimingReport {
    /// The timing table, one row per timed event (read directly by the O–C stage): time,
    /// error_d, kind, cycle, method, points, error_formal_d, error_bootstrap_d,
    /// predicted_bjd_tdb, first_row, last_row.
    pub fn timed_table(&self) -> polars::prelude::PolarsResult<polars::prelude::DataFrame> {
        use polars::prelude::{Column, DataFrame};
        let t = &self.timed;
        DataFrame::new(
            t.len(),
            vec![
                Column::new("time".into(), t.iter().map(|e| e.time.clone()).collect::<Vec<_>>()),
                Column::new("error_d".into(), t.iter().map(|e| e.error_d).collect::<Vec<_>>()),
                Column::new("kind".into(), t.iter().map(|e| e.kind.name()).collect::<Vec<_>>()),
                Column::new("cycle".into(), t.iter().map(|e| e.cycle).collect::<Vec<_>>()),
                Column::new("method".into(), t.iter().map(|e| e.method.clone()).collect::<Vec<_>>()),
                Column::new("points".into(), t.iter().map(|e| e.points as u64).collect::<Vec<_>>()),
                Column::new("error_formal_d".into(), t.iter().map(|e| e.error_formal_d).collect::<Vec<_>>()),
                Column::new("error_bootstrap_d".into(), t.iter().map(|e| e.error_bootstrap_d).collect::<Vec<_>>()),
                Column::new(
                    "predicted_bjd_tdb".into(),
                    t.iter().map(|e| e.predicted_bjd_tdb.clone()).collect::<Vec<_>>(),
                ),
                Column::new("first_row".into(), t.iter().map(|e| e.first_row as u64).collect::<Vec<_>>()),
                Column::new("last_row".into(), t.iter().map(|e| e.last_row as u64).collect::<Vec<_>>()),
            ],
        )
    }

    /// The skipped events, one row each: cycle, predicted_bjd_tdb, points, first_row,
    /// last_row, reason_code, reason.
    pub fn skipped_table(&self) -> polars::prelude::PolarsResult<polars::prelude::DataFrame> {
        use polars::prelude::{Column, DataFrame};
        let s = &self.skipped;
        DataFrame::new(
            s.len(),
            vec![
                Column::new("cycle".into(), s.iter().map(|e| e.cycle).collect::<Vec<_>>()),
                Column::new(
                    "predicted_bjd_tdb".into(),
                    s.iter().map(|e| e.predicted_bjd_tdb.clone()).collect::<Vec<_>>(),
                ),
                Column::new("points".into(), s.iter().map(|e| e.points as u64).collect::<Vec<_>>()),
                Column::new("first_row".into(), s.iter().map(|e| e.first_row as u64).collect::<Vec<_>>()),
                Column::new("last_row".into(), s.iter().map(|e| e.last_row as u64).collect::<Vec<_>>()),
                Column::new("reason_code".into(), s.iter().map(|e| e.reason_code.clone()).collect::<Vec<_>>()),
                Column::new("reason".into(), s.iter().map(|e| e.reason.clone()).collect::<Vec<_>>()),
            ],
        )
    }
}

/// Why no report could be made.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum EventTimingError {
    /// Bad data or options.
    #[error(transparent)]
    Minima(#[from] MinimaError),
    /// The rows do not match the points.
    #[error("{rows} input rows given for {points} points")]
    RowsMismatch {
        /// Rows given.
        rows: usize,
        /// Points.
        points: usize,
    },
    /// Nothing could be timed.
    #[error(
        "no event could be timed ({points} points, {empty_windows} predicted events without data){}{}",
        if skipped.is_empty() { "" } else { ":\n  " },
        skipped.iter().map(SkippedEventRow::describe).collect::<Vec<_>>().join("\n  ")
    )]
    NothingTimed {
        /// Points of the light curve.
        points: usize,
        /// Predicted events with an empty window.
        empty_windows: usize,
        /// The events skipped, with their reasons.
        skipped: Vec<SkippedEventRow>,
    },
}

/// Times every event of the request ([`time_events`]) and writes the result in BJD_TDB,
/// cycles and input rows. Errors: those of [`time_events`], and
/// [`EventTimingError::NothingTimed`] (with every reason) when no event could be timed.
pub fn time_light_curve(request: &EventTimingRequest) -> Result<EventTimingReport, EventTimingError> {
    let curve = &request.curve;
    if request.input_rows.len() != curve.time_d.len() {
        return Err(EventTimingError::RowsMismatch { rows: request.input_rows.len(), points: curve.time_d.len() });
    }
    let result =
        time_events(curve, &request.ephemeris, request.kind, request.window, &request.segmenting, &request.method)?;
    let row = |i: usize| request.input_rows[i];
    let instant = |d: f64| jd_text(&curve.reference.add_seconds(d * SECONDS_PER_DAY));
    let method = request.method.name().to_string();
    let skipped: Vec<SkippedEventRow> = result
        .skipped
        .iter()
        .map(|s| SkippedEventRow {
            cycle: s.cycle,
            predicted_bjd_tdb: instant(s.predicted_d),
            points: s.points,
            first_row: row(s.first_index),
            last_row: row(s.last_index),
            reason_code: s.reason.code().to_string(),
            reason: s.reason.to_string(),
        })
        .collect();
    if result.timed.is_empty() {
        return Err(EventTimingError::NothingTimed {
            points: curve.time_d.len(),
            empty_windows: result.empty_windows,
            skipped,
        });
    }
    let timed: Vec<TimedEventRow> = result
        .timed
        .iter()
        .map(|e| TimedEventRow {
            time: instant(e.centre_d),
            error_d: e.error_d,
            kind: request.kind,
            cycle: e.cycle,
            method: method.clone(),
            points: e.points,
            error_formal_d: e.error_formal_d,
            error_bootstrap_d: e.error_bootstrap_d,
            predicted_bjd_tdb: instant(e.predicted_d),
            first_row: row(e.first_index),
            last_row: row(e.last_index),
        })
        .collect();
    let mut errors: Vec<f64> = timed.iter().map(|e| e.error_d).collect();
    errors.sort_by(f64::total_cmp);
    let notes = if matches!(request.method, TimingMethod::KweeVanWoerden) {
        vec![KWEE_VAN_WOERDEN_NOTE.to_string()]
    } else {
        Vec::new()
    };
    let e = &request.ephemeris;
    Ok(EventTimingReport {
        method,
        event_kind: request.kind,
        brightness: curve.brightness,
        ephemeris: ReferenceEphemerisSummary {
            epoch_bjd_tdb: jd_text(&e.epoch),
            period_d: e.period_d,
            period_sigma_d: e.period_sigma_d,
        },
        window_half_width_d: request.window.half_width_d(e.period_d),
        points: curve.time_d.len(),
        median_error_d: errors[errors.len() / 2],
        timed,
        skipped,
        predicted_events_without_data: result.empty_windows,
        notes,
    })
}

fn jd_text(t: &Instant) -> String {
    format_time(t, TimeFormat::Jd)
}

/// A first epoch of the deepest event (a primary minimum, or the highest maximum with
/// `Extremum::Maximum`) from the light curve alone, for a known period: the curve is folded
/// at `period_d`, averaged in `bins` phase bins, and the centre of the most extreme bin
/// (refined by a parabola through it and its neighbours) is placed on the cycle nearest the
/// middle of the data. Accuracy about one bin width (P / bins) or better; it only has to put
/// each event inside its timing window, where [`time_light_curve`] measures it.
///
/// Errors: a period that is not positive, fewer than 3 bins, or fewer than 3 filled bins.
pub fn estimate_epoch(
    curve: &EventCurve,
    period_d: f64,
    extremum: super::Extremum,
    bins: usize,
) -> Result<Instant, MinimaError> {
    super::validate(curve.time_d, curve.value, curve.error)?;
    if !(period_d.is_finite() && period_d > 0.0) {
        return Err(MinimaError::BadOption(format!("the period must be a positive number of days, got {period_d}")));
    }
    if bins < 3 {
        return Err(MinimaError::BadOption(format!("at least 3 phase bins are needed, got {bins}")));
    }
    let (mut sum, mut count) = (vec![0.0; bins], vec![0usize; bins]);
    for (&t, &v) in curve.time_d.iter().zip(curve.value) {
        let phase = (t / period_d).rem_euclid(1.0);
        let b = ((phase * bins as f64) as usize).min(bins - 1);
        sum[b] += v;
        count[b] += 1;
    }
    let filled = count.iter().filter(|&&c| c > 0).count();
    if filled < 3 {
        return Err(MinimaError::TooFewPoints { method: "epoch estimate (filled phase bins)", needed: 3, got: filled });
    }
    let sign = super::peak_sign(curve.brightness, extremum);
    let mean = |b: usize| (count[b] > 0).then(|| sign * sum[b] / count[b] as f64);
    let best = (0..bins)
        .filter(|&b| count[b] > 0)
        .max_by(|&a, &b| mean(a).unwrap_or(f64::MIN).total_cmp(&mean(b).unwrap_or(f64::MIN)))
        .unwrap_or(0);
    let (left, right) = (mean((best + bins - 1) % bins), mean((best + 1) % bins));
    let shift = match (left, right, mean(best)) {
        (Some(l), Some(r), Some(c)) if l + r - 2.0 * c < 0.0 => (0.5 * (l - r) / (l + r - 2.0 * c)).clamp(-0.5, 0.5),
        _ => 0.0,
    };
    let phase = (best as f64 + 0.5 + shift) / bins as f64;
    let middle = 0.5 * (curve.time_d[0] + curve.time_d[curve.time_d.len() - 1]);
    let cycle = ((middle / period_d) - phase).round();
    Ok(curve.reference.add_seconds((cycle + phase) * period_d * SECONDS_PER_DAY))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::time::TimeScale;

    /// An invented eclipse every 0.7 d (Gaussian dip, 0.3 mag, σ = 0.02 d) sampled unevenly
    /// over 40 days: the epoch estimate lands within a bin width (0.7/50 d) of a true minimum.
    #[test]
    fn epoch_estimate_finds_the_deepest_phase() {
        let reference = Instant::from_jd_two_part(TimeScale::Tdb, 2_460_000.0, 0.0);
        let (p, t0) = (0.7, 0.2345);
        let time_d: Vec<f64> = (0..4000).map(|i| i as f64 * 0.01 + 0.0007 * ((i * 7919) % 13) as f64).collect();
        let value: Vec<f64> = time_d
            .iter()
            .map(|&t| {
                let x = (t - t0) / p;
                let d = (x - x.round()) * p / 0.02;
                12.0 + 0.3 * (-0.5 * d * d).exp()
            })
            .collect();
        let curve =
            EventCurve { reference, time_d: &time_d, value: &value, error: None, brightness: Brightness::Magnitude };
        let e = estimate_epoch(&curve, p, super::super::Extremum::Minimum, 50).unwrap();
        let d = e.seconds_since(&reference) / SECONDS_PER_DAY;
        let off = ((d - t0) / p - ((d - t0) / p).round()) * p;
        assert!(off.abs() < p / 50.0, "{off} d from a true minimum");
        assert!((d - 20.0).abs() < p, "the epoch sits near the middle of the data: {d}");
        assert!(estimate_epoch(&curve, -1.0, super::super::Extremum::Minimum, 50).is_err());
    }
}
