//! Conversions between Python objects and the library's inputs and outputs: numpy arrays
//! (any dtype convertible to float64, any strides) to `Vec<f64>`, times to the text the
//! library parses, option documents from JSON, and polars tables to columns for pandas.

use numpy::{AllowTypeChange, IntoPyArray, PyArrayLike1};
use polars::prelude::{Column, DataFrame, DataType};
use pyo3::prelude::*;
use pyo3::types::PyDict;

use crate::SkyclockError;

/// The name tables built from Python arguments carry in error messages ("… row 3, column
/// 'times': …"); rows are counted from 1, as in a file.
pub const ARRAYS: &str = "input arrays";

/// A library (or input) error as the Python exception, with the library's message.
pub fn error(e: impl std::fmt::Display) -> PyErr {
    SkyclockError::new_err(e.to_string())
}

/// Raises each warning about the times read (`table::plausibility`) as a Python
/// `UserWarning` (an error only if the warning filter turns warnings into errors).
pub fn warn_times(py: Python<'_>, warnings: &[skyclock::table::plausibility::TimeWarning]) -> PyResult<()> {
    for w in warnings {
        let text = std::ffi::CString::new(w.to_string()).unwrap_or_default();
        PyErr::warn(py, py.get_type::<pyo3::exceptions::PyUserWarning>().as_any(), &text, 1)?;
    }
    Ok(())
}

/// A float64 copy of a 1-D array-like (int, float32, non-contiguous views are converted).
pub fn floats(a: &PyArrayLike1<'_, f64, AllowTypeChange>) -> Vec<f64> {
    a.as_array().iter().copied().collect()
}

/// Checks that an optional per-row argument has as many entries as the times.
pub fn check_length(name: &str, len: usize, expected: usize) -> PyResult<()> {
    if len != expected {
        return Err(error(format!("'{name}' has {len} entries but the times have {expected}; give one per time")));
    }
    Ok(())
}

/// Reads an option document written by the Python wrapper (JSON object).
pub fn options<T: serde::de::DeserializeOwned>(json: &str, what: &str) -> PyResult<T> {
    serde_json::from_str(json).map_err(|e| error(format!("{what}: {e}")))
}

/// The JSON form of a typed library result.
pub fn to_json<T: serde::Serialize>(value: &T) -> PyResult<String> {
    serde_json::to_string(value).map_err(|e| error(format!("the result could not be written as JSON: {e}")))
}

/// Times as the text the library parses: each `jd1` written in Rust's shortest form that
/// reads back to the same float64 (so a value read from a table round-trips to the table's
/// digits), and with `jd2` the two-part form "jd1 jd2" that keeps every digit. A time that
/// is NaN or infinite is refused, naming its row (from 1) and the argument `name`: a float
/// array has no empty cell, so a NaN time is a mistake, not a missing value.
#[pyfunction]
#[pyo3(signature = (jd1, jd2=None, name="times"))]
pub fn times_as_text(
    jd1: PyArrayLike1<'_, f64, AllowTypeChange>,
    jd2: Option<PyArrayLike1<'_, f64, AllowTypeChange>>,
    name: &str,
) -> PyResult<Vec<String>> {
    let a = floats(&jd1);
    let b = jd2.as_ref().map(floats);
    if let Some(b) = &b {
        check_length("jd2", b.len(), a.len())?;
    }
    let bad = |i: usize, what: &str, v: f64| {
        error(format!("{ARRAYS}, row {}, column '{name}': {what} {v} is not a time", i + 1))
    };
    a.iter()
        .enumerate()
        .map(|(i, x)| {
            if !x.is_finite() {
                return Err(bad(i, "JD", *x));
            }
            match &b {
                None => Ok(format!("{x}")),
                Some(b) if !b[i].is_finite() => Err(bad(i, "jd2", b[i])),
                Some(b) => Ok(format!("{x} {}", b[i])),
            }
        })
        .collect()
}

/// A text column.
pub fn text_column(name: &str, values: &[Option<String>]) -> Column {
    Column::new(name.into(), values.to_vec())
}

/// A polars table built from columns, with a clear error when lengths differ.
pub fn table(columns: Vec<Column>) -> PyResult<DataFrame> {
    DataFrame::new_infer_height(columns).map_err(error)
}

/// One column of a result table, ready for pandas.
pub enum OutColumn {
    Floats(Vec<f64>),
    Integers(Vec<i64>),
    Booleans(Vec<bool>),
    /// A boolean column with missing cells: True, False or None.
    NullableBooleans(Vec<Option<bool>>),
    Texts(Vec<Option<String>>),
}

/// The columns of a polars table in order: numbers as float64 (missing → NaN; integer
/// and boolean columns without missing cells stay int64 and bool), text as text, anything
/// else as text.
pub fn columns_of(df: &DataFrame) -> PyResult<Vec<(String, OutColumn)>> {
    let mut out = Vec::with_capacity(df.width());
    for c in df.columns() {
        let s = c.as_materialized_series();
        let name = s.name().to_string();
        let dtype = s.dtype().clone();
        let column = if dtype.is_bool() && s.null_count() == 0 {
            OutColumn::Booleans(s.bool().map_err(error)?.iter().map(|x| x.unwrap_or(false)).collect())
        } else if dtype.is_bool() {
            OutColumn::NullableBooleans(s.bool().map_err(error)?.iter().collect())
        } else if dtype.is_integer() && s.null_count() == 0 {
            let v = s.cast(&DataType::Int64).map_err(error)?;
            OutColumn::Integers(v.i64().map_err(error)?.into_no_null_iter().collect())
        } else if dtype.is_primitive_numeric() {
            let v = s.cast(&DataType::Float64).map_err(error)?;
            OutColumn::Floats(v.f64().map_err(error)?.iter().map(|x| x.unwrap_or(f64::NAN)).collect())
        } else {
            let v = s.cast(&DataType::String).map_err(error)?;
            OutColumn::Texts(v.str().map_err(error)?.iter().map(|x| x.map(str::to_string)).collect())
        };
        out.push((name, column));
    }
    Ok(out)
}

/// Columns as a Python dict of name → numpy array (numbers) or list (text), in order.
pub fn columns_to_python<'py>(py: Python<'py>, columns: Vec<(String, OutColumn)>) -> PyResult<Bound<'py, PyDict>> {
    let d = PyDict::new(py);
    for (name, c) in columns {
        match c {
            OutColumn::Floats(v) => d.set_item(name, v.into_pyarray(py))?,
            OutColumn::Integers(v) => d.set_item(name, v.into_pyarray(py))?,
            OutColumn::Booleans(v) => d.set_item(name, v.into_pyarray(py))?,
            OutColumn::NullableBooleans(v) => d.set_item(name, v)?,
            OutColumn::Texts(v) => d.set_item(name, v)?,
        }
    }
    Ok(d)
}

/// A polars table as a Python dict of columns.
pub fn table_to_python<'py>(py: Python<'py>, df: &DataFrame) -> PyResult<Bound<'py, PyDict>> {
    columns_to_python(py, columns_of(df)?)
}
