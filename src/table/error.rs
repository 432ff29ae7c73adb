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
    /// An output path names the same file as an input path (links and `..` resolved).
    #[error(
        "refusing to write {output_option} {output}: it is also an input file ({input_option} {input}); choose another path"
    )]
    OutputOverInput {
        /// The output option, e.g. `--summary`.
        output_option: String,
        /// The output path, as given.
        output: String,
        /// The input option naming the same file.
        input_option: String,
        /// The input path, as given.
        input: String,
    },
    /// Two outputs (or an output and another's sidecar) name the same file.
    #[error(
        "refusing to write {output_option} {output}: {other_option} {other} names the same file; give each output its own path"
    )]
    OutputsClash {
        /// The output option.
        output_option: String,
        /// Its path, as given.
        output: String,
        /// The other output option.
        other_option: String,
        /// Its path, as given.
        other: String,
    },
}
