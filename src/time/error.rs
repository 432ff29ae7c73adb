//! Errors of the time module. Each names the offending value and what would be accepted;
//! callers that read files wrap them with file, row and column.

use thiserror::Error;

/// What can go wrong when reading, building or converting times.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum TimeError {
    /// A leap-second file could not be read or parsed.
    #[error("leap-second file {file}, line {line}: {message}")]
    LeapFile {
        /// The leap-second file, as given.
        file: String,
        /// Line in the file, 1-based; 0 when the file could not be read at all.
        line: usize,
        /// What is wrong there.
        message: String,
    },
    /// UTC is defined from 1960-01-01 only.
    #[error("UTC before 1960-01-01 is not defined (MJD {mjd_day}); give such times in TT or TDB")]
    UtcBefore1960 {
        /// The day asked for, as an integer MJD.
        mjd_day: i64,
    },
    /// A time string could not be read in the stated format.
    #[error("'{text}' is not a valid {format} time: {expected}")]
    Unparseable {
        /// The text as given.
        text: String,
        /// The format it was read in (e.g. `jd`, `mjd`, `ISO 8601`).
        format: &'static str,
        /// What that format accepts, with an example.
        expected: String,
    },
    /// A day number outside the span skyclock accepts (JD 0 to the end of AD 9999).
    #[error("{text} is outside the times accepted: {format} {low} to {high} (JD 0 = 4713 BC to the end of AD 9999)")]
    OutOfRange {
        /// The text as given.
        text: String,
        /// The format it was read in (JD, MJD, …).
        format: &'static str,
        /// Smallest day number accepted in that format.
        low: f64,
        /// Largest day number accepted in that format.
        high: f64,
    },
    /// A time value is NaN or infinite.
    #[error("time value {value} is not a finite number")]
    NotFinite {
        /// The value read.
        value: f64,
    },
    /// 23:59:60 on a day that has no leap second.
    #[error("{text}: second 60 exists only on a day that ends with a leap second, and {date} does not")]
    NoLeapSecondThatDay {
        /// The time string as given.
        text: String,
        /// Its date part, `YYYY-MM-DD`.
        date: String,
    },
    /// A conversion was asked of a scale that needs more information.
    #[error("cannot convert {from} to {to}: {reason}")]
    Conversion {
        /// Name of the scale converted from.
        from: String,
        /// Name of the scale converted to.
        to: String,
        /// Why the conversion cannot be made, and what to do instead.
        reason: String,
    },
}
