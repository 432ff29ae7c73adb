//! Reading tables with polars: CSV (`.csv`), TSV (`.tsv`, `.tab`) and Parquet (`.parquet`,
//! `.pq`). Columns that hold times are read as text so that every digit survives.

use std::path::Path;
use std::sync::Arc;

use polars::prelude::*;

use super::error::TableError;

/// Table file formats.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TableFormat {
    /// Comma-separated values.
    Csv,
    /// Tab-separated values.
    Tsv,
    /// Apache Parquet.
    Parquet,
}

impl TableFormat {
    /// The format implied by a file name's extension.
    pub fn from_path(path: &Path) -> Result<TableFormat, TableError> {
        let ext = path.extension().and_then(|e| e.to_str()).unwrap_or("").to_ascii_lowercase();
        match ext.as_str() {
            "csv" | "txt" => Ok(TableFormat::Csv),
            "tsv" | "tab" => Ok(TableFormat::Tsv),
            "parquet" | "pq" => Ok(TableFormat::Parquet),
            _ => Err(TableError::File {
                file: path.display().to_string(),
                message: format!("unknown table type '.{ext}'; use .csv, .tsv or .parquet"),
            }),
        }
    }
}

/// Reads a whole table. `text_columns` are read as strings (CSV/TSV) so that long decimal
/// times keep all digits. Errors: unreadable file, bad format, no data rows.
pub fn read_table(path: &Path, text_columns: &[&str]) -> Result<DataFrame, TableError> {
    let file_name = path.display().to_string();
    let fail = |message: String| TableError::File { file: file_name.clone(), message };
    let format = TableFormat::from_path(path)?;
    let meta = std::fs::metadata(path).map_err(|e| fail(format!("cannot open: {e}")))?;
    if meta.len() == 0 {
        return Err(TableError::Empty { file: file_name.clone() });
    }
    let df = match format {
        TableFormat::Csv | TableFormat::Tsv => {
            let separator = if format == TableFormat::Tsv { b'\t' } else { b',' };
            // Separator, field counts and encoding are checked first, so that a ragged or
            // semicolon-separated file gets our message with its row, not the parser's.
            super::layout::check_delimited_file(path, separator as char)?;
            let mut schema = Schema::default();
            for c in text_columns {
                schema.with_column((*c).into(), DataType::String);
            }
            CsvReadOptions::default()
                .with_has_header(true)
                .with_infer_schema_length(Some(10_000))
                .with_schema_overwrite(Some(Arc::new(schema)))
                .map_parse_options(|p| p.with_separator(separator).with_comment_prefix(Some("#")))
                .try_into_reader_with_file_path(Some(path.to_path_buf()))
                .and_then(|r| r.finish())
                .map_err(|e| fail(format!("cannot read as {}: {e}", if separator == b'\t' { "TSV" } else { "CSV" })))?
        }
        TableFormat::Parquet => {
            let file = std::fs::File::open(path).map_err(|e| fail(format!("cannot open: {e}")))?;
            ParquetReader::new(file).finish().map_err(|e| fail(format!("cannot read as Parquet: {e}")))?
        }
    };
    if df.height() == 0 {
        return Err(TableError::Empty { file: file_name });
    }
    Ok(df)
}
