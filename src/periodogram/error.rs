//! Errors of the search stage (periodograms, folding, frequency extraction).

use crate::fit::FitError;

/// Everything a user can get wrong when searching a light curve for periods.
/// Row numbers refer to the caller's input arrays (0-based, before dropping).
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SearchError {
    /// An input column does not have one value per time.
    #[error("{what}: expected {expected} values (one per time), got {got}")]
    LengthMismatch { what: &'static str, expected: usize, got: usize },
    /// Not enough usable points for the requested model.
    #[error(
        "{reason} needs at least {needed} usable points, got {got} (after dropping {dropped} rows with NaN or infinite values)"
    )]
    TooFewPoints { needed: usize, got: usize, dropped: usize, reason: &'static str },
    /// An uncertainty is zero or negative.
    #[error(
        "uncertainty at row {row} is {value}; uncertainties must be > 0 (remove the row or give a positive uncertainty)"
    )]
    NonPositiveError { row: usize, value: f64 },
    /// Times go backwards.
    #[error(
        "times must not decrease: row {row} has {time_d} d after {previous_d} d; sort the light curve by time first"
    )]
    UnsortedTimes { row: usize, time_d: f64, previous_d: f64 },
    /// The same time appears twice in one band.
    #[error(
        "time {time_d} d appears twice in band {band} (rows {first_row} and {row}); average or remove duplicates first"
    )]
    DuplicateTime { row: usize, first_row: usize, time_d: f64, band: u32 },
    /// No variation to search.
    #[error("the light curve is constant (zero weighted variance in every band); there is no period to search")]
    ConstantSeries,
    /// The requested frequency range cannot be resolved by the data.
    #[error(
        "frequencies {min_freq_per_day} to {max_freq_per_day} c/d cannot be searched with a baseline of {baseline_d} d: {reason}"
    )]
    UnresolvableRange { min_freq_per_day: f64, max_freq_per_day: f64, baseline_d: f64, reason: &'static str },
    /// The grid would not fit in memory.
    #[error(
        "the frequency grid has {n_freq} frequencies and would need about {bytes_needed} bytes, over the limit of {bytes_limit} bytes; lower the maximum frequency or the oversampling, or raise the memory limit"
    )]
    GridTooLarge { n_freq: usize, bytes_needed: u128, bytes_limit: u128 },
    /// A parameter is outside its accepted range.
    #[error("{name} = {value} is not accepted: {expected}")]
    InvalidParameter { name: &'static str, value: f64, expected: &'static str },
    /// A least-squares fit failed.
    #[error("fit failed: {0}")]
    Fit(#[from] FitError),
}
