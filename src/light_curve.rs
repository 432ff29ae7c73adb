//! The one light-curve type of the search and timing stages.
//!
//! A [`LightCurve`] is what every period search, fold, frequency extraction, time-of-minimum
//! measurement and survey search takes: times in days counted from a reference instant
//! (BJD_TDB), values (magnitudes or fluxes, said by [`Brightness`]), optional 1σ
//! uncertainties, optional band labels and the input row of every point (so that any
//! message can name the row a user must look at). Times count from `reference` as `f64`
//! days so that arithmetic stays at ~1e-11 d resolution over decades (an absolute JD in an
//! `f64` would resolve only ~40 µs).
//!
//! Validation (finite numbers, sorted times, positive errors) belongs to the stage that
//! uses a curve, which knows what it needs; this type only holds the data consistently:
//! every column present has the length of `time_d`.

use serde::{Deserialize, Serialize};

use crate::time::{Instant, TimeScale};

/// How the values of a light curve are written.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Brightness {
    /// Magnitudes: a larger value is fainter.
    #[default]
    Magnitude,
    /// Fluxes (any linear unit): a larger value is brighter.
    Flux,
}

impl Brightness {
    /// "magnitude" or "flux".
    pub fn name(self) -> &'static str {
        match self {
            Brightness::Magnitude => "magnitude",
            Brightness::Flux => "flux",
        }
    }
}

impl std::fmt::Display for Brightness {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}

impl std::str::FromStr for Brightness {
    type Err = LightCurveError;
    fn from_str(text: &str) -> Result<Brightness, LightCurveError> {
        match text.trim().to_ascii_lowercase().as_str() {
            "magnitude" | "magnitudes" | "mag" => Ok(Brightness::Magnitude),
            "flux" | "fluxes" => Ok(Brightness::Flux),
            _ => Err(LightCurveError::UnknownBrightness(text.to_string())),
        }
    }
}

/// Errors building a light curve.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum LightCurveError {
    /// A column's length differs from the number of times.
    #[error("the {column} column has {got} entries but there are {expected} times")]
    LengthMismatch {
        /// Which column.
        column: &'static str,
        /// Number of times.
        expected: usize,
        /// Entries in the column.
        got: usize,
    },
    /// The reference instant is not on TDB.
    #[error("the reference instant of a light curve must be BJD_TDB, got the {0} scale")]
    ReferenceNotTdb(TimeScale),
    /// Unknown brightness word.
    #[error("unknown brightness '{0}'; use magnitude or flux")]
    UnknownBrightness(String),
}

/// A light curve: times (days since `reference`, BJD_TDB), values and what goes with them.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LightCurve {
    /// The instant the times count from (TDB scale: BJD_TDB).
    pub reference: Instant,
    /// Times, days since `reference`.
    pub time_d: Vec<f64>,
    /// Values: magnitudes or fluxes (see `brightness`).
    pub value: Vec<f64>,
    /// 1σ uncertainties of the values, units of the values, if known.
    pub error: Option<Vec<f64>>,
    /// Band index per point (into `band_labels`), if the curve has several bands.
    pub band: Option<Vec<u32>>,
    /// Band label text by band index (empty without bands).
    pub band_labels: Vec<String>,
    /// How the values are written.
    pub brightness: Brightness,
    /// 1-based input row of each point (for messages); `1..=n` when not from a table.
    pub row: Vec<usize>,
}

impl LightCurve {
    /// A single-band curve without uncertainties; rows numbered 1..=n.
    pub fn new(reference: Instant, time_d: Vec<f64>, value: Vec<f64>) -> Result<LightCurve, LightCurveError> {
        if reference.scale() != TimeScale::Tdb {
            return Err(LightCurveError::ReferenceNotTdb(reference.scale()));
        }
        if value.len() != time_d.len() {
            return Err(LightCurveError::LengthMismatch { column: "value", expected: time_d.len(), got: value.len() });
        }
        let row = (1..=time_d.len()).collect();
        Ok(LightCurve {
            reference,
            time_d,
            value,
            error: None,
            band: None,
            band_labels: Vec::new(),
            brightness: Brightness::default(),
            row,
        })
    }

    /// Adds 1σ uncertainties.
    pub fn with_error(mut self, error: Vec<f64>) -> Result<LightCurve, LightCurveError> {
        if error.len() != self.time_d.len() {
            return Err(LightCurveError::LengthMismatch {
                column: "error",
                expected: self.time_d.len(),
                got: error.len(),
            });
        }
        self.error = Some(error);
        Ok(self)
    }

    /// Adds band indices and their labels.
    pub fn with_band(mut self, band: Vec<u32>, labels: Vec<String>) -> Result<LightCurve, LightCurveError> {
        if band.len() != self.time_d.len() {
            return Err(LightCurveError::LengthMismatch {
                column: "band",
                expected: self.time_d.len(),
                got: band.len(),
            });
        }
        self.band = Some(band);
        self.band_labels = labels;
        Ok(self)
    }

    /// Says how the values are written.
    pub fn with_brightness(mut self, brightness: Brightness) -> LightCurve {
        self.brightness = brightness;
        self
    }

    /// Sets the 1-based input row of each point.
    pub fn with_rows(mut self, row: Vec<usize>) -> Result<LightCurve, LightCurveError> {
        if row.len() != self.time_d.len() {
            return Err(LightCurveError::LengthMismatch { column: "row", expected: self.time_d.len(), got: row.len() });
        }
        self.row = row;
        Ok(self)
    }

    /// Number of points.
    pub fn len(&self) -> usize {
        self.time_d.len()
    }

    /// Whether the curve has no points.
    pub fn is_empty(&self) -> bool {
        self.time_d.is_empty()
    }

    /// Time span, last − first, days (0 for fewer than two points; times need not be sorted).
    pub fn span_d(&self) -> f64 {
        let (lo, hi) = self
            .time_d
            .iter()
            .filter(|t| t.is_finite())
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &t| (lo.min(t), hi.max(t)));
        if hi > lo { hi - lo } else { 0.0 }
    }
}

/// Phase in [0, 1) of time `time_d` for period `period_d` and epoch `epoch_d` (all days,
/// same reference). Accuracy: f64 rounding of (t − t₀)/P, ~1e-16 × cycle count.
/// Source: definition (common practice).
pub fn phase_of(time_d: f64, period_d: f64, epoch_d: f64) -> f64 {
    let x = (time_d - epoch_d) / period_d;
    let p = x - x.floor();
    if p >= 1.0 { 0.0 } else { p }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn reference() -> Instant {
        Instant::from_jd_two_part(TimeScale::Tdb, 2_459_000.5, 0.0)
    }

    #[test]
    fn columns_must_match_the_times() {
        let c = LightCurve::new(reference(), vec![0.0, 1.0, 2.5], vec![1.0, 2.0, 3.0]).unwrap();
        assert_eq!(c.len(), 3);
        assert_eq!(c.row, vec![1, 2, 3]);
        assert_eq!(c.span_d(), 2.5);
        let e = c.clone().with_error(vec![0.1]).unwrap_err();
        assert_eq!(e, LightCurveError::LengthMismatch { column: "error", expected: 3, got: 1 });
        assert!(LightCurve::new(reference(), vec![0.0], vec![]).is_err());
    }

    #[test]
    fn the_reference_must_be_barycentric_dynamical_time() {
        let utc = Instant::from_jd_two_part(TimeScale::Tt, 2_459_000.5, 0.0);
        assert_eq!(LightCurve::new(utc, vec![], vec![]).unwrap_err(), LightCurveError::ReferenceNotTdb(TimeScale::Tt));
    }

    #[test]
    fn brightness_words_round_trip() {
        for b in [Brightness::Magnitude, Brightness::Flux] {
            assert_eq!(b.to_string().parse::<Brightness>().unwrap(), b);
        }
        assert!("counts".parse::<Brightness>().is_err());
    }
}
