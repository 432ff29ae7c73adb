//! Errors of table input and output; each names the file, and where it applies the row
//! (1-based data row; the header is row 0) and the column.

use thiserror::Error;

/// What can go wrong with a table.
#[derive(Debug, Error)]
pub enum TableError {
    #[error("{file}: {message}")]
    File { file: String, message: String },
    #[error("{file}: column '{column}' is missing; the table has: {available}")]
    MissingColumn { file: String, column: String, available: String },
    #[error("{file}, row {row}, column '{column}': {message}")]
    Cell { file: String, row: usize, column: String, message: String },
    #[error("{file}: the table has no data rows")]
    Empty { file: String },
    #[error("refusing to write {output}: it is also an input file; choose another output path")]
    OutputIsInput { output: String },
    #[error(
        "refusing to write {output_option} {output}: it is also an input file ({input_option} {input}); choose another path"
    )]
    OutputOverInput { output_option: String, output: String, input_option: String, input: String },
    #[error(
        "refusing to write {output_option} {output}: {other_option} {other} names the same file; give each output its own path"
    )]
    OutputsClash { output_option: String, output: String, other_option: String, other: String },
}
