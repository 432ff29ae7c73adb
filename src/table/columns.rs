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

/// A numeric column as `f64` with empty cells as `None`; text that is not a number, NaN or
/// infinity is an error naming row and column.
pub fn optional_float_column(df: &DataFrame, file: &str, name: &str) -> Result<Vec<Option<f64>>, TableError> {
    let text = text_column(df, file, name)?;
    text.into_iter()
        .enumerate()
        .map(|(i, cell)| match cell {
            None => Ok(None),
            Some(s) => match s.parse::<f64>() {
                Ok(v) if v.is_finite() => Ok(Some(v)),
                _ => Err(TableError::Cell {
                    file: file.to_string(),
                    row: i + 1,
                    column: name.to_string(),
                    message: format!("'{s}' is not a finite number"),
                }),
            },
        })
        .collect()
}
