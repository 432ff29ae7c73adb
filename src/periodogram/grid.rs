//! Frequency grids chosen from the baseline of the data.

use super::error::SearchError;

/// A uniform grid of frequencies f_k = start + k·step, k = 0..len, in cycles per day.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FrequencyGrid {
    /// First frequency f_0, cycles per day.
    pub start_per_day: f64,
    /// Spacing between neighbouring frequencies, cycles per day.
    pub step_per_day: f64,
    /// Number of frequencies.
    pub len: usize,
}

impl FrequencyGrid {
    /// A grid given explicitly; start ≥ 0, step > 0, len ≥ 1.
    pub fn new(start_per_day: f64, step_per_day: f64, len: usize) -> Result<Self, SearchError> {
        if !(start_per_day.is_finite() && start_per_day >= 0.0) {
            return Err(SearchError::InvalidParameter {
                name: "grid start (c/d)",
                value: start_per_day,
                expected: "a finite frequency ≥ 0",
            });
        }
        if !(step_per_day.is_finite() && step_per_day > 0.0) {
            return Err(SearchError::InvalidParameter {
                name: "grid step (c/d)",
                value: step_per_day,
                expected: "a finite step > 0",
            });
        }
        if len == 0 {
            return Err(SearchError::InvalidParameter {
                name: "grid length",
                value: 0.0,
                expected: "at least one frequency",
            });
        }
        Ok(FrequencyGrid { start_per_day, step_per_day, len })
    }
    /// Frequency k, cycles per day.
    pub fn freq_per_day(&self, k: usize) -> f64 {
        self.start_per_day + k as f64 * self.step_per_day
    }
    /// All frequencies, cycles per day.
    pub fn frequencies(&self) -> Vec<f64> {
        (0..self.len).map(|k| self.freq_per_day(k)).collect()
    }
    /// Highest frequency, cycles per day.
    pub fn max_freq_per_day(&self) -> f64 {
        self.freq_per_day(self.len.saturating_sub(1))
    }
}

/// Approximate memory per grid frequency across the periodogram methods, bytes (power,
/// amplitude, six accumulated sums, and the oversampled FFT work arrays of the fast method).
pub const BYTES_PER_FREQUENCY: u128 = 320;

/// What the caller asks of a grid.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GridRequest {
    /// Frequencies per resolution element 1/T (common practice: 5–10).
    pub oversampling: f64,
    /// Lowest frequency, c/d; default 1/T (one cycle over the baseline).
    pub min_freq_per_day: Option<f64>,
    /// Highest frequency, c/d.
    pub max_freq_per_day: f64,
    /// Refuse grids whose estimated memory exceeds this many bytes.
    pub memory_limit_bytes: u128,
}

impl GridRequest {
    /// Oversampling 5, default lowest frequency, 2 GiB limit.
    pub fn up_to(max_freq_per_day: f64) -> Self {
        GridRequest { oversampling: 5.0, min_freq_per_day: None, max_freq_per_day, memory_limit_bytes: 2 << 30 }
    }
}

/// A planned grid with its estimated memory.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GridPlan {
    /// The grid to search.
    pub grid: FrequencyGrid,
    /// Estimated memory of a search on it, bytes ([`BYTES_PER_FREQUENCY`] per frequency).
    pub bytes_estimate: u128,
}

/// Grid from the baseline T (days): step 1/(oversampling·T) from the lowest frequency
/// (default 1/T) to the highest. Refuses a lowest frequency below 1/T (periods longer than
/// the baseline are not resolved), an empty range, and grids over the memory limit.
/// Source: common practice (e.g. VanderPlas 2018, ApJS 236, 16, §7.1).
pub fn plan_grid(baseline_d: f64, req: &GridRequest) -> Result<GridPlan, SearchError> {
    if !(baseline_d.is_finite() && baseline_d > 0.0) {
        return Err(SearchError::InvalidParameter {
            name: "baseline (d)",
            value: baseline_d,
            expected: "times spanning more than zero days",
        });
    }
    if !(req.oversampling.is_finite() && req.oversampling >= 1.0 && req.oversampling <= 1000.0) {
        return Err(SearchError::InvalidParameter {
            name: "oversampling",
            value: req.oversampling,
            expected: "a number from 1 to 1000",
        });
    }
    let resolution = 1.0 / baseline_d;
    let fmin = req.min_freq_per_day.unwrap_or(resolution);
    let fmax = req.max_freq_per_day;
    if !(fmax.is_finite() && fmax > 0.0) || !fmin.is_finite() {
        return Err(SearchError::UnresolvableRange {
            min_freq_per_day: fmin,
            max_freq_per_day: fmax,
            baseline_d,
            reason: "frequencies must be finite and the maximum > 0",
        });
    }
    if fmin < resolution * (1.0 - 1e-9) {
        return Err(SearchError::UnresolvableRange {
            min_freq_per_day: fmin,
            max_freq_per_day: fmax,
            baseline_d,
            reason: "the longest period asked for exceeds the baseline (lowest frequency must be ≥ 1/baseline)",
        });
    }
    if fmax <= fmin {
        return Err(SearchError::UnresolvableRange {
            min_freq_per_day: fmin,
            max_freq_per_day: fmax,
            baseline_d,
            reason: "the maximum frequency must exceed the minimum",
        });
    }
    let step = resolution / req.oversampling;
    let n_f = ((fmax - fmin) / step).floor() + 1.0;
    let bytes = (n_f * BYTES_PER_FREQUENCY as f64) as u128;
    if n_f > 4.0e9 || bytes > req.memory_limit_bytes {
        return Err(SearchError::GridTooLarge {
            n_freq: n_f.min(usize::MAX as f64) as usize,
            bytes_needed: bytes,
            bytes_limit: req.memory_limit_bytes,
        });
    }
    let grid = FrequencyGrid::new(fmin, step, n_f as usize)?;
    Ok(GridPlan { grid, bytes_estimate: bytes })
}
