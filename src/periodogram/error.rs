//! Errors of the search stage (periodograms, folding, frequency extraction).

use crate::fit::FitError;

/// Everything a user can get wrong when searching a light curve for periods.
/// Row numbers refer to the caller's input arrays (0-based, before dropping).
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SearchError {
    /// An input column does not have one value per time.
    #[error("{what}: expected {expected} values (one per time), got {got}")]
    LengthMismatch {
        /// Which column is the wrong length ("values", "uncertainties", "band labels").
        what: &'static str,
        /// Number of times, the length the column should have.
        expected: usize,
        /// Length of the column given.
        got: usize,
    },
    /// Not enough usable points for the requested model.
    #[error(
        "{reason} needs at least {needed} usable points, got {got} (after dropping {dropped} rows with NaN or infinite values)"
    )]
    TooFewPoints {
        /// Smallest number of usable points the model accepts.
        needed: usize,
        /// Usable points left after dropping non-finite rows.
        got: usize,
        /// Rows dropped because a time, value or uncertainty was NaN or infinite.
        dropped: usize,
        /// What needs the points (e.g. "a period search").
        reason: &'static str,
    },
    /// An uncertainty is zero or negative.
    #[error(
        "uncertainty at row {row} is {value}; uncertainties must be > 0 (remove the row or give a positive uncertainty)"
    )]
    NonPositiveError {
        /// Input row (0-based) of the uncertainty.
        row: usize,
        /// The uncertainty given, in the units of the values.
        value: f64,
    },
    /// Times go backwards.
    #[error(
        "times must not decrease: row {row} has {time_d} d after {previous_d} d; sort the light curve by time first"
    )]
    UnsortedTimes {
        /// Input row (0-based) whose time is earlier than the one before it.
        row: usize,
        /// Time of that row, days from the caller's epoch.
        time_d: f64,
        /// Time of the previous kept row, days from the caller's epoch.
        previous_d: f64,
    },
    /// The same time appears twice in one band.
    #[error(
        "time {time_d} d appears twice in band {band} (rows {first_row} and {row}); average or remove duplicates first"
    )]
    DuplicateTime {
        /// Input row (0-based) of the second occurrence.
        row: usize,
        /// Input row (0-based) of the first occurrence.
        first_row: usize,
        /// The repeated time, days from the caller's epoch.
        time_d: f64,
        /// The caller's band label of both rows.
        band: u32,
    },
    /// No variation to search.
    #[error("the light curve is constant (zero weighted variance in every band); there is no period to search")]
    ConstantSeries,
    /// The requested frequency range cannot be resolved by the data.
    #[error(
        "frequencies {min_freq_per_day} to {max_freq_per_day} c/d cannot be searched with a baseline of {baseline_d} d: {reason}"
    )]
    UnresolvableRange {
        /// Lowest frequency asked for, cycles per day.
        min_freq_per_day: f64,
        /// Highest frequency asked for, cycles per day.
        max_freq_per_day: f64,
        /// Time span of the data (last minus first time), days.
        baseline_d: f64,
        /// Why the range cannot be searched.
        reason: &'static str,
    },
    /// The grid would not fit in memory.
    #[error(
        "the frequency grid has {n_freq} frequencies and would need about {bytes_needed} bytes, over the limit of {bytes_limit} bytes; lower the maximum frequency or the oversampling, or raise the memory limit"
    )]
    GridTooLarge {
        /// Number of trial frequencies the grid would have.
        n_freq: usize,
        /// Estimated memory the search would need, bytes.
        bytes_needed: u128,
        /// The memory limit in force, bytes.
        bytes_limit: u128,
    },
    /// A parameter is outside its accepted range.
    #[error("{name} = {value} is not accepted: {expected}")]
    InvalidParameter {
        /// Name of the parameter, in words.
        name: &'static str,
        /// The value given (counts and flags as numbers).
        value: f64,
        /// The accepted range, in words.
        expected: &'static str,
    },
    /// A least-squares fit failed.
    #[error("fit failed: {0}")]
    Fit(#[from] FitError),
}
