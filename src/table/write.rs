//! Writing tables atomically (temporary file in the same folder, then rename) with
//! provenance: Parquet key-value metadata (`skyclock_provenance`), or a JSON sidecar
//! `<output>.provenance.json` for CSV/TSV. An output path equal to an input is refused.

use std::fs::File;
use std::io::Write;
use std::path::{Path, PathBuf};

use polars::prelude::*;

use super::error::TableError;
use super::provenance::Provenance;
use super::read::TableFormat;

/// Refuses `output` if it names the same file as any of `inputs` (after resolving links).
pub fn refuse_overwriting_inputs(output: &Path, inputs: &[&Path]) -> Result<(), TableError> {
    let out = std::fs::canonicalize(output).ok();
    for input in inputs {
        let same = match (&out, std::fs::canonicalize(input).ok()) {
            (Some(a), Some(b)) => *a == b,
            _ => output == *input,
        };
        if same {
            return Err(TableError::OutputIsInput { output: output.display().to_string() });
        }
    }
    Ok(())
}

/// Writes bytes produced by `fill` to `path` atomically: into a temporary file of this run
/// beside it (stale ones of killed runs are removed first), then renamed
/// ([`super::guard::put_in_place`]).
pub fn write_atomically(path: &Path, fill: impl FnOnce(&mut File) -> std::io::Result<()>) -> Result<(), TableError> {
    let fail = |message: String| TableError::File { file: path.display().to_string(), message };
    let tmp = super::guard::temporary_path(path, "");
    let result = (|| {
        let (_, mut file) =
            super::guard::create_temporary(path, "").map_err(|e| format!("cannot create {}: {e}", tmp.display()))?;
        fill(&mut file).map_err(|e| format!("cannot write {}: {e}", tmp.display()))?;
        file.flush().map_err(|e| e.to_string())?;
        file.sync_all().map_err(|e| e.to_string())?;
        super::guard::put_in_place(&tmp, path).map_err(|e| format!("cannot move the finished file into place: {e}"))
    })();
    if let Err(message) = result {
        let _ = std::fs::remove_file(&tmp);
        super::guard::release_temporary(&tmp);
        return Err(fail(message));
    }
    Ok(())
}

/// Writes `df` to `path` (format from the extension) with `provenance`, atomically, after
/// checking that `path` is none of `inputs`.
pub fn write_table(
    df: &mut DataFrame,
    path: &Path,
    provenance: &Provenance,
    inputs: &[&Path],
) -> Result<(), TableError> {
    refuse_overwriting_inputs(path, inputs)?;
    let format = TableFormat::from_path(path)?;
    let json = provenance.to_json();
    match format {
        TableFormat::Csv | TableFormat::Tsv => {
            let separator = if format == TableFormat::Tsv { b'\t' } else { b',' };
            write_atomically(path, |f| {
                CsvWriter::new(f)
                    .include_header(true)
                    .with_separator(separator)
                    .finish(df)
                    .map_err(std::io::Error::other)
            })?;
            let sidecar = sidecar_path(path);
            write_atomically(&sidecar, |f| f.write_all(json.as_bytes()).map_err(std::io::Error::other))?;
        }
        TableFormat::Parquet => {
            write_atomically(path, |f| {
                ParquetWriter::new(f)
                    .with_key_value_metadata(Some(KeyValueMetadata::from_static(vec![(
                        "skyclock_provenance".to_string(),
                        json.clone(),
                    )])))
                    .finish(df)
                    .map(|_| ())
                    .map_err(std::io::Error::other)
            })?;
        }
    }
    Ok(())
}

/// The JSON sidecar written beside a CSV/TSV output.
pub fn sidecar_path(path: &Path) -> PathBuf {
    let name = path.file_name().map(|n| n.to_string_lossy().to_string()).unwrap_or_default();
    path.with_file_name(format!("{name}.provenance.json"))
}
