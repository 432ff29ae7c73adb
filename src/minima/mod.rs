//! # minima — times of minimum and maximum from photometry
//!
//! The step between a light curve and an O–C diagram: the light curve is cut into events
//! around the predicted times of a linear ephemeris ([`segmentation`]), and each event's
//! centre is measured with its 1σ error, either by the Kwee & van Woerden (1956) method
//! ([`kwee_van_woerden`](mod@kwee_van_woerden)) or by fitting a symmetric model — an even polynomial or a
//! Gaussian profile — with covariance and seeded bootstrap errors ([`symmetric_fit`]).
//!
//! Times inside this module are `f64` days relative to a reference instant held by the
//! caller (for a light curve read by the CLI: the BJD_TDB noon before its first time, see
//! `survey::input::TableLightCurve::epoch`); absolute instants only appear at the edges
//! (the ephemeris epoch, an [`Instant`]). Offsets of up to ~10⁴ days keep ~2 µs in `f64`.
//!
//! Which way is the event? [`Brightness`] says how the values are written (magnitudes:
//! larger is fainter; fluxes: larger is brighter) and [`Extremum`] what is timed (the
//! faintest point of an eclipse, or the brightest point of a pulsation). Nothing here
//! prints or reads the command line.

pub mod kwee_van_woerden;
pub mod run;
pub mod segmentation;
pub mod symmetric_fit;

pub use kwee_van_woerden::{KweeVanWoerden, kwee_van_woerden};
pub use run::{
    EventTimingError, EventTimingReport, EventTimingRequest, SkippedEventRow, TimedEventRow, estimate_epoch,
    time_light_curve,
};
pub use segmentation::{EventWindow, Segment, SegmentOptions, SkipReason, SkippedEvent, segment_events};
pub use symmetric_fit::{SymmetricFit, SymmetricOptions, SymmetricShape, fit_symmetric};

use crate::fit::FitError;
use crate::oc::{EventKind, ReferenceEphemeris};
use crate::time::Instant;

pub use crate::light_curve::Brightness;

/// What is timed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub enum Extremum {
    /// The faintest point (an eclipse minimum): largest magnitude or smallest flux.
    Minimum,
    /// The brightest point (a pulsation maximum): smallest magnitude or largest flux.
    Maximum,
}

/// +1 when the event is a peak of the written values (a magnitude minimum or a flux
/// maximum), −1 when it is a trough. Multiplying the values by this sign makes every event
/// a peak, which is how the model fits find their starting values.
pub fn peak_sign(brightness: Brightness, extremum: Extremum) -> f64 {
    match (brightness, extremum) {
        (Brightness::Magnitude, Extremum::Minimum) | (Brightness::Flux, Extremum::Maximum) => 1.0,
        _ => -1.0,
    }
}

/// The methods that time one event.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum TimingMethod {
    /// Kwee & van Woerden (1956) reflection method.
    KweeVanWoerden,
    /// A symmetric model fitted by least squares, with bootstrap errors.
    Symmetric(SymmetricOptions),
}

impl TimingMethod {
    /// A short name for tables.
    pub fn name(&self) -> &'static str {
        match self {
            TimingMethod::KweeVanWoerden => "kwee-van-woerden",
            TimingMethod::Symmetric(o) => o.shape.name(),
        }
    }
}

/// One timed event.
#[derive(Debug, Clone, PartialEq)]
pub struct TimedEvent {
    /// Cycle number of the event (half-integral for secondaries).
    pub cycle: f64,
    /// Predicted centre, days since the light curve's reference instant.
    pub predicted_d: f64,
    /// Measured centre, days since the light curve's reference instant.
    pub centre_d: f64,
    /// Adopted 1σ error of the centre, days: the method's own error (KvW), or the larger of
    /// the covariance and bootstrap errors (symmetric fits).
    pub error_d: f64,
    /// Covariance (or KvW formula) error, days.
    pub error_formal_d: f64,
    /// Bootstrap error, days (symmetric fits with resamples only).
    pub error_bootstrap_d: Option<f64>,
    /// Points used.
    pub points: usize,
    /// Indices (into the light curve arrays) of the first and last point used.
    pub first_index: usize,
    /// See `first_index`.
    pub last_index: usize,
}

/// The result of timing every event of a light curve.
#[derive(Debug, Clone, PartialEq)]
pub struct EventTimings {
    /// Timed events in time order.
    pub timed: Vec<TimedEvent>,
    /// Events with data that could not be timed, each with its reason.
    pub skipped: Vec<SkippedEvent>,
    /// Predicted events inside the light curve's span whose window held no point at all.
    pub empty_windows: usize,
}

/// Errors of the timing routines.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum MinimaError {
    /// Too few points for the method.
    #[error("{method} needs at least {needed} points, got {got}")]
    TooFewPoints {
        /// The method, e.g. `the Kwee–van Woerden method`.
        method: &'static str,
        /// Points the method needs at least.
        needed: usize,
        /// Points it had (for the epoch estimate: filled phase bins).
        got: usize,
    },
    /// Arrays of different lengths.
    #[error("{what}: expected length {expected}, got {got}")]
    LengthMismatch {
        /// Which array: `values` or `uncertainties`.
        what: &'static str,
        /// The length of the times.
        expected: usize,
        /// The length it has.
        got: usize,
    },
    /// A NaN or infinite input.
    #[error("{what} at index {index} is {value}; finite numbers are required")]
    NonFinite {
        /// Which input: `time` or `value`.
        what: &'static str,
        /// Point index, 0-based.
        index: usize,
        /// The value found.
        value: f64,
    },
    /// Times not strictly increasing.
    #[error(
        "time at index {index} ({time_d} d) does not follow the previous one ({previous_d} d); sort the light curve and remove repeated times"
    )]
    UnsortedTimes {
        /// Point index, 0-based.
        index: usize,
        /// Its time, days since the light curve's reference.
        time_d: f64,
        /// The previous point's time, days since the same reference.
        previous_d: f64,
    },
    /// An uncertainty that is zero, negative or not finite.
    #[error("uncertainty at index {index} is {value}; uncertainties must be finite and > 0")]
    BadError {
        /// Point index, 0-based.
        index: usize,
        /// The uncertainty given.
        value: f64,
    },
    /// A bad option value.
    #[error("{0}")]
    BadOption(String),
    /// The reflection sums do not have a minimum inside the data.
    #[error("the light curve has no symmetric extremum inside the window: {0}")]
    NoExtremum(String),
    /// The data scatter is zero: no error can be estimated.
    #[error("the residual scatter is zero, so no error can be estimated (noise-free or constant data)")]
    NoScatter,
    /// A least-squares failure.
    #[error("the model fit failed: {0}")]
    Fit(#[from] FitError),
    /// A fit that did not converge.
    #[error("the model fit did not converge in {iterations} iterations")]
    NotConverged {
        /// Iterations done.
        iterations: usize,
    },
}

/// Checks lengths, finiteness, strict time order and uncertainties.
pub(crate) fn validate(time_d: &[f64], value: &[f64], error: Option<&[f64]>) -> Result<(), MinimaError> {
    if value.len() != time_d.len() {
        return Err(MinimaError::LengthMismatch { what: "values", expected: time_d.len(), got: value.len() });
    }
    if let Some(e) = error {
        if e.len() != time_d.len() {
            return Err(MinimaError::LengthMismatch { what: "uncertainties", expected: time_d.len(), got: e.len() });
        }
        for (i, &s) in e.iter().enumerate() {
            if !(s.is_finite() && s > 0.0) {
                return Err(MinimaError::BadError { index: i, value: s });
            }
        }
    }
    for i in 0..time_d.len() {
        if !time_d[i].is_finite() {
            return Err(MinimaError::NonFinite { what: "time", index: i, value: time_d[i] });
        }
        if !value[i].is_finite() {
            return Err(MinimaError::NonFinite { what: "value", index: i, value: value[i] });
        }
        if i > 0 && time_d[i] <= time_d[i - 1] {
            return Err(MinimaError::UnsortedTimes { index: i, time_d: time_d[i], previous_d: time_d[i - 1] });
        }
    }
    Ok(())
}

/// A light curve for event timing: times in days since `reference` (BJD_TDB), values and
/// optional 1σ uncertainties in the units of the values.
#[derive(Debug, Clone, Copy)]
pub struct EventCurve<'a> {
    /// The instant the times count from.
    pub reference: Instant,
    /// Times, days since `reference`, strictly increasing.
    pub time_d: &'a [f64],
    /// Magnitudes or fluxes.
    pub value: &'a [f64],
    /// 1σ uncertainties of the values, if known.
    pub error: Option<&'a [f64]>,
    /// How the values are written.
    pub brightness: Brightness,
}

/// Segments a light curve around a reference ephemeris and times every event of `kind`
/// with `method`.
///
/// Events that cannot be timed (a missing branch, too few points, a failed fit, a centre
/// that falls outside its window) are returned in `skipped` with their reason — never
/// dropped. Bootstrap streams are seeded by `seed` and the cycle number, so results do not
/// depend on which events are present or on thread count.
pub fn time_events(
    curve: &EventCurve,
    ephemeris: &ReferenceEphemeris,
    kind: EventKind,
    window: EventWindow,
    segmenting: &SegmentOptions,
    method: &TimingMethod,
) -> Result<EventTimings, MinimaError> {
    validate(curve.time_d, curve.value, curve.error)?;
    let (segments, mut skipped, empty_windows) =
        segment_events(curve.time_d, curve.reference, ephemeris, kind, window, segmenting)?;
    let extremum = if kind == EventKind::Maximum { Extremum::Maximum } else { Extremum::Minimum };
    let half_width_d = window.half_width_d(ephemeris.period_d);
    let mut timed = Vec::new();
    for s in segments {
        let r = s.first_index..s.last_index + 1;
        let t = &curve.time_d[r.clone()];
        let v = &curve.value[r.clone()];
        let e = curve.error.map(|e| &e[r.clone()]);
        let result = match method {
            TimingMethod::KweeVanWoerden => kwee_van_woerden(t, v).map(|k| (k.centre_d, k.error_d, None)),
            TimingMethod::Symmetric(o) => {
                let mut o = *o;
                o.seed = o.seed.wrapping_add((s.cycle * 2.0).round() as i64 as u64);
                fit_symmetric(t, v, e, peak_sign(curve.brightness, extremum), s.predicted_d, &o)
                    .map(|f| (f.centre_d, f.error_covariance_d, f.error_bootstrap_d))
            }
        };
        match result {
            Ok((centre_d, formal, boot)) => {
                if (centre_d - s.predicted_d).abs() > half_width_d || centre_d < t[0] || centre_d > t[t.len() - 1] {
                    skipped.push(SkippedEvent {
                        cycle: s.cycle,
                        predicted_d: s.predicted_d,
                        points: s.points(),
                        first_index: s.first_index,
                        last_index: s.last_index,
                        reason: SkipReason::CentreOutside { centre_d, predicted_d: s.predicted_d },
                    });
                    continue;
                }
                let error_d = boot.map_or(formal, |b: f64| b.max(formal));
                timed.push(TimedEvent {
                    cycle: s.cycle,
                    predicted_d: s.predicted_d,
                    centre_d,
                    error_d,
                    error_formal_d: formal,
                    error_bootstrap_d: boot,
                    points: s.points(),
                    first_index: s.first_index,
                    last_index: s.last_index,
                })
            }
            Err(err) => skipped.push(SkippedEvent {
                cycle: s.cycle,
                predicted_d: s.predicted_d,
                points: s.points(),
                first_index: s.first_index,
                last_index: s.last_index,
                reason: SkipReason::Failed(err.to_string()),
            }),
        }
    }
    skipped.sort_by(|a, b| a.predicted_d.total_cmp(&b.predicted_d));
    Ok(EventTimings { timed, skipped, empty_windows })
}
