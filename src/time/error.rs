//! Errors of the time module. Each names the offending value and what would be accepted;
//! callers that read files wrap them with file, row and column.

use thiserror::Error;

/// What can go wrong when reading, building or converting times.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum TimeError {
    /// A leap-second file could not be read or parsed.
    #[error("leap-second file {file}, line {line}: {message}")]
    LeapFile { file: String, line: usize, message: String },
    /// UTC is defined from 1960-01-01 only.
    #[error("UTC before 1960-01-01 is not defined (MJD {mjd_day}); give such times in TT or TDB")]
    UtcBefore1960 { mjd_day: i64 },
    /// A time string could not be read in the stated format.
    #[error("'{text}' is not a valid {format} time: {expected}")]
    Unparseable { text: String, format: &'static str, expected: String },
    /// A day number outside the span skyclock accepts (JD 0 to the end of AD 9999).
    #[error("{text} is outside the times accepted: {format} {low} to {high} (JD 0 = 4713 BC to the end of AD 9999)")]
    OutOfRange { text: String, format: &'static str, low: f64, high: f64 },
    /// A time value is NaN or infinite.
    #[error("time value {value} is not a finite number")]
    NotFinite { value: f64 },
    /// 23:59:60 on a day that has no leap second.
    #[error("{text}: second 60 exists only on a day that ends with a leap second, and {date} does not")]
    NoLeapSecondThatDay { text: String, date: String },
    /// A conversion was asked of a scale that needs more information.
    #[error("cannot convert {from} to {to}: {reason}")]
    Conversion { from: String, to: String, reason: String },
}
