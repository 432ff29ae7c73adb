//! Streaming barycentric correction of photon-event files too large for memory.
//!
//! Reads a CSV/TSV event list block by block (default 10⁶ rows), carries the event times
//! (seconds after a stated zero instant, on a stated scale) to TT, corrects them with the
//! [`InterpolatedCorrector`], and appends a column `barycentric_s`: seconds after the same
//! zero instant read on TDB at the solar-system barycentre. Every input line is passed
//! through unchanged. Memory is bounded by the block size, whatever the file length.
//! The output is written to a temporary file beside the target and renamed at the end.

use std::io::{BufRead, BufReader, BufWriter, Write};
use std::path::Path;

use thiserror::Error;

use super::correction::ArrivalError;
use super::interpolated::InterpolatedCorrector;
use crate::time::{Instant, ScaleConverter, TimeScale};

/// Problems while streaming events.
#[derive(Debug, Error)]
pub enum EventStreamError {
    /// The input cannot be read, lacks the time column, or the output cannot be written.
    #[error("{file}: {message}")]
    File {
        /// The input event file, as given.
        file: String,
        /// What went wrong.
        message: String,
    },
    /// An event time is not a finite number, or cannot be carried to TT.
    #[error("{file}, row {row}, column '{column}': {message}")]
    Cell {
        /// The input event file, as given.
        file: String,
        /// Data row, 1-based, not counting blank lines.
        row: usize,
        /// The time column's name.
        column: String,
        /// What is wrong with the value.
        message: String,
    },
    /// The barycentric correction failed for a block of events (e.g. outside the interpolator's span).
    #[error("{file}, rows {first_row}-{last_row}: {source}")]
    Correction {
        /// The input event file, as given.
        file: String,
        /// First data row of the block, 1-based.
        first_row: usize,
        /// Last data row of the block, 1-based.
        last_row: usize,
        /// The underlying correction error.
        source: ArrivalError,
    },
}

/// Result of a streamed correction.
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize, serde::Deserialize)]
pub struct EventStreamSummary {
    /// Events corrected.
    pub events: usize,
    /// Smallest correction, s.
    pub min_correction_s: f64,
    /// Largest correction, s.
    pub max_correction_s: f64,
}

/// Streams `input` → `output`. `time_zero` fixes the origin and scale of the event times
/// (UTC, TAI, TT, GPS, TDB…); the interpolator's reference must be `time_zero` on TT.
pub fn correct_event_file(
    input: &Path,
    output: &Path,
    time_column: &str,
    time_zero: &Instant,
    converter: &ScaleConverter,
    interpolator: &InterpolatedCorrector,
    block_rows: usize,
) -> Result<EventStreamSummary, EventStreamError> {
    let file = input.display().to_string();
    let fail = |message: String| EventStreamError::File { file: file.clone(), message };
    crate::table::refuse_overwriting_inputs(output, &[input]).map_err(|e| fail(e.to_string()))?;
    let out_ext = output.extension().and_then(|e| e.to_str()).unwrap_or("").to_ascii_lowercase();
    if !matches!(out_ext.as_str(), "csv" | "tsv" | "tab" | "txt") {
        return Err(EventStreamError::File {
            file: output.display().to_string(),
            message: format!(
                "an event list is streamed as text: give the output a .csv or .tsv name (got '.{out_ext}')"
            ),
        });
    }
    let separator = if matches!(input.extension().and_then(|e| e.to_str()), Some("tsv" | "tab")) { '\t' } else { ',' };
    let reader =
        BufReader::with_capacity(1 << 20, std::fs::File::open(input).map_err(|e| fail(format!("cannot open: {e}")))?);
    let mut lines = reader.lines();
    let header = match lines.next() {
        Some(Ok(h)) => h,
        Some(Err(e)) => return Err(fail(format!("cannot read: {e}"))),
        None => return Err(fail("the file is empty".into())),
    };
    if let Err(crate::table::TableError::File { message, .. }) =
        crate::table::layout::check_header(&header, separator, &file)
    {
        return Err(fail(message));
    }
    let header = crate::table::layout::clean_line(&header).to_string();
    let names: Vec<&str> = header.split(separator).map(str::trim).collect();
    let index = names
        .iter()
        .position(|n| *n == time_column)
        .ok_or_else(|| fail(format!("column '{time_column}' is missing; the table has: {}", names.join(", "))))?;
    let tmp = crate::table::guard::temporary_path(output, "");
    let result = (|| {
        let mut writer = BufWriter::with_capacity(
            1 << 20,
            crate::table::guard::create_temporary(output, "")
                .map_err(|e| fail(format!("cannot create {}: {e}", tmp.display())))?
                .1,
        );
        let io = |e: std::io::Error| fail(format!("cannot write {}: {e}", tmp.display()));
        writeln!(writer, "{header}{separator}barycentric_s").map_err(io)?;
        let tt_zero = converter.convert(time_zero, TimeScale::Tt).map_err(|e| fail(e.to_string()))?;
        let uniform = time_zero.scale() != TimeScale::Utc;
        let offset_s = tt_zero.seconds_since(&time_zero.relabel(TimeScale::Tt));
        let mut summary = EventStreamSummary {
            min_correction_s: f64::INFINITY,
            max_correction_s: f64::NEG_INFINITY,
            ..Default::default()
        };
        let mut block: Vec<String> = Vec::with_capacity(block_rows.min(1 << 20));
        let mut row = 0_usize;
        // A blank line is an empty row; it is refused unless only blank lines follow it.
        let mut blank_row: Option<usize> = None;
        let columns = names.len();
        loop {
            block.clear();
            for line in lines.by_ref() {
                let line = line.map_err(|e| fail(format!("cannot read: {e}")))?;
                if line.trim().is_empty() {
                    blank_row.get_or_insert(row + block.len() + 1);
                    continue;
                }
                if let Some(empty) = blank_row {
                    return Err(EventStreamError::Cell {
                        file: file.clone(),
                        row: empty,
                        column: time_column.to_string(),
                        message: "the row is empty; remove it or give the event's time".into(),
                    });
                }
                let fields = line.split(separator).count();
                if fields != columns {
                    return Err(EventStreamError::Cell {
                        file: file.clone(),
                        row: row + block.len() + 1,
                        column: names.get(columns.min(fields)).map_or(time_column, |c| c).to_string(),
                        message: format!("the row has {fields} fields but the header names {columns} columns"),
                    });
                }
                block.push(line);
                if block.len() == block_rows {
                    break;
                }
            }
            if block.is_empty() {
                break;
            }
            let first_row = row + 1;
            let mut times = Vec::with_capacity(block.len());
            for (k, line) in block.iter().enumerate() {
                let cell = line.split(separator).nth(index).map(str::trim).unwrap_or("");
                let value: f64 =
                    cell.parse().ok().filter(|v: &f64| v.is_finite()).ok_or_else(|| EventStreamError::Cell {
                        file: file.clone(),
                        row: first_row + k,
                        column: time_column.to_string(),
                        message: format!("'{cell}' is not a number of seconds"),
                    })?;
                if !(value.abs() <= super::interpolated::MAX_EVENT_OFFSET_S) {
                    return Err(EventStreamError::Cell {
                        file: file.clone(),
                        row: first_row + k,
                        column: time_column.to_string(),
                        message: format!(
                            "{value:e} s is outside the valid range ±{:e} s (about ±3170 years) from the time zero",
                            super::interpolated::MAX_EVENT_OFFSET_S
                        ),
                    });
                }
                // Seconds after the TT reference: uniform scales differ by a constant;
                // UTC needs the leap seconds of each event.
                let tt_seconds = if uniform {
                    value - offset_s
                } else {
                    let t = time_zero.add_seconds(value);
                    let tt = converter.convert(&t, TimeScale::Tt).map_err(|e| EventStreamError::Cell {
                        file: file.clone(),
                        row: first_row + k,
                        column: time_column.to_string(),
                        message: e.to_string(),
                    })?;
                    tt.seconds_since(&tt_zero)
                };
                times.push(tt_seconds);
            }
            let before = times.clone();
            interpolator.correct_in_place(&mut times).map_err(|source| EventStreamError::Correction {
                file: file.clone(),
                first_row,
                last_row: first_row + block.len() - 1,
                source,
            })?;
            for (k, line) in block.iter().enumerate() {
                // Output: seconds after time_zero's own numbers read on TDB at the barycentre.
                let out = times[k] + offset_s;
                let corr = times[k] - before[k];
                summary.min_correction_s = summary.min_correction_s.min(corr);
                summary.max_correction_s = summary.max_correction_s.max(corr);
                writeln!(writer, "{line}{separator}{out:.9}").map_err(io)?;
            }
            row += block.len();
            summary.events += block.len();
        }
        if summary.events == 0 {
            // A header with no events is refused like every other table without data rows.
            return Err(fail("the table has no data rows (only a header)".into()));
        }
        writer.flush().map_err(io)?;
        writer.get_ref().sync_all().map_err(io)?;
        drop(writer);
        crate::table::guard::put_in_place(&tmp, output)
            .map_err(|e| fail(format!("cannot move the finished file into place: {e}")))?;
        Ok(summary)
    })();
    if result.is_err() {
        let _ = std::fs::remove_file(&tmp);
        crate::table::guard::release_temporary(&tmp);
    }
    result
}
