//! A light curve read from a table file with its times carried to BJD_TDB on the way in:
//! the first step of every search and timing stage, as one library call.
//!
//! Times already written as barycentric TDB (`bjd_tdb`, `bmjd_tdb`) are read directly;
//! any other clock (JD UTC, HJD, MJD TT, ISO UTC, … one label for the file or one per row)
//! is corrected row by row with the arrival stage ([`correct_table`]: Rømer, Einstein and
//! Shapiro delays at the observer given), then read. Every error names file, row and column.

use super::input::{
    LightCurveColumns, TableLightCurve, assemble_measured, is_barycentric_tdb, parse_barycentric_time_column,
};
use crate::arrival::table::{ClockSpec, ObserverSpec, TableRequest, correct_table};
use crate::arrival::{DelayOptions, ReferenceData, Source};
use crate::table::{TableError, measured_number_column, read_table, text_column};
use polars::prelude::DataFrame;
use std::path::Path;

/// How the times of the table are written and where they were taken.
#[derive(Debug, Clone, PartialEq)]
pub enum TimeOrigin {
    /// Every row in one clock, by its label (e.g. `bjd_tdb`, `jd_utc`, `hjd_utc`, `mjd_tt`).
    Clock(String),
    /// A clock label per row, in this column.
    ClockColumn(String),
}

/// What to read.
#[derive(Debug, Clone, PartialEq)]
pub struct LightCurveSource<'a> {
    /// The table (.csv, .tsv or .parquet).
    pub path: &'a Path,
    /// Columns of time, value, error and band.
    pub columns: LightCurveColumns,
    /// How the times are written.
    pub times: TimeOrigin,
    /// Where the times were taken (needed unless they are barycentric TDB).
    pub observer: ObserverSpec,
    /// The target (needed unless the times are barycentric TDB).
    pub source: Option<Source>,
}

/// Reads the light curve of `request`, carrying its times to BJD_TDB with `reference`.
/// Returns the light curve and a sentence saying how its times were read.
///
/// Errors: unreadable files, missing columns, bad cells (file, row, column), a clock that
/// needs a source when none is given.
pub fn read_light_curve(
    request: &LightCurveSource,
    reference: &ReferenceData,
) -> Result<(TableLightCurve, String), TableError> {
    let file = request.path.display().to_string();
    let columns = &request.columns;
    let mut text_cols = vec![columns.time.as_str()];
    if let TimeOrigin::ClockColumn(c) = &request.times {
        text_cols.push(c);
    }
    if let ObserverSpec::SiteColumn { column, .. } = &request.observer {
        text_cols.push(column);
    }
    let df = read_table(request.path, &text_cols)?;
    light_curve_from_frame(&df, &file, request, reference)
}

/// As [`read_light_curve`], for a table already in memory (`df`, named `file` in messages;
/// `request.path` is not read): its time, clock and site columns must be text. The Python
/// module hands its arrays over this way.
pub fn light_curve_from_frame(
    df: &DataFrame,
    file: &str,
    request: &LightCurveSource,
    reference: &ReferenceData,
) -> Result<(TableLightCurve, String), TableError> {
    let file = file.to_string();
    let columns = &request.columns;
    let leap = reference.converter.leap_seconds().clone();
    let clock_of = |label: &str| {
        ClockSpec::parse_label(label).map_err(|e| TableError::File { file: file.clone(), message: e.to_string() })
    };
    let single = match &request.times {
        TimeOrigin::Clock(label) => Some((label.as_str(), clock_of(label)?)),
        TimeOrigin::ClockColumn(_) => None,
    };
    let mut warnings: Vec<crate::table::plausibility::TimeWarning>;
    let (times, note) = match single {
        Some((label, clock)) if is_barycentric_tdb(&clock) => {
            let times = parse_barycentric_time_column(df, &clock, &file, &columns.time, &leap)?;
            warnings =
                crate::table::plausibility::check_times(&file, &columns.time, &clock.label(), clock.format, &times)?;
            warnings.extend(crate::table::plausibility::float_time_resolution(df, &file, &columns.time));
            (times, format!("times read as {label} (already barycentric)"))
        }
        _ => {
            let Some(source) = request.source.clone() else {
                return Err(TableError::File {
                    file,
                    message: format!(
                        "column '{}': these times must be carried to the barycentre, which needs the target's position (a source)",
                        columns.time
                    ),
                });
            };
            let corrector = reference.corrector(source.clone(), DelayOptions::default());
            let (clock, clock_column, said) = match (&request.times, single) {
                (TimeOrigin::ClockColumn(c), _) => (None, Some(c.clone()), format!("the clocks in column '{c}'")),
                (TimeOrigin::Clock(_), Some((label, clock))) => (Some(clock), None, label.to_string()),
                (TimeOrigin::Clock(label), None) => (Some(clock_of(label)?), None, label.clone()),
            };
            let table_request = TableRequest {
                time_column: columns.time.clone(),
                clock,
                clock_column,
                observer: request.observer.clone(),
            };
            let (corrected, correction) = correct_table(df, &file, &table_request, &corrector)?;
            warnings = correction.warnings;
            let bjd = clock_of("bjd_tdb")?;
            (
                parse_barycentric_time_column(&corrected, &bjd, &file, "bjd_tdb", &leap)?,
                format!("times carried from {said} to BJD_TDB for {} with {}", source.name, reference.ephemeris.name()),
            )
        }
    };
    // values and uncertainties straight from the table's numbers (no text round trip)
    let values = measured_number_column(df, &file, &columns.value)?;
    let errors = columns.error.as_deref().map(|c| measured_number_column(df, &file, c)).transpose()?;
    let bands = columns.band.as_deref().map(|c| text_column(df, &file, c)).transpose()?;
    let mut lc = assemble_measured(&file, columns, &times, values, errors, bands.as_deref(), &|i| i + 1)?;
    lc.warnings = warnings;
    Ok((lc, note))
}
