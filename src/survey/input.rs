//! Light curves from table columns: barycentric times relative to an epoch, values,
//! uncertainties and band labels, with every input error naming file, row and column.

use crate::arrival::ReferencePoint;
use crate::arrival::table::ClockSpec;
use crate::constants::SECONDS_PER_DAY;
use crate::periodogram::{LightCurve, SearchError, Series};
use crate::table::{TableError, check_uncertainty, map_text_cells, parse_cell_number};
use crate::time::{Instant, LeapSecondTable, TimeScale, parse_time};
use polars::prelude::DataFrame;

/// Names of the columns that make a light curve.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct LightCurveColumns {
    /// Times (text, any clock the caller has resolved to BJD_TDB first).
    pub time: String,
    /// Values: magnitudes or fluxes.
    pub value: String,
    /// 1-σ uncertainties, units of the values.
    pub error: Option<String>,
    /// Band (filter) label per row; any text.
    pub band: Option<String>,
}

/// A light curve read from a table, times in days from `epoch` (BJD_TDB).
#[derive(Debug, Clone, PartialEq)]
pub struct TableLightCurve {
    /// The file it came from (for messages).
    pub file: String,
    /// Columns it came from.
    pub columns: LightCurveColumns,
    /// Reference epoch: the first time's BJD_TDB day at noon (integral JD), TDB.
    pub epoch: Instant,
    /// Times, days since `epoch` (NaN where the cell was empty or not a number).
    pub time_d: Vec<f64>,
    /// Values (NaN where the cell was empty or NaN).
    pub value: Vec<f64>,
    /// Uncertainties, if a column was named.
    pub error: Option<Vec<f64>>,
    /// Band index per row, if a column was named; labels in `band_labels`.
    pub band: Option<Vec<u32>>,
    /// Band label text by band index.
    pub band_labels: Vec<String>,
    /// 1-based data row in the file of each entry.
    pub file_row: Vec<usize>,
    /// Warnings about the times read ([`crate::table::plausibility`]).
    pub warnings: Vec<crate::table::plausibility::TimeWarning>,
}

/// Reads a numeric cell: empty or `nan` → NaN (the row is dropped and counted later); text
/// that is not a number, an infinity or a number beyond ±[`MAX_ABS_CELL`](crate::table::MAX_ABS_CELL) (e.g. a
/// magnitude of 1e300, which would turn every power of a periodogram into NaN) is an error
/// naming file, row and column and the accepted range (see [`parse_cell_number`]).
pub fn numeric_cell(text: Option<&str>, file: &str, row: usize, column: &str) -> Result<f64, TableError> {
    let Some(s) = text.map(str::trim).filter(|s| !s.is_empty()) else {
        return Ok(f64::NAN);
    };
    parse_cell_number(s).map_err(|crate::table::CellNumberError(message)| TableError::Cell {
        file: file.to_string(),
        row,
        column: column.to_string(),
        message,
    })
}

/// Reads an uncertainty cell: as [`numeric_cell`] (empty or NaN → NaN, dropped and
/// counted), and a number must lie in [`MIN_UNCERTAINTY`](crate::table::MIN_UNCERTAINTY) … [`MAX_ABS_CELL`](crate::table::MAX_ABS_CELL)
/// ([`check_uncertainty`]); zero and negative values are left to the stage that uses the
/// curve, which names them.
pub fn uncertainty_cell(text: Option<&str>, file: &str, row: usize, column: &str) -> Result<f64, TableError> {
    let v = numeric_cell(text, file, row, column)?;
    if v.is_finite() && v > 0.0 {
        check_uncertainty(v, "", file, row, column)?;
    }
    Ok(v)
}

/// Whether a clock label already means BJD_TDB (or barycentric MJD in TDB): such times need
/// no correction and no source position.
pub fn is_barycentric_tdb(clock: &ClockSpec) -> bool {
    clock.reference == ReferencePoint::Barycentric && clock.scale == TimeScale::Tdb
}

/// Parses barycentric TDB times written in `clock` (a [`is_barycentric_tdb`] clock).
/// Empty cells give `None` (the row is dropped and counted); unreadable text is an error.
pub fn parse_barycentric_times(
    texts: &[Option<String>],
    clock: &ClockSpec,
    file: &str,
    column: &str,
    leap: &LeapSecondTable,
) -> Result<Vec<Option<Instant>>, TableError> {
    if !is_barycentric_tdb(clock) {
        return Err(TableError::File {
            file: file.to_string(),
            message: format!(
                "column '{column}': times in this clock must first be carried to the barycentre (name the site and source); only bjd_tdb or bmjd_tdb times are read directly"
            ),
        });
    }
    texts
        .iter()
        .enumerate()
        .map(|(i, t)| match t.as_deref().map(str::trim).filter(|s| !s.is_empty() && !s.eq_ignore_ascii_case("nan")) {
            None => Ok(None),
            Some(s) => parse_time(s, clock.format, clock.scale, leap).map(Some).map_err(|e| TableError::Cell {
                file: file.to_string(),
                row: i + 1,
                column: column.to_string(),
                message: e.to_string(),
            }),
        })
        .collect()
}

/// [`parse_barycentric_times`] for column `column` of a table in memory, read in place
/// (no text copy of the column; see [`map_text_cells`]).
pub fn parse_barycentric_time_column(
    df: &DataFrame,
    clock: &ClockSpec,
    file: &str,
    column: &str,
    leap: &LeapSecondTable,
) -> Result<Vec<Option<Instant>>, TableError> {
    if !is_barycentric_tdb(clock) {
        return parse_barycentric_times(&[], clock, file, column, leap);
    }
    map_text_cells(df, file, column, |i, text| match text.filter(|s| !s.eq_ignore_ascii_case("nan")) {
        None => Ok(None),
        Some(s) => parse_time(s, clock.format, clock.scale, leap).map(Some).map_err(|e| TableError::Cell {
            file: file.to_string(),
            row: i + 1,
            column: column.to_string(),
            message: e.to_string(),
        }),
    })
}

/// The epoch used for a set of times: JD at noon (integral JD) of the first present time.
pub fn epoch_for(times: &[Option<Instant>]) -> Option<Instant> {
    let first = times.iter().flatten().next()?;
    let (jd1, jd2) = first.jd_two_part();
    let whole = (jd1 + jd2).floor();
    Some(Instant::from_jd_two_part(TimeScale::Tdb, whole, 0.0))
}

/// Days from `epoch` to `t` (both TDB), two-part safe (≤1 ns for spans of decades).
pub fn days_since(t: &Instant, epoch: &Instant) -> f64 {
    t.seconds_since(epoch) / SECONDS_PER_DAY
}

/// Assembles a light curve from parsed times and the value, error and band cells.
/// `file_row_of` maps entry index to the 1-based data row. Errors name file, row, column.
pub fn assemble(
    file: &str,
    columns: &LightCurveColumns,
    times: &[Option<Instant>],
    value_text: &[Option<String>],
    error_text: Option<&[Option<String>]>,
    band_text: Option<&[Option<String>]>,
    file_row_of: &dyn Fn(usize) -> usize,
) -> Result<TableLightCurve, TableError> {
    let n = times.len();
    let mut value = Vec::with_capacity(n);
    for (i, v) in value_text.iter().enumerate() {
        value.push(numeric_cell(v.as_deref(), file, file_row_of(i), &columns.value)?);
    }
    let error = match (error_text, &columns.error) {
        (Some(e), Some(name)) => {
            let mut out = Vec::with_capacity(n);
            for (i, v) in e.iter().enumerate() {
                out.push(uncertainty_cell(v.as_deref(), file, file_row_of(i), name)?);
            }
            Some(out)
        }
        _ => None,
    };
    assemble_measured(file, columns, times, value, error, band_text, file_row_of)
}

/// [`assemble`] from values and uncertainties already read as numbers (NaN for a missing
/// cell, e.g. by [`crate::table::measured_number_column`]): the vectors become the light
/// curve's own, without another copy. A positive uncertainty outside the accepted range is
/// an error naming file, row and column ([`check_uncertainty`]).
pub fn assemble_measured(
    file: &str,
    columns: &LightCurveColumns,
    times: &[Option<Instant>],
    value: Vec<f64>,
    error: Option<Vec<f64>>,
    band_text: Option<&[Option<String>]>,
    file_row_of: &dyn Fn(usize) -> usize,
) -> Result<TableLightCurve, TableError> {
    let n = times.len();
    let epoch = epoch_for(times).ok_or_else(|| TableError::File {
        file: file.to_string(),
        message: format!("column '{}' has no usable time: every cell is empty", columns.time),
    })?;
    let time_d: Vec<f64> = times.iter().map(|t| t.as_ref().map_or(f64::NAN, |t| days_since(t, &epoch))).collect();
    let error = match (error, &columns.error) {
        (Some(e), Some(name)) => {
            for (i, &v) in e.iter().enumerate() {
                if v.is_finite() && v > 0.0 {
                    check_uncertainty(v, "", file, file_row_of(i), name)?;
                }
            }
            Some(e)
        }
        _ => None,
    };
    let mut band_labels: Vec<String> = Vec::new();
    let band = band_text.map(|b| {
        b.iter()
            .map(|label| {
                let l = label.as_deref().unwrap_or("").to_string();
                match band_labels.iter().position(|x| *x == l) {
                    Some(k) => k as u32,
                    None => {
                        band_labels.push(l);
                        (band_labels.len() - 1) as u32
                    }
                }
            })
            .collect::<Vec<u32>>()
    });
    Ok(TableLightCurve {
        file: file.to_string(),
        columns: columns.clone(),
        epoch,
        time_d,
        value,
        error,
        band,
        band_labels,
        file_row: (0..n).map(file_row_of).collect(),
        warnings: Vec::new(),
    })
}

impl TableLightCurve {
    /// The 1-based input-file row of every point kept in `series` (a series made from this
    /// light curve by [`Self::series`]), for messages and tables.
    pub fn input_rows(&self, series: &Series) -> Vec<usize> {
        series.row().iter().map(|&r| self.file_row[r]).collect()
    }

    /// Validates into a [`Series`]; errors name the file row and column.
    pub fn series(&self) -> Result<Series, TableError> {
        let mut lc = LightCurve::new(&self.time_d, &self.value);
        if let Some(e) = &self.error {
            lc = lc.with_error(e);
        }
        if let Some(b) = &self.band {
            lc = lc.with_band(b);
        }
        Series::from_light_curve(&lc).map_err(|e| self.locate(e))
    }

    /// As [`Self::series`], for a command that is not a period search: `purpose` says what
    /// the points are for (e.g. "folding the light curve", "timing events") and `needed` is
    /// the fewest usable points it accepts (at least 3). Too few points and a constant value
    /// column are refused naming the file, what the command needs and what the file has.
    pub fn series_for(&self, purpose: &str, needed: usize) -> Result<Series, TableError> {
        let too_few = |got: usize, dropped: usize| TableError::File {
            file: self.file.clone(),
            message: format!(
                "{purpose} needs at least {needed} usable points, the file has {got} (after dropping {dropped} rows with an empty, NaN or infinite value)"
            ),
        };
        let mut lc = LightCurve::new(&self.time_d, &self.value);
        if let Some(e) = &self.error {
            lc = lc.with_error(e);
        }
        if let Some(b) = &self.band {
            lc = lc.with_band(b);
        }
        match Series::from_light_curve(&lc) {
            Ok(s) if s.len() < needed => Err(too_few(s.len(), s.n_dropped())),
            Ok(s) => Ok(s),
            Err(SearchError::TooFewPoints { got, dropped, .. }) => Err(too_few(got, dropped)),
            Err(SearchError::ConstantSeries) => Err(TableError::File {
                file: self.file.clone(),
                message: format!(
                    "column '{}' is constant (in every band): {purpose} needs a value that varies",
                    self.columns.value
                ),
            }),
            Err(e) => Err(self.locate(e)),
        }
    }

    /// Ties a search error to the file: row-bearing errors name the data row and column.
    pub fn locate(&self, e: SearchError) -> TableError {
        let row = |i: usize| self.file_row.get(i).copied().unwrap_or(i + 1);
        let cell = |i: usize, column: &str, message: String| TableError::Cell {
            file: self.file.clone(),
            row: row(i),
            column: column.to_string(),
            message,
        };
        match e {
            SearchError::NonPositiveError { row: i, value } => cell(
                i,
                self.columns.error.as_deref().unwrap_or("error"),
                format!("uncertainty {value} is not > 0; remove the row or give a positive uncertainty"),
            ),
            SearchError::UnsortedTimes { row: i, time_d, previous_d } => cell(
                i,
                &self.columns.time,
                format!(
                    "time goes backwards ({time_d:.8} d after {previous_d:.8} d since the epoch); sort the light curve by time first"
                ),
            ),
            SearchError::DuplicateTime { row: i, first_row, time_d, band } => {
                let label = self.band_labels.get(band as usize).cloned().unwrap_or_default();
                cell(
                    i,
                    &self.columns.time,
                    format!(
                        "time {time_d:.8} d since the epoch repeats row {}{}; average or remove duplicates first",
                        row(first_row),
                        if self.band.is_some() { format!(" in band '{label}'") } else { String::new() }
                    ),
                )
            }
            SearchError::ConstantSeries => TableError::File {
                file: self.file.clone(),
                message: format!(
                    "column '{}' is constant (in every band): there is no period to search",
                    self.columns.value
                ),
            },
            other => TableError::File { file: self.file.clone(), message: other.to_string() },
        }
    }

    /// Rows whose time, value or uncertainty is empty or NaN (dropped from the search).
    pub fn n_missing(&self) -> usize {
        (0..self.time_d.len())
            .filter(|&i| {
                !self.time_d[i].is_finite()
                    || !self.value[i].is_finite()
                    || self.error.as_ref().is_some_and(|e| !e[i].is_finite())
            })
            .count()
    }

    /// JD (TDB) of the epoch as text, for outputs.
    pub fn epoch_jd_text(&self) -> String {
        let (a, b) = self.epoch.jd_two_part();
        format!("{:.1}", a + b)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn cols() -> LightCurveColumns {
        LightCurveColumns { time: "t".into(), value: "mag".into(), error: Some("err".into()), band: None }
    }

    #[test]
    fn errors_name_row_and_column() {
        let clock = ClockSpec::parse_label("bjd_tdb").unwrap();
        let leap = LeapSecondTable::builtin();
        let texts: Vec<Option<String>> =
            ["2460000.1", "2460000.3", "2460000.2", "2460000.5"].iter().map(|s| Some(s.to_string())).collect();
        let times = parse_barycentric_times(&texts, &clock, "f.csv", "t", &leap).unwrap();
        let v: Vec<Option<String>> = ["1", "2", "3", "4"].iter().map(|s| Some(s.to_string())).collect();
        let e: Vec<Option<String>> = ["0.1", "0.1", "0.1", "0.1"].iter().map(|s| Some(s.to_string())).collect();
        let lc = assemble("f.csv", &cols(), &times, &v, Some(&e), None, &|i| i + 1).unwrap();
        let err = lc.series().unwrap_err().to_string();
        assert!(err.contains("f.csv, row 3, column 't'"), "{err}");
        assert!((lc.time_d[0] - 0.1).abs() < 1e-9, "epoch at noon: {}", lc.time_d[0]);
        let bad: Vec<Option<String>> = ["1", "x", "3", "4"].iter().map(|s| Some(s.to_string())).collect();
        let err = assemble("f.csv", &cols(), &times, &bad, Some(&e), None, &|i| i + 1).unwrap_err().to_string();
        assert!(err.contains("row 2, column 'mag'"), "{err}");
    }

    #[test]
    fn zero_uncertainty_names_error_column() {
        let clock = ClockSpec::parse_label("bmjd_tdb").unwrap();
        let leap = LeapSecondTable::builtin();
        let texts: Vec<Option<String>> =
            ["60000.1", "60000.2", "60000.3", "60000.4", "60000.5"].iter().map(|s| Some(s.to_string())).collect();
        let times = parse_barycentric_times(&texts, &clock, "f.csv", "t", &leap).unwrap();
        let v: Vec<Option<String>> = ["1", "2", "3", "4", "nan"].iter().map(|s| Some(s.to_string())).collect();
        let e: Vec<Option<String>> = ["0.1", "0.1", "0", "0.1", "0.1"].iter().map(|s| Some(s.to_string())).collect();
        let lc = assemble("f.csv", &cols(), &times, &v, Some(&e), None, &|i| i + 1).unwrap();
        assert_eq!(lc.n_missing(), 1);
        let err = lc.series().unwrap_err().to_string();
        assert!(err.contains("row 3, column 'err'"), "{err}");
    }
}
