//! A table of event timings read from a file and carried to BJD_TDB: the input of the O–C
//! stage as one library call. Times in any clock (one label, or one per row) go through the
//! arrival stage ([`correct_table`]); kinds and errors are checked row by row, and every
//! error names file, row and column.

use std::path::Path;

use polars::prelude::DataFrame;

use super::{EventKind, Timing};
use crate::arrival::table::{ClockSpec, ObserverSpec, TableRequest, correct_table};
use crate::arrival::{DelayOptions, ReferenceData, Source};
use crate::table::{TableError, float_column, read_table, text_column};
use crate::time::{Instant, TimeFormat, TimeScale, parse_time};

/// Which file and columns hold the timings, and how their times are written.
#[derive(Debug, Clone, PartialEq)]
pub struct TimingTableSource<'a> {
    /// The table (.csv, .tsv or .parquet).
    pub path: &'a Path,
    /// Column of the event times.
    pub time_column: String,
    /// Clock of every row (e.g. `hjd_utc`), unless `clock_column` gives one per row.
    pub clock: Option<ClockSpec>,
    /// Column of a clock label per row.
    pub clock_column: Option<String>,
    /// Column of the 1σ error of each time, days.
    pub error_column: String,
    /// Column of the event kind (primary, secondary, maximum); all primary without one.
    pub kind_column: Option<String>,
    /// Column of an observer or source label per row (for per-source error scaling).
    pub origin_column: Option<String>,
    /// Where the times were taken.
    pub observer: ObserverSpec,
    /// The target; `None` is allowed only for times already in BJD_TDB (no delay is
    /// applied to them).
    pub source: Option<Source>,
}

/// The timings of a table, carried to BJD_TDB.
#[derive(Debug, Clone)]
pub struct TimingTable {
    /// The input file as text, for messages.
    pub file: String,
    /// The table as read.
    pub table: DataFrame,
    /// The table with the arrival stage's columns (`bjd_tdb_jd1`, delay terms, …) added.
    pub corrected: DataFrame,
    /// One timing per row, in row order (`row` 1-based).
    pub timings: Vec<Timing>,
    /// The instant each signal reached the observer, TDB (for the UTC shown beside a time).
    pub observer_tdb: Vec<Option<Instant>>,
    /// Warnings about the times read ([`crate::table::plausibility`]).
    pub warnings: Vec<crate::table::plausibility::TimeWarning>,
}

fn bad_row(file: &str, row: usize, column: &str, message: String) -> TableError {
    TableError::File { file: file.to_string(), message: format!("row {row}, column '{column}': {message}") }
}

/// Reads the timing table of `source`, carries every row to BJD_TDB with `reference` and
/// checks kinds (primary, secondary, maximum) and errors (finite, > 0 days).
pub fn read_timing_table(source: &TimingTableSource, reference: &ReferenceData) -> Result<TimingTable, TableError> {
    let file = source.path.display().to_string();
    let barycentric_tdb = source.clock_column.is_none()
        && source
            .clock
            .is_some_and(|c| c.reference == crate::arrival::ReferencePoint::Barycentric && c.scale == TimeScale::Tdb);
    let target = match (&source.source, barycentric_tdb) {
        (Some(s), _) => s.clone(),
        // No delay is applied to BJD_TDB rows, so any direction stands in for the target.
        (None, true) => Source::fixed_degrees("target", 0.0, 0.0)
            .map_err(|e| TableError::File { file: file.clone(), message: e.to_string() })?,
        (None, false) => {
            return Err(TableError::File {
                file,
                message: "these times must be carried to the barycentre, which needs the target's position (a source)"
                    .into(),
            });
        }
    };
    let corrector = reference.corrector(target, DelayOptions::default());
    let request = TableRequest {
        time_column: source.time_column.clone(),
        clock: source.clock,
        clock_column: source.clock_column.clone(),
        observer: source.observer.clone(),
    };
    let mut text_columns = request.text_columns();
    text_columns.extend(source.kind_column.as_deref());
    text_columns.extend(source.origin_column.as_deref());
    let table = read_table(source.path, &text_columns)?;
    let (corrected, correction) = correct_table(&table, &file, &request, &corrector)?;
    let errors = float_column(&table, &file, &source.error_column)?;
    let kinds = source.kind_column.as_deref().map(|c| text_column(&table, &file, c)).transpose()?;
    let origins = source.origin_column.as_deref().map(|c| text_column(&table, &file, c)).transpose()?;
    let jd1 = float_column(&corrected, &file, "bjd_tdb_jd1")?;
    let jd2 = float_column(&corrected, &file, "bjd_tdb_jd2")?;
    let mut timings = Vec::with_capacity(table.height());
    for i in 0..table.height() {
        let row = i + 1;
        let kind = match (&kinds, source.kind_column.as_deref()) {
            (Some(k), Some(column)) => {
                let text = k[i].as_deref().unwrap_or("");
                EventKind::parse(text).ok_or_else(|| {
                    bad_row(
                        &file,
                        row,
                        column,
                        format!("event kind '{text}' is not one of primary, secondary, maximum"),
                    )
                })?
            }
            _ => EventKind::Primary,
        };
        if !(errors[i].is_finite() && errors[i] > 0.0) {
            return Err(bad_row(
                &file,
                row,
                &source.error_column,
                format!("error {} d must be finite and > 0", errors[i]),
            ));
        }
        crate::table::check_uncertainty(errors[i], "d", &file, row, &source.error_column)?;
        timings.push(Timing {
            bjd_tdb: Instant::from_jd_two_part(TimeScale::Tdb, jd1[i], jd2[i]),
            error_d: errors[i],
            kind,
            source: origins.as_ref().and_then(|o| o[i].clone()),
            row,
        });
    }
    let leap = reference.converter.leap_seconds();
    let observer_tdb = match text_column(&corrected, &file, "observer_tdb") {
        Ok(texts) => texts
            .iter()
            .map(|t| t.as_deref().and_then(|t| parse_time(t, TimeFormat::Jd, TimeScale::Tdb, leap).ok()))
            .collect(),
        Err(_) => vec![None; table.height()],
    };
    Ok(TimingTable { file, table, corrected, timings, observer_tdb, warnings: correction.warnings })
}
