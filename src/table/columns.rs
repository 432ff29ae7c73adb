//! Typed access to table columns with errors naming file, row and column.

use polars::prelude::*;

use super::error::TableError;

fn get<'a>(df: &'a DataFrame, file: &str, name: &str) -> Result<&'a Column, TableError> {
    df.column(name).map_err(|_| TableError::MissingColumn {
        file: file.to_string(),
        column: name.to_string(),
        available: df.get_column_names().iter().map(|s| s.as_str()).collect::<Vec<_>>().join(", "),
    })
}

/// A column as text, one entry per row (`None` for an empty cell). Numbers stored in a
/// Parquet float column are written with Rust's shortest round-trip form (all the digits
/// the `f64` has, which for a JD is ~40 µs: store times as text or two parts for ns).
pub fn text_column(df: &DataFrame, file: &str, name: &str) -> Result<Vec<Option<String>>, TableError> {
    let col = get(df, file, name)?;
    let as_text = col.cast(&DataType::String).map_err(|e| TableError::Cell {
        file: file.to_string(),
        row: 0,
        column: name.to_string(),
        message: format!("cannot be read as text: {e}"),
    })?;
    let ca = as_text.str().map_err(|e| TableError::Cell {
        file: file.to_string(),
        row: 0,
        column: name.to_string(),
        message: e.to_string(),
    })?;
    Ok(ca.iter().map(|v| v.map(|s| s.trim().to_string()).filter(|s| !s.is_empty())).collect())
}

/// The cells of a column as text, handed to `cell` one by one without copying them (`None`
/// for a null or empty cell; text trimmed), in row order: `cell(i, text)` gets the 0-based
/// row index. A text column is read in place; a column of another type is first written as
/// text as by [`text_column`]. The results are collected; the first error stops the visit.
pub fn map_text_cells<T>(
    df: &DataFrame,
    file: &str,
    name: &str,
    mut cell: impl FnMut(usize, Option<&str>) -> Result<T, TableError>,
) -> Result<Vec<T>, TableError> {
    let col = get(df, file, name)?;
    let text_error =
        |message: String| TableError::Cell { file: file.to_string(), row: 0, column: name.to_string(), message };
    let cast;
    let col = if col.dtype() == &DataType::String {
        col
    } else {
        cast = col.cast(&DataType::String).map_err(|e| text_error(format!("cannot be read as text: {e}")))?;
        &cast
    };
    let ca = col.str().map_err(|e| text_error(e.to_string()))?;
    let mut out = Vec::with_capacity(ca.len());
    for (i, v) in ca.iter().enumerate() {
        out.push(cell(i, v.map(str::trim).filter(|s| !s.is_empty()))?);
    }
    Ok(out)
}

/// A column of measured numbers (values, uncertainties) as `f64`, NaN for a null, empty or
/// NaN cell (a missing value, for the caller to drop and count). A float or integer column
/// is read from its numbers directly (no text round trip: the same values, since a float
/// written as text by [`text_column`] reads back to the same `f64`); a text column is parsed
/// cell by cell. An infinity or a number beyond ±[`MAX_ABS_CELL`] is an error naming file,
/// row (1-based data row) and column (as [`parse_cell_number`]).
pub fn measured_number_column(df: &DataFrame, file: &str, name: &str) -> Result<Vec<f64>, TableError> {
    let col = get(df, file, name)?;
    let cell_error = |i: usize, message: String| TableError::Cell {
        file: file.to_string(),
        row: i + 1,
        column: name.to_string(),
        message,
    };
    let check = |i: usize, v: f64| -> Result<f64, TableError> {
        if v.is_nan() || (v.is_finite() && v.abs() <= MAX_ABS_CELL) {
            Ok(v)
        } else {
            parse_cell_number(&v.to_string()).map_err(|CellNumberError(m)| cell_error(i, m))
        }
    };
    if col.dtype().is_primitive_numeric() {
        let cast;
        let col = if col.dtype() == &DataType::Float64 {
            col
        } else {
            cast =
                col.cast(&DataType::Float64).map_err(|e| cell_error(0, format!("cannot be read as numbers: {e}")))?;
            &cast
        };
        let ca = col.f64().map_err(|e| cell_error(0, e.to_string()))?;
        let mut out = Vec::with_capacity(ca.len());
        if let Ok(values) = ca.cont_slice() {
            // one contiguous chunk without nulls: read in place
            for (i, &v) in values.iter().enumerate() {
                out.push(check(i, v)?);
            }
        } else {
            for (i, v) in ca.iter().enumerate() {
                out.push(check(i, v.unwrap_or(f64::NAN))?);
            }
        }
        return Ok(out);
    }
    map_text_cells(df, file, name, |i, text| match text {
        None => Ok(f64::NAN),
        Some(s) => parse_cell_number(s).map_err(|CellNumberError(m)| cell_error(i, m)),
    })
}

/// The largest magnitude accepted for a number read from a table cell: 1e50. Every fit and
/// periodogram sums squares of values over weights 1/σ²; with |x| ≤ 1e50 and σ ≥ 1e-50
/// (see [`MIN_UNCERTAINTY`]) a sum over 1e9 rows stays below 1e210, far inside `f64`
/// (≈1.8e308), so no kernel overflows into inf or NaN. Values beyond it are sentinels or
/// unit mistakes (a magnitude of 1e300). Common practice (a guard on `f64` range).
pub const MAX_ABS_CELL: f64 = 1e50;

/// The smallest positive uncertainty accepted (units of its column): 1e-50, so that the
/// weight 1/σ² stays below 1e100 (see [`MAX_ABS_CELL`]). Common practice.
pub const MIN_UNCERTAINTY: f64 = 1e-50;

/// Why a cell's text was refused as a number (the message says what is accepted; the caller
/// adds file, row and column).
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{0}")]
pub struct CellNumberError(pub String);

/// Reads the text of one numeric cell. `NaN` (any case) gives `Ok(NaN)`: the caller decides
/// whether a missing value is dropped or refused. Text that is not a number, an infinity
/// (reported as such, never as NaN) and a number beyond ±[`MAX_ABS_CELL`] are refused with a
/// message saying what is accepted (the caller adds file, row and column).
pub fn parse_cell_number(text: &str) -> Result<f64, CellNumberError> {
    let s = text.trim();
    let v: f64 = s.parse().map_err(|_| CellNumberError(format!("'{s}' is not a number")))?;
    if v.is_nan() {
        Ok(v)
    } else if v.is_infinite() {
        Err(CellNumberError(format!(
            "'{s}' is {}infinite; a finite number within ±{MAX_ABS_CELL:e} is required (an empty or NaN cell marks a missing value)",
            if v < 0.0 { "minus " } else { "" }
        )))
    } else if v.abs() > MAX_ABS_CELL {
        Err(CellNumberError(format!(
            "{v:e} is outside the accepted range ±{MAX_ABS_CELL:e} (beyond it the sums of squares of fits and periodograms overflow); is it a missing-data marker or a unit mistake? Leave the cell empty for a missing value"
        )))
    } else {
        Ok(v)
    }
}

/// Checks a 1-σ uncertainty already read from a cell: finite, > 0 and at least
/// [`MIN_UNCERTAINTY`]; `unit` (e.g. `d`, `µs`, or empty) is written after the value. The
/// error names file, row (1-based data row) and column, and the accepted range.
pub fn check_uncertainty(value: f64, unit: &str, file: &str, row: usize, column: &str) -> Result<(), TableError> {
    if (MIN_UNCERTAINTY..=MAX_ABS_CELL).contains(&value) {
        return Ok(());
    }
    let unit = if unit.is_empty() { String::new() } else { format!(" {unit}") };
    Err(TableError::Cell {
        file: file.to_string(),
        row,
        column: column.to_string(),
        message: format!(
            "uncertainty {value}{unit} is outside the accepted range {MIN_UNCERTAINTY:e} … {MAX_ABS_CELL:e}{unit}; every row needs a positive, finite uncertainty"
        ),
    })
}

/// A numeric column as `f64`; an empty, non-numeric or non-finite cell is an error naming
/// its row (1-based data row) and column.
pub fn float_column(df: &DataFrame, file: &str, name: &str) -> Result<Vec<f64>, TableError> {
    let values = optional_float_column(df, file, name)?;
    values
        .into_iter()
        .enumerate()
        .map(|(i, v)| {
            v.ok_or_else(|| TableError::Cell {
                file: file.to_string(),
                row: i + 1,
                column: name.to_string(),
                message: "empty cell; a number is required".to_string(),
            })
        })
        .collect()
}

/// A numeric column as `f64` with empty cells as `None`; text that is not a number, NaN,
/// infinity or a number beyond ±[`MAX_ABS_CELL`] is an error naming row and column.
pub fn optional_float_column(df: &DataFrame, file: &str, name: &str) -> Result<Vec<Option<f64>>, TableError> {
    let text = text_column(df, file, name)?;
    text.into_iter()
        .enumerate()
        .map(|(i, cell)| match cell {
            None => Ok(None),
            Some(s) => match parse_cell_number(&s) {
                Ok(v) if v.is_finite() => Ok(Some(v)),
                Ok(_) => Err(TableError::Cell {
                    file: file.to_string(),
                    row: i + 1,
                    column: name.to_string(),
                    message: format!("'{s}' is not a finite number; a number is required here"),
                }),
                Err(CellNumberError(message)) => {
                    Err(TableError::Cell { file: file.to_string(), row: i + 1, column: name.to_string(), message })
                }
            },
        })
        .collect()
}
