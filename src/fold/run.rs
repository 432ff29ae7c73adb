//! A light curve folded in one call: optional least-squares refinement of the period
//! (a Fourier series sharing one frequency, [`super::refine`]), phases, and the binned curve
//! ([`super::binning`]). [`FoldedLightCurve`] keeps the points for tables and figures;
//! [`FoldReport`] is its serialisable summary (what `fold-curve --json` writes).

use polars::prelude::{Column, DataFrame, PolarsError, PolarsResult};
use serde::{Deserialize, Serialize};

use super::{BinStatistic, PhaseBin, RefinedPeriod, bin_folded, fold_times, refine_period};
use crate::periodogram::{SearchError, Series};
use crate::table::summary::nan_as_null;

/// What to fold and how.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FoldRequest {
    /// Trial period, days (> 0).
    pub period_d: f64,
    /// Epoch of phase 0, days on the series' time axis.
    pub epoch_d: f64,
    /// Refine the period first with a Fourier series of this many harmonics.
    pub refine_harmonics: Option<usize>,
    /// Number of phase bins.
    pub bins: usize,
    /// Mean or median per bin.
    pub statistic: BinStatistic,
}

/// A folded light curve.
#[derive(Debug, Clone, PartialEq)]
pub struct FoldedLightCurve {
    /// Phase of every point, cycles in [0, 1), in the order of the series.
    pub phase: Vec<f64>,
    /// 1σ of every value, when the series had errors.
    pub error: Option<Vec<f64>>,
    /// The binned curve.
    pub bins: Vec<PhaseBin>,
    /// The period folded at, days (refined when asked for).
    pub period_d: f64,
    /// The refinement, when asked for.
    pub refined: Option<RefinedPeriod>,
    /// The serialisable summary.
    pub report: FoldReport,
}

impl FoldedLightCurve {
    /// One row per folded point, in the order of `series` (the series this fold was made
    /// from): `input_row` (the point's data row in the input file, 1-based as given in
    /// `input_rows`, one per point of `series`), `phase` (cycles in [0, 1)),
    /// `days_since_epoch` (days after the epoch of phase 0), `value` (input units) and
    /// `error` (1σ, when the series had errors). What `fold-curve --output` writes and the
    /// Python binding returns. Errors: `input_rows` not one per point.
    pub fn points_table(&self, series: &Series, input_rows: &[usize]) -> PolarsResult<DataFrame> {
        if input_rows.len() != series.len() || self.phase.len() != series.len() {
            return Err(PolarsError::ShapeMismatch(
                format!("{} input rows for {} folded points", input_rows.len(), series.len()).into(),
            ));
        }
        let epoch_d = self.report.epoch_days_after_first_noon;
        let mut columns = vec![
            Column::new("input_row".into(), input_rows.iter().map(|&r| r as u64).collect::<Vec<u64>>()),
            Column::new("phase".into(), self.phase.clone()),
            Column::new("days_since_epoch".into(), series.time_d().iter().map(|t| t - epoch_d).collect::<Vec<f64>>()),
            Column::new("value".into(), series.value().to_vec()),
        ];
        if let Some(e) = &self.error {
            columns.push(Column::new("error".into(), e.clone()));
        }
        DataFrame::new_infer_height(columns)
    }

    /// One row per phase bin: `phase_center` (cycles), `value` (mean or median, input
    /// units), `error` (1σ of that value; NaN for an empty bin) and `count` (points in the
    /// bin). What `fold-curve --binned-output` writes and the Python binding returns.
    pub fn bins_table(&self) -> PolarsResult<DataFrame> {
        let b = &self.bins;
        DataFrame::new_infer_height(vec![
            Column::new("phase_center".into(), b.iter().map(|x| x.phase_center).collect::<Vec<f64>>()),
            Column::new("value".into(), b.iter().map(|x| x.value).collect::<Vec<f64>>()),
            Column::new("error".into(), b.iter().map(|x| x.error).collect::<Vec<f64>>()),
            Column::new("count".into(), b.iter().map(|x| x.count as u64).collect::<Vec<u64>>()),
        ])
    }
}

/// Summary of a fold.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FoldReport {
    /// Points folded.
    pub points: usize,
    /// Rows dropped because a time, value or error was not a number.
    pub rows_dropped_nan: usize,
    /// Period folded at, days.
    pub period_d: f64,
    /// 1σ of the refined period, days (null without refinement).
    pub period_err_d: Option<f64>,
    /// Harmonics of the refinement model (null without refinement).
    pub refined_with_harmonics: Option<usize>,
    /// Epoch of phase 0, days on the input's time axis (days after the first time's noon).
    #[serde(with = "nan_as_null")]
    pub epoch_days_after_first_noon: f64,
    /// Number of bins.
    pub bins: usize,
    /// Bins without a point.
    pub empty_bins: usize,
    /// How the input times were read and carried to BJD_TDB.
    pub times: String,
}

/// Folds `series` as `request` says; `times` describes the input's clock for the report.
/// Errors: a non-positive period, a failed refinement, or a bin count below 1.
pub fn fold_light_curve(series: &Series, request: &FoldRequest, times: &str) -> Result<FoldedLightCurve, SearchError> {
    let (period_d, refined) = match request.refine_harmonics {
        Some(h) => {
            let r = refine_period(series, 1.0 / request.period_d, h)?;
            (r.period_d, Some(r))
        }
        None => (request.period_d, None),
    };
    let phase = fold_times(series.time_d(), period_d, request.epoch_d)?;
    let error = series.errors();
    let bins = bin_folded(&phase, series.value(), error.as_deref(), request.bins, request.statistic)?;
    let report = FoldReport {
        points: series.len(),
        rows_dropped_nan: series.n_dropped(),
        period_d,
        period_err_d: refined.as_ref().map(|r| r.period_err_d).filter(|v| v.is_finite()),
        refined_with_harmonics: refined.as_ref().map(|r| r.harmonics),
        epoch_days_after_first_noon: request.epoch_d,
        bins: bins.len(),
        empty_bins: bins.iter().filter(|b| b.count == 0).count(),
        times: times.to_string(),
    };
    Ok(FoldedLightCurve { phase, error, bins, period_d, refined, report })
}
