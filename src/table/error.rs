//! Errors of table input and output; each names the file, and where it applies the row
//! (1-based data row; the header is row 0) and the column.

use thiserror::Error;

/// What can go wrong with a table.
#[derive(Debug, Error)]
pub enum TableError {
    /// The file cannot be opened, read, written or recognised as a table.
    #[error("{file}: {message}")]
    File {
        /// The file, as given.
        file: String,
        /// What went wrong with it.
        message: String,
    },
    /// A column that is needed is not in the table.
    #[error("{file}: column '{column}' is missing; the table has: {available}")]
    MissingColumn {
        /// The file, as given.
        file: String,
        /// The column asked for.
        column: String,
        /// The table's column names, comma-separated.
        available: String,
    },
    /// A cell is empty where a value is needed, or holds a value that cannot be used.
    #[error("{file}, row {row}, column '{column}': {message}")]
    Cell {
        /// The file, as given.
        file: String,
        /// Data row, 1-based; 0 when the whole column is at fault.
        row: usize,
        /// The column name.
        column: String,
        /// What is wrong with the value.
        message: String,
    },
    /// The file is empty or has a header but no data rows.
    #[error("{file}: the table has no data rows")]
    Empty {
        /// The file, as given.
        file: String,
    },
    /// An output path names one of the input files.
    #[error("refusing to write {output}: it is also an input file; choose another output path")]
    OutputIsInput {
        /// The output path, as given.
        output: String,
    },
}
