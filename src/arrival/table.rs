//! Barycentric correction of a whole table: the user names the time column, its clock
//! (format, scale, reference point — for all rows, or per row from a clock column), the
//! observer (geocentre, one site, a site per row, or spacecraft positions per row); every
//! other column passes through and each delay term is added as its own column.

use std::collections::BTreeMap;

use polars::prelude::*;
use rayon::prelude::*;

use std::path::Path;

use super::correction::{ArrivalError, BarycentricCorrector, Corrected, ReferencePoint};
use super::row_batches::{CorrectionPath, CorrectionPlan, KeyCounts, RowObserver, RowPath, RowTime};
use crate::observer::{Observer, PositionOrigin, Site, SpacecraftPosition};
use crate::table::blocks::{CsvBlockReader, CsvBlockWriter, one_line_per_row};
use crate::table::plausibility::TimeSpanCheck;
use crate::table::{Provenance, TableError, float_column, text_column};
use crate::time::{Instant, TimeFormat, TimeScale, parse_time};

/// How the times of a column are written: format, scale and reference point.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub struct ClockSpec {
    /// Text format.
    pub format: TimeFormat,
    /// Time scale.
    pub scale: TimeScale,
    /// Where the times are referred to.
    pub reference: ReferencePoint,
}

impl ClockSpec {
    /// Reads a clock label `<kind>_<scale>`: kind `jd`, `mjd`, `rjd` (JD − 2400000), `iso`
    /// at the observer; `hjd`, `hmjd` heliocentric; `bjd`, `bmjd` barycentric; scale `utc`,
    /// `tai`, `tt`, `tdb`, `tcb`, `gps`. Examples: `jd_utc`, `hjd_utc`, `bjd_tdb`, `mjd_tt`.
    pub fn parse_label(label: &str) -> Result<ClockSpec, ClockLabelError> {
        let lower = label.trim().to_ascii_lowercase().replace([' ', '-'], "_");
        let (kind, scale) = lower.rsplit_once('_').ok_or_else(|| Self::help(label))?;
        let scale = TimeScale::parse(scale).ok_or_else(|| Self::help(label))?;
        let (format, reference) = match kind {
            "jd" => (TimeFormat::Jd, ReferencePoint::Observer),
            "mjd" => (TimeFormat::Mjd, ReferencePoint::Observer),
            "rjd" => (TimeFormat::ReducedJd, ReferencePoint::Observer),
            "iso" => (TimeFormat::Iso, ReferencePoint::Observer),
            "hjd" => (TimeFormat::Jd, ReferencePoint::Heliocentric),
            "hmjd" => (TimeFormat::Mjd, ReferencePoint::Heliocentric),
            "bjd" => (TimeFormat::Jd, ReferencePoint::Barycentric),
            "bmjd" => (TimeFormat::Mjd, ReferencePoint::Barycentric),
            _ => return Err(Self::help(label)),
        };
        Ok(ClockSpec { format, scale, reference })
    }

    /// The label `<kind>_<scale>` (lower case, `rjd` for reduced JD) that
    /// [`ClockSpec::parse_label`] reads back as this clock, e.g. `bjd_tdb`, `hmjd_utc`.
    pub fn label(&self) -> String {
        clock_label(self)
    }

    fn help(label: &str) -> ClockLabelError {
        ClockLabelError { label: label.to_string() }
    }
}

/// A clock label that is not `<kind>_<scale>`.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error(
    "'{label}' is not a clock label; use <kind>_<scale> with kind jd, mjd, rjd, iso, hjd, hmjd, bjd, bmjd and scale utc, tai, tt, tdb, tcb, gps (e.g. jd_utc, hjd_utc, bjd_tdb, mjd_tt)"
)]
pub struct ClockLabelError {
    /// The label given.
    pub label: String,
}

impl std::str::FromStr for ClockSpec {
    type Err = ClockLabelError;
    fn from_str(label: &str) -> Result<ClockSpec, ClockLabelError> {
        ClockSpec::parse_label(label)
    }
}

/// Who observed each row.
#[derive(Debug, Clone, PartialEq)]
pub enum ObserverSpec {
    /// All rows at the geocentre.
    Geocentre,
    /// All rows at one site.
    Site(Site),
    /// A site per row, named in `column`, looked up in `sites`.
    SiteColumn {
        /// Column holding each row's site name (`geocentre` for the geocentre).
        column: String,
        /// The described sites, by the name used in `column`.
        sites: BTreeMap<String, Site>,
    },
    /// A spacecraft with x, y, z position columns in km.
    Spacecraft {
        /// Names of the x, y and z columns, km, ICRF axes.
        columns: [String; 3],
        /// Whether the positions are geocentric or barycentric.
        origin: PositionOrigin,
    },
}

/// What to correct in a table.
#[derive(Debug, Clone, PartialEq)]
pub struct TableRequest {
    /// Column holding the times.
    pub time_column: String,
    /// Clock of all rows, unless `clock_column` is given.
    pub clock: Option<ClockSpec>,
    /// Column holding a clock label per row (see [`ClockSpec::parse_label`]).
    pub clock_column: Option<String>,
    /// Observer(s).
    pub observer: ObserverSpec,
}

impl TableRequest {
    /// Columns that must be read as text (times, clock labels, site names) so that no digit
    /// or label is altered by type inference.
    pub fn text_columns(&self) -> Vec<&str> {
        let mut columns = vec![self.time_column.as_str()];
        columns.extend(self.clock_column.as_deref());
        if let ObserverSpec::SiteColumn { column, .. } = &self.observer {
            columns.push(column);
        }
        columns
    }
}

/// Summary of a table correction.
#[derive(Debug, Clone, PartialEq, Default, serde::Serialize, serde::Deserialize)]
pub struct TableSummary {
    /// Rows corrected.
    pub rows: usize,
    /// Rows whose UTC date lies beyond the leap-second table's validity horizon.
    pub rows_beyond_leap_second_horizon: usize,
    /// The largest number of days beyond that horizon.
    pub max_days_beyond_leap_second_horizon: i64,
    /// Rows at a site whose UT1 − UTC came from a table (the rest assumed UT1 = UTC).
    pub rows_with_earth_orientation_table: usize,
    /// Rows corrected through interpolation nodes (≤ 1 ns from the exact correction); the
    /// rest were corrected exactly, row by row.
    #[serde(default)]
    pub rows_interpolated: usize,
    /// Rows corrected exactly but with precession–nutation and the geocentric TDB − TT
    /// interpolated from daily nodes (the two-speed exact path, ≤ 3e-12 s from the
    /// exact correction; `arrival::slow_terms`).
    #[serde(default)]
    pub rows_with_interpolated_slow_terms: usize,
    /// Smallest and largest total correction, s.
    pub min_total_correction_s: f64,
    /// Largest total correction, s.
    pub max_total_correction_s: f64,
    /// Warnings about the times read ([`crate::table::plausibility`]): day numbers far
    /// from the modern era, a floating-point time column coarser than 1 µs.
    #[serde(default)]
    pub warnings: Vec<crate::table::plausibility::TimeWarning>,
}

/// Names of the columns added to the table, in order.
pub const ADDED_COLUMNS: [&str; 13] = [
    "bjd_tdb",
    "bjd_tdb_jd1",
    "bjd_tdb_jd2",
    "observer_tdb",
    "clock_to_tt_s",
    "einstein_delay_s",
    "roemer_delay_s",
    "curvature_delay_s",
    "shapiro_sun_delay_s",
    "shapiro_planets_delay_s",
    "heliocentric_removed_s",
    "total_correction_s",
    "input_clock",
];

/// Corrects every row of `df` (read from `file`), in parallel, and returns the table with
/// the columns of [`ADDED_COLUMNS`] appended. The first bad row stops the work with an
/// error naming file, row and column; nothing partial is returned.
pub fn correct_table(
    df: &DataFrame,
    file: &str,
    request: &TableRequest,
    corrector: &BarycentricCorrector,
) -> Result<(DataFrame, TableSummary), TableError> {
    correct_rows_of_table(df, file, request, corrector, CorrectionPath::Automatic, false)
        .map(|(out, summary, _)| (out, summary))
}

/// The geometry of one corrected row: where the observer was and which direction the
/// correction used, for models that refine the source position afterwards.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RowGeometry {
    /// The observer's barycentric position at the arrival, ICRS axes, km (`None` when the
    /// row was given already at the barycentre, e.g. clock `bjd_tdb`).
    pub observer_barycentric_km: Option<[f64; 3]>,
    /// The unit vector towards the source used for the row's Rømer delay, ICRS (at the
    /// observer's TDB, with the source's own space motion applied).
    pub source_unit: [f64; 3],
}

/// As [`correct_table`], and also the [`RowGeometry`] of every row (input order). The
/// table's columns are exactly those of [`correct_table`].
pub fn correct_table_with_geometry(
    df: &DataFrame,
    file: &str,
    request: &TableRequest,
    corrector: &BarycentricCorrector,
) -> Result<(DataFrame, TableSummary, Vec<RowGeometry>), TableError> {
    correct_rows_of_table(df, file, request, corrector, CorrectionPath::Automatic, true)
}

/// As [`correct_table_with_geometry`], choosing how rows are corrected: through the
/// interpolation nodes of [`super::row_batches`] where they pay (the default of the other
/// entry points; ≤ 1 ns from the exact correction, see [`super::interpolated`]), or every
/// row exactly.
pub fn correct_table_along(
    df: &DataFrame,
    file: &str,
    request: &TableRequest,
    corrector: &BarycentricCorrector,
    path: CorrectionPath,
) -> Result<(DataFrame, TableSummary, Vec<RowGeometry>), TableError> {
    correct_rows_of_table(df, file, request, corrector, path, true)
}

fn correct_rows_of_table(
    df: &DataFrame,
    file: &str,
    request: &TableRequest,
    corrector: &BarycentricCorrector,
    path: CorrectionPath,
    want_geometry: bool,
) -> Result<(DataFrame, TableSummary, Vec<RowGeometry>), TableError> {
    let n = df.height();
    refuse_added_column_names(df, file)?;
    let block = parse_rows(df, file, request, corrector, 0)?;
    let counts = if path == CorrectionPath::Automatic {
        KeyCounts::of_rows(corrector, &block.observers, &block.rows)
    } else {
        KeyCounts::default()
    };
    let mut check = TimeSpanCheck::new(file, &request.time_column);
    record_times(&mut check, 0, &block.rows, &block.clocks);
    let mut warnings = check.finish()?;
    warnings.extend(crate::table::plausibility::float_time_resolution(df, file, &request.time_column));
    let plan = CorrectionPlan::new(corrector, &block.observers, &counts, path);
    let mut summary = RunningSummary::new(n);
    summary.summary.warnings = warnings;
    let mut geometry = Vec::with_capacity(if want_geometry { n } else { 0 });
    let mut columns = AddedColumns::with_capacity(n);
    // Results are held one block at a time; the output columns grow block by block.
    for start in (0..block.rows.len()).step_by(RESULT_BLOCK_ROWS) {
        let range = start..(start + RESULT_BLOCK_ROWS).min(block.rows.len());
        let results = plan.correct(&block.rows[range.clone()]);
        let rows = &block.rows[range.clone()];
        let clocks = &block.clocks[range];
        if want_geometry {
            for (result, _) in &results {
                if let Ok(c) = result {
                    geometry.push(RowGeometry {
                        observer_barycentric_km: c.observer_barycentric_km,
                        source_unit: corrector.source().direction_at(&c.observer_tdb).unit,
                    });
                }
            }
        }
        summary.add_block(file, request, corrector, start, rows, clocks, results, &mut columns)?;
    }
    if let Some(e) = block.unreadable {
        return Err(e);
    }
    drop(plan);
    let out = columns.append_to(df.clone(), file)?;
    Ok((out, summary.finish(), geometry))
}

/// Rows whose results are held at once by the whole-table path.
const RESULT_BLOCK_ROWS: usize = 1 << 16;

/// Refuses a table that already has a column the correction adds.
fn refuse_added_column_names(df: &DataFrame, file: &str) -> Result<(), TableError> {
    match ADDED_COLUMNS.iter().find(|name| df.get_column_names().iter().any(|c| c.as_str() == **name)) {
        Some(name) => Err(TableError::File {
            file: file.to_string(),
            message: format!("the input already has a column '{name}', which the correction adds; rename it first"),
        }),
        None => Ok(()),
    }
}

/// The rows of one block of a table, read: the fixed observers (the geocentre first), the
/// rows before the first unreadable one with their clocks, and that row's error.
struct ParsedRows {
    observers: Vec<Observer>,
    rows: Vec<RowTime>,
    clocks: Vec<ClockSpec>,
    unreadable: Option<TableError>,
}

/// Reads the times, clocks and observers of `df`, whose first row is data row
/// `first_row + 1` of `file`. An unknown site or a missing column is an error at once; an
/// unreadable time or clock ends the rows read and is handed back.
fn parse_rows(
    df: &DataFrame,
    file: &str,
    request: &TableRequest,
    corrector: &BarycentricCorrector,
    first_row: usize,
) -> Result<ParsedRows, TableError> {
    let n = df.height();
    let time_text = text_cells(df, file, &request.time_column)?;
    let times = cells(&time_text);
    let clock_text = match &request.clock_column {
        Some(c) => Some(text_cells(df, file, c)?),
        None => None,
    };
    let clock_labels = clock_text.as_ref().map(cells);
    let (observers, row_observers) = observers_per_row(df, file, &request.observer, first_row)?;
    let cell = |row: usize, column: &str, message: String| TableError::Cell {
        file: file.to_string(),
        row: first_row + row + 1,
        column: column.to_string(),
        message,
    };
    let leap = corrector.converter().leap_seconds();
    let parse = |i: usize| -> Result<(RowTime, ClockSpec), TableError> {
        let clock = match (&clock_labels, request.clock) {
            (Some(labels), _) => {
                let col = request.clock_column.as_deref().unwrap_or("");
                let label = labels[i].ok_or_else(|| cell(i, col, "empty clock label".into()))?;
                ClockSpec::parse_label(label).map_err(|m| cell(i, col, m.to_string()))?
            }
            (None, Some(c)) => c,
            (None, None) => {
                return Err(TableError::File {
                    file: file.to_string(),
                    message: "no clock given: name a clock for all rows or a clock column".into(),
                });
            }
        };
        let text = times[i].ok_or_else(|| cell(i, &request.time_column, "empty time cell".into()))?;
        let time = parse_time(text, clock.format, clock.scale, leap)
            .map_err(|e| cell(i, &request.time_column, e.to_string()))?;
        let observer = row_observers.get(i).copied().unwrap_or(RowObserver::Fixed(0));
        Ok((RowTime { time, reference: clock.reference, observer }, clock))
    };
    let parsed: Vec<Option<(RowTime, ClockSpec)>> = (0..n).into_par_iter().map(|i| parse(i).ok()).collect();
    // Rows before the first unreadable one are corrected, so that the first bad row of
    // either kind is the one reported.
    let readable = parsed.iter().position(Option::is_none).unwrap_or(n);
    let unreadable = (readable < n).then(|| parse(readable).err()).flatten();
    let (rows, clocks): (Vec<RowTime>, Vec<ClockSpec>) = parsed.into_iter().take(readable).flatten().unzip();
    Ok(ParsedRows { observers, rows, clocks, unreadable })
}

/// The summary of a correction, gathered block by block, with the clock labels seen.
struct RunningSummary {
    summary: TableSummary,
    labels: Vec<(ClockSpec, String)>,
}

impl RunningSummary {
    fn new(rows: usize) -> RunningSummary {
        RunningSummary {
            summary: TableSummary {
                rows,
                min_total_correction_s: f64::INFINITY,
                max_total_correction_s: f64::NEG_INFINITY,
                ..Default::default()
            },
            labels: Vec::new(),
        }
    }

    /// Takes in the results of `rows` (whose first is row `first + 1` of the block's
    /// numbering in `file`), appending their output values to `columns`; the first failed
    /// correction is the error.
    #[allow(clippy::too_many_arguments)]
    fn add_block(
        &mut self,
        file: &str,
        request: &TableRequest,
        corrector: &BarycentricCorrector,
        first: usize,
        rows: &[RowTime],
        clocks: &[ClockSpec],
        results: Vec<(Result<Corrected, ArrivalError>, RowPath)>,
        columns: &mut impl RowSink,
    ) -> Result<(), TableError> {
        for (k, (result, path)) in results.into_iter().enumerate() {
            let c = result.map_err(|e| TableError::Cell {
                file: file.to_string(),
                row: first + k + 1,
                column: request.time_column.clone(),
                message: e.to_string(),
            })?;
            let d = &c.delays;
            let total = d.clock_to_tt_s + d.einstein_s + d.barycentric_s() - d.heliocentric_removed_s;
            let label = self.tally(corrector, &rows[k].time, &clocks[k], path, total, c.earth_orientation_from_table);
            columns.push(&c, total, label, &self.labels[label].1);
        }
        Ok(())
    }

    /// As [`RunningSummary::add_block`] for rows already turned into their output text
    /// ([`RowOutcome::of`], in parallel), appended to `text`.
    #[allow(clippy::too_many_arguments)]
    fn add_outcomes(
        &mut self,
        file: &str,
        request: &TableRequest,
        corrector: &BarycentricCorrector,
        first: usize,
        rows: &[RowTime],
        clocks: &[ClockSpec],
        outcomes: Vec<(Result<RowOutcome, ArrivalError>, RowPath)>,
        text: &mut AddedText,
    ) -> Result<(), TableError> {
        for (k, (result, path)) in outcomes.into_iter().enumerate() {
            let mut outcome = result.map_err(|e| TableError::Cell {
                file: file.to_string(),
                row: first + k + 1,
                column: request.time_column.clone(),
                message: e.to_string(),
            })?;
            let total = outcome.text.values[9];
            outcome.text.label =
                self.tally(corrector, &rows[k].time, &clocks[k], path, total, outcome.earth_orientation_from_table);
            text.rows.push(outcome.text);
        }
        Ok(())
    }

    /// Counts one corrected row (input time `input` in clock `clock`, corrected by `path`,
    /// total correction `total` s) in the summary; returns the index of its clock label.
    fn tally(
        &mut self,
        corrector: &BarycentricCorrector,
        input: &Instant,
        clock: &ClockSpec,
        path: RowPath,
        total: f64,
        earth_orientation_from_table: bool,
    ) -> usize {
        let summary = &mut self.summary;
        summary.rows_interpolated += usize::from(path == RowPath::TableNodes);
        summary.rows_with_interpolated_slow_terms += usize::from(path == RowPath::SlowTermNodes);
        if input.scale() == TimeScale::Utc
            && let Some(days) = corrector.converter().leap_seconds().days_beyond_horizon(input.mjd_day())
        {
            summary.rows_beyond_leap_second_horizon += 1;
            summary.max_days_beyond_leap_second_horizon = summary.max_days_beyond_leap_second_horizon.max(days);
        }
        if earth_orientation_from_table {
            summary.rows_with_earth_orientation_table += 1;
        }
        summary.min_total_correction_s = summary.min_total_correction_s.min(total);
        summary.max_total_correction_s = summary.max_total_correction_s.max(total);
        match self.labels.iter().position(|(k, _)| k == clock) {
            Some(j) => j,
            None => {
                self.labels.push((*clock, clock_label(clock)));
                self.labels.len() - 1
            }
        }
    }

    /// The clock labels seen, sorted.
    fn clocks_seen(&self) -> Vec<String> {
        let mut labels: Vec<String> = self.labels.iter().map(|(_, l)| l.clone()).collect();
        labels.sort();
        labels.dedup();
        labels
    }

    fn finish(mut self) -> TableSummary {
        if self.summary.rows == 0 || self.summary.min_total_correction_s > self.summary.max_total_correction_s {
            self.summary.min_total_correction_s = 0.0;
            self.summary.max_total_correction_s = 0.0;
        }
        self.summary
    }
}

/// Where the output values of corrected rows go, row by row.
trait RowSink {
    /// One row: its correction, total correction (s) and clock label (index and text).
    fn push(&mut self, c: &Corrected, total: f64, label: usize, text: &str);
}

/// The output values of one row, for writing as text.
struct RowText {
    bjd_tdb: (i64, u64),
    observer_tdb: (i64, u64),
    values: [f64; 10],
    label: usize,
}

/// A corrected row as [`RunningSummary::add_outcomes`] takes it: its output text (the
/// label still to be set) and whether its Earth orientation came from the table.
struct RowOutcome {
    text: RowText,
    earth_orientation_from_table: bool,
}

impl RowOutcome {
    fn of(c: &Corrected) -> RowOutcome {
        let d = &c.delays;
        let total = d.clock_to_tt_s + d.einstein_s + d.barycentric_s() - d.heliocentric_removed_s;
        RowOutcome {
            text: RowText {
                bjd_tdb: jd_text_parts(&c.bjd_tdb),
                observer_tdb: jd_text_parts(&c.observer_tdb),
                values: output_values(c, total),
                label: 0,
            },
            earth_orientation_from_table: c.earth_orientation_from_table,
        }
    }
}

/// The output values of a block of rows, written as text after the other columns.
#[derive(Default)]
struct AddedText {
    rows: Vec<RowText>,
}

impl AddedText {
    /// Appends the fields of rows `first..first + count` to `out`, each after `separator`,
    /// as polars' CSV writer writes them (JD texts and labels unquoted, numbers in the
    /// shortest form that reads back to the same `f64`).
    fn write_fields(&self, first: usize, count: usize, separator: u8, labels: &[String], out: &mut Vec<u8>) {
        let mut number = zmij::Buffer::new();
        for r in &self.rows[first..first + count] {
            out.push(separator);
            push_jd_text(out, r.bjd_tdb);
            for v in &r.values[..2] {
                out.push(separator);
                push_short(out, number.format(*v).as_bytes());
            }
            out.push(separator);
            push_jd_text(out, r.observer_tdb);
            for v in &r.values[2..] {
                out.push(separator);
                push_short(out, number.format(*v).as_bytes());
            }
            out.push(separator);
            out.extend_from_slice(labels[r.label].as_bytes());
        }
    }
}

/// The ten numeric output columns of a row, in the order of [`ADDED_COLUMNS`] (without the
/// texts).
fn output_values(c: &Corrected, total: f64) -> [f64; 10] {
    let d = &c.delays;
    let (jd1, jd2) = c.bjd_tdb.jd_two_part();
    [
        jd1,
        jd2,
        d.clock_to_tt_s,
        d.einstein_s,
        d.roemer_s,
        d.curvature_s,
        d.shapiro_sun_s,
        d.shapiro_planets_s,
        d.heliocentric_removed_s,
        total,
    ]
}

impl RowSink for AddedColumns {
    fn push(&mut self, c: &Corrected, total: f64, _label: usize, text: &str) {
        self.push_row(c, total, text);
    }
}

/// The columns of [`ADDED_COLUMNS`] for a run of rows, filled row by row.
struct AddedColumns {
    values: Vec<Vec<f64>>,
    bjd_text: StringChunkedBuilder,
    observer_text: StringChunkedBuilder,
    clock_text: StringChunkedBuilder,
    buffer: String,
}

impl AddedColumns {
    fn with_capacity(n: usize) -> AddedColumns {
        AddedColumns {
            values: (0..10).map(|_| Vec::with_capacity(n)).collect(),
            bjd_text: StringChunkedBuilder::new("bjd_tdb".into(), n),
            observer_text: StringChunkedBuilder::new("observer_tdb".into(), n),
            clock_text: StringChunkedBuilder::new("input_clock".into(), n),
            buffer: String::with_capacity(32),
        }
    }

    fn push_row(&mut self, c: &Corrected, total: f64, label: &str) {
        write_jd_text(&mut self.buffer, &c.bjd_tdb);
        self.bjd_text.append_value(&self.buffer);
        write_jd_text(&mut self.buffer, &c.observer_tdb);
        self.observer_text.append_value(&self.buffer);
        self.clock_text.append_value(label);
        for (col, v) in self.values.iter_mut().zip(output_values(c, total)) {
            col.push(v);
        }
    }

    /// `df` with the columns appended, in the order of [`ADDED_COLUMNS`].
    fn append_to(mut self, mut out: DataFrame, file: &str) -> Result<DataFrame, TableError> {
        let mut add = |column: Column| -> Result<(), TableError> {
            out.with_column(column)
                .map(|_| ())
                .map_err(|e| TableError::File { file: file.to_string(), message: e.to_string() })
        };
        add(self.bjd_text.finish().into_column())?;
        for (k, name) in ADDED_COLUMNS[1..3].iter().enumerate() {
            add(Column::new((*name).into(), std::mem::take(&mut self.values[k])))?;
        }
        add(self.observer_text.finish().into_column())?;
        for (k, name) in ADDED_COLUMNS[4..12].iter().enumerate() {
            add(Column::new((*name).into(), std::mem::take(&mut self.values[k + 2])))?;
        }
        add(self.clock_text.finish().into_column())?;
        Ok(out)
    }
}

/// Blocks up to which [`correct_text_table_in_blocks`] keeps the blocks of its first pass in
/// memory for the second instead of reading the file again (two blocks of the default
/// 2¹⁶ rows hold the 10⁵ rows of a night-by-night table, ~10 MB with a few columns).
const RETAINED_BLOCKS: usize = 2;

/// Rows corrected at a time within a block by [`correct_text_table_in_blocks`].
const CORRECTED_RUN_ROWS: usize = 4096;

/// Corrects the CSV/TSV table `input` to BJD_TDB and writes `output` (CSV/TSV) block by
/// block: memory is bounded by a few blocks of `block_rows`, not by the file. The rows
/// pass twice: once for the times (the plan of [`CorrectionPlan`], made from the same
/// [`KeyCounts`] as for the whole table), then for correcting and writing each block; a
/// file of more than [`RETAINED_BLOCKS`] blocks is read twice, a smaller one is kept in
/// memory between the passes. The output is byte for
/// byte what [`correct_table_along`] and [`crate::table::write_table`] write for the same
/// input, the errors are the same (first bad row, with file, row and column), and nothing
/// is left behind on an error (the output is written atomically, with `provenance` in its
/// sidecar). Returns the summary and the clock labels seen (sorted).
#[allow(clippy::too_many_arguments)]
pub fn correct_text_table_in_blocks(
    input: &Path,
    output: &Path,
    request: &TableRequest,
    corrector: &BarycentricCorrector,
    path: CorrectionPath,
    block_rows: usize,
    provenance: &Provenance,
) -> Result<(TableSummary, Vec<String>), TableError> {
    let file = input.display().to_string();
    let mut reader = CsvBlockReader::open(input, &request.text_columns(), block_rows)?;
    if let Some(name) = ADDED_COLUMNS.iter().find(|name| reader.schema().contains(name)) {
        return Err(TableError::File {
            file,
            message: format!("the input already has a column '{name}', which the correction adds; rename it first"),
        });
    }
    // First pass: the plan, from the key counts of the rows before the first unreadable one.
    let mut counts = KeyCounts::default();
    let mut observers = Vec::new();
    let mut rows = 0;
    let mut readable: Option<usize> = None;
    let mut check = TimeSpanCheck::new(&file, &request.time_column);
    // The blocks of a small table are kept from the first pass for the second (no second
    // reading and parsing); a larger one is read again, so that memory stays bounded.
    let mut retained: Option<Vec<(usize, DataFrame, ParsedRows)>> = Some(Vec::new());
    while let Some((first, df)) = reader.next_block()? {
        let block = parse_rows(&df, &file, request, corrector, first)?;
        if readable.is_none() {
            record_times(&mut check, first, &block.rows, &block.clocks);
            if path == CorrectionPath::Automatic {
                counts.merge(KeyCounts::of_rows(corrector, &block.observers, &block.rows));
            }
            if block.unreadable.is_some() {
                readable = Some(first + block.rows.len());
            }
        }
        rows += df.height();
        observers.clone_from(&block.observers);
        if let Some(blocks) = retained.as_mut() {
            blocks.push((first, df, block));
            if blocks.len() > RETAINED_BLOCKS {
                retained = None;
            }
        }
    }
    let warnings = check.finish()?;
    let plan = CorrectionPlan::new(corrector, &observers, &counts, path);
    // Second pass: correct and write block by block.
    let mut retained = retained.map(Vec::into_iter);
    if retained.is_none() {
        reader.rewind()?;
    }
    let mut next_block = || -> Result<Option<(usize, DataFrame, ParsedRows)>, TableError> {
        if let Some(blocks) = retained.as_mut() {
            return Ok(blocks.next());
        }
        match reader.next_block()? {
            Some((first, df)) => {
                let block = parse_rows(&df, &file, request, corrector, first)?;
                Ok(Some((first, df, block)))
            }
            None => Ok(None),
        }
    };
    let mut writer = CsvBlockWriter::create(output, &[input])?;
    let mut summary = RunningSummary::new(rows);
    summary.summary.warnings = warnings;
    let mut text = AddedText::default();
    while let Some((first, df, block)) = next_block()? {
        let height = df.height();
        if one_line_per_row(&df) {
            // Corrected a run of rows at a time, so that the corrections in flight stay
            // small (and in cache); the text values of the block are gathered in one
            // buffer kept from block to block.
            text.rows.clear();
            for start in (0..block.rows.len()).step_by(CORRECTED_RUN_ROWS) {
                let run = start..(start + CORRECTED_RUN_ROWS).min(block.rows.len());
                let (rows, clocks) = (&block.rows[run.clone()], &block.clocks[run]);
                // corrected and turned into text in parallel; only the tally is in order
                let outcomes: Vec<(Result<RowOutcome, ArrivalError>, RowPath)> = rows
                    .par_iter()
                    .map(|r| {
                        let (result, path) = plan.correct_row(r);
                        (result.map(|c| RowOutcome::of(&c)), path)
                    })
                    .collect();
                summary.add_outcomes(&file, request, corrector, first + start, rows, clocks, outcomes, &mut text)?;
            }
            if let Some(e) = block.unreadable {
                return Err(e);
            }
            let labels: Vec<String> = summary.labels.iter().map(|(_, l)| l.clone()).collect();
            let separator = writer.separator();
            let mut df = df;
            writer.write_block_appending(&mut df, &ADDED_COLUMNS, |row, count, out| {
                text.write_fields(row, count, separator, &labels, out)
            })?;
        } else {
            let results = plan.correct(&block.rows);
            let mut columns = AddedColumns::with_capacity(block.rows.len());
            summary.add_block(&file, request, corrector, first, &block.rows, &block.clocks, results, &mut columns)?;
            if let Some(e) = block.unreadable {
                return Err(e);
            }
            let mut out = columns.append_to(df, &file)?;
            writer.write_block(&mut out)?;
        }
        if readable.is_some_and(|r| first + height >= r) {
            break;
        }
    }
    writer.finish(provenance)?;
    let clocks = summary.clocks_seen();
    Ok((summary.finish(), clocks))
}

/// Records the times of `rows` (the first being data row `first + 1`) for the
/// plausibility check of [`crate::table::plausibility`]: a refusal where day numbers are
/// clearly in the other convention than their clock label, else warnings.
fn record_times(check: &mut TimeSpanCheck, first: usize, rows: &[RowTime], clocks: &[ClockSpec]) {
    let mut labels: Vec<(ClockSpec, String)> = Vec::new();
    for (i, (input, clock)) in rows.iter().zip(clocks).enumerate() {
        let label = match labels.iter().position(|(k, _)| k == clock) {
            Some(j) => &labels[j].1,
            None => {
                labels.push((*clock, clock_label(clock)));
                &labels[labels.len() - 1].1
            }
        };
        check.record(first + i + 1, label, clock.format, &input.time);
    }
}

/// The clock label of a row (`<kind>_<scale>`, as [`ClockSpec::parse_label`] reads it).
fn clock_label(clock: &ClockSpec) -> String {
    let kind = match (clock.reference, clock.format) {
        (ReferencePoint::Heliocentric, TimeFormat::Mjd) => "hmjd",
        (ReferencePoint::Heliocentric, _) => "hjd",
        (ReferencePoint::Barycentric, TimeFormat::Mjd) => "bmjd",
        (ReferencePoint::Barycentric, _) => "bjd",
        (_, f) => match f {
            TimeFormat::Jd => "jd",
            TimeFormat::Mjd => "mjd",
            TimeFormat::ReducedJd => "rjd",
            TimeFormat::Iso => "iso",
        },
    };
    format!("{kind}_{}", clock.scale.name())
}

/// The whole JD and its 14 decimals (~1 ns) as written in the JD text columns: the
/// integral JD (from noon) and the digits of the fraction, rounded, carried into the day.
fn jd_text_parts(t: &Instant) -> (i64, u64) {
    let (a, b) = t.jd_two_part();
    // a is half-integral: write from integer JD at noon plus fraction.
    let mut whole = (a + 0.5) as i64 - 1;
    let mut frac = b + 0.5;
    if frac >= 1.0 {
        frac -= 1.0;
        whole += 1;
    }
    // As `format_whole_and_fraction(whole, frac, 14)`.
    let scale = 10f64.powi(14);
    let mut digits = (frac * scale).round();
    if digits >= scale {
        digits -= scale;
        whole += 1;
    }
    (whole, digits as u64)
}

/// JD text with 14 decimals (~1 ns), written into `buffer` (cleared first).
fn write_jd_text(buffer: &mut String, t: &Instant) {
    let (whole, digits) = jd_text_parts(t);
    buffer.clear();
    buffer.push_str(&format!("{whole}.{digits:014}"));
}

/// Appends `bytes` to `out` (the same as `extend_from_slice`): 8 to 32 bytes, the length of
/// a formatted number, as two fixed-size copies that may overlap instead of a call to
/// `memcpy` for each of the ~12 fields of a row.
#[inline(always)]
fn push_short(out: &mut Vec<u8>, bytes: &[u8]) {
    let n = bytes.len();
    if !(8..=32).contains(&n) {
        out.extend_from_slice(bytes);
        return;
    }
    out.reserve(32);
    let at = out.len();
    let spare = out.spare_capacity_mut();
    if n >= 16 {
        let head: [u8; 16] = bytes[..16].try_into().unwrap_or([0; 16]);
        let tail: [u8; 16] = bytes[n - 16..].try_into().unwrap_or([0; 16]);
        for (d, b) in spare[..16].iter_mut().zip(head) {
            d.write(b);
        }
        for (d, b) in spare[n - 16..n].iter_mut().zip(tail) {
            d.write(b);
        }
    } else {
        let head: [u8; 8] = bytes[..8].try_into().unwrap_or([0; 8]);
        let tail: [u8; 8] = bytes[n - 8..].try_into().unwrap_or([0; 8]);
        for (d, b) in spare[..8].iter_mut().zip(head) {
            d.write(b);
        }
        for (d, b) in spare[n - 8..n].iter_mut().zip(tail) {
            d.write(b);
        }
    }
    // SAFETY: the n bytes after the old length were all written just above (the head and
    // the tail copies together cover 0..n, since n ≤ 2 × their size), within the reserved
    // capacity.
    unsafe { out.set_len(at + n) };
}

/// Appends the JD text of `parts` ([`jd_text_parts`]) to `out`: the same characters as
/// [`write_jd_text`].
fn push_jd_text(out: &mut Vec<u8>, (whole, digits): (i64, u64)) {
    if whole < 0 {
        out.push(b'-');
    }
    let mut w = whole.unsigned_abs();
    let mut text = [0u8; 20];
    let mut k = text.len();
    loop {
        k -= 1;
        text[k] = b'0' + (w % 10) as u8;
        w /= 10;
        if w == 0 {
            break;
        }
    }
    push_short(out, &text[k..]);
    out.push(b'.');
    let mut d = digits;
    let mut fraction = [b'0'; 14];
    for slot in fraction.iter_mut().rev() {
        *slot = b'0' + (d % 10) as u8;
        d /= 10;
    }
    if d > 0 {
        // More than 14 digits (not reached: the fraction is below one): as `{:014}` would.
        out.extend_from_slice(format!("{digits:014}").as_bytes());
        return;
    }
    out.extend_from_slice(&fraction);
}

/// A column cast to text, for [`cells`]; errors as [`text_column`]'s.
fn text_cells(df: &DataFrame, file: &str, name: &str) -> Result<StringChunked, TableError> {
    text_column(&df.head(Some(0)), file, name)?;
    let column = df.column(name).and_then(|c| c.cast(&DataType::String)).map_err(|e| TableError::Cell {
        file: file.to_string(),
        row: 0,
        column: name.to_string(),
        message: format!("cannot be read as text: {e}"),
    })?;
    column.str().cloned().map_err(|e| TableError::Cell {
        file: file.to_string(),
        row: 0,
        column: name.to_string(),
        message: e.to_string(),
    })
}

/// The cells of a text column, trimmed, `None` where empty (as [`text_column`] gives them,
/// without copying).
fn cells(text: &StringChunked) -> Vec<Option<&str>> {
    text.iter().map(|v| v.map(str::trim).filter(|s| !s.is_empty())).collect()
}

/// `e` with its row counted from the start of the file, for a block whose first row is data
/// row `first_row + 1`.
fn shift_row(e: TableError, first_row: usize) -> TableError {
    match e {
        TableError::Cell { file, row, column, message } => {
            TableError::Cell { file, row: if row == 0 { 0 } else { first_row + row }, column, message }
        }
        other => other,
    }
}

/// The distinct fixed observers (the geocentre first) and each row's observer.
fn observers_per_row(
    df: &DataFrame,
    file: &str,
    spec: &ObserverSpec,
    first_row: usize,
) -> Result<(Vec<Observer>, Vec<RowObserver>), TableError> {
    let n = df.height();
    Ok(match spec {
        ObserverSpec::Geocentre => (vec![Observer::Geocentre], vec![RowObserver::Fixed(0); n]),
        ObserverSpec::Site(s) => (vec![Observer::Geocentre, Observer::Site(s.clone())], vec![RowObserver::Fixed(1); n]),
        ObserverSpec::SiteColumn { column, sites } => {
            let names = text_column(df, file, column).map_err(|e| shift_row(e, first_row))?;
            let known = sites.keys().cloned().collect::<Vec<_>>().join(", ");
            let mut observers = vec![Observer::Geocentre];
            observers.extend(sites.values().cloned().map(Observer::Site));
            let rows = names
                .into_iter()
                .enumerate()
                .map(|(i, name)| {
                    let name = name.unwrap_or_default();
                    if name.eq_ignore_ascii_case("geocentre") || name.eq_ignore_ascii_case("geocenter") {
                        return Ok(RowObserver::Fixed(0));
                    }
                    sites.keys().position(|k| *k == name).map(|k| RowObserver::Fixed(k + 1)).ok_or_else(|| {
                        TableError::Cell {
                            file: file.to_string(),
                            row: first_row + i + 1,
                            column: column.clone(),
                            message: format!("unknown site '{name}'; described sites: {known} (or 'geocentre')"),
                        }
                    })
                })
                .collect::<Result<_, _>>()?;
            (observers, rows)
        }
        ObserverSpec::Spacecraft { columns, origin } => {
            let x = float_column(df, file, &columns[0]).map_err(|e| shift_row(e, first_row))?;
            let y = float_column(df, file, &columns[1]).map_err(|e| shift_row(e, first_row))?;
            let z = float_column(df, file, &columns[2]).map_err(|e| shift_row(e, first_row))?;
            let rows = (0..n)
                .map(|i| {
                    RowObserver::Spacecraft(SpacecraftPosition { position_km: [x[i], y[i], z[i]], origin: *origin })
                })
                .collect();
            (vec![Observer::Geocentre], rows)
        }
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn short_copies_equal_extend_from_slice_at_every_length() {
        let source: Vec<u8> = (0..40u8).map(|k| b'a' + k % 26).collect();
        for prefix in [0usize, 1, 7, 31] {
            for n in 0..=source.len() {
                let mut ours = vec![b'#'; prefix];
                let mut plain = ours.clone();
                push_short(&mut ours, &source[..n]);
                plain.extend_from_slice(&source[..n]);
                assert_eq!(ours, plain, "prefix {prefix}, length {n}");
            }
        }
    }

    #[test]
    fn clock_labels() {
        let c = ClockSpec::parse_label("HJD_UTC").unwrap();
        assert_eq!((c.format, c.scale, c.reference), (TimeFormat::Jd, TimeScale::Utc, ReferencePoint::Heliocentric));
        let c = ClockSpec::parse_label("bmjd_tdb").unwrap();
        assert_eq!((c.format, c.reference), (TimeFormat::Mjd, ReferencePoint::Barycentric));
        assert!(ClockSpec::parse_label("jd").is_err());
        assert!(ClockSpec::parse_label("xjd_utc").is_err());
        assert!(ClockSpec::parse_label("jd_ut2").is_err());
    }
}
