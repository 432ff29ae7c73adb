//! Phase folding: φ = frac((t − t₀)/P) ∈ [0, 1).

use crate::periodogram::SearchError;

pub use crate::light_curve::phase_of;

/// Phases of all times; refuses a non-positive or non-finite period or epoch.
pub fn fold_times(time_d: &[f64], period_d: f64, epoch_d: f64) -> Result<Vec<f64>, SearchError> {
    if !(period_d.is_finite() && period_d > 0.0) {
        return Err(SearchError::InvalidParameter {
            name: "period (d)",
            value: period_d,
            expected: "a finite period > 0",
        });
    }
    if !epoch_d.is_finite() {
        return Err(SearchError::InvalidParameter { name: "epoch (d)", value: epoch_d, expected: "a finite time" });
    }
    Ok(time_d.iter().map(|&t| phase_of(t, period_d, epoch_d)).collect())
}

#[cfg(test)]
mod tests {
    use super::*;
    #[test]
    fn phases_wrap_into_unit_interval() {
        assert!((phase_of(12.5, 2.0, 0.0) - 0.25).abs() < 1e-15);
        assert!((phase_of(-0.5, 2.0, 0.0) - 0.75).abs() < 1e-15);
        assert!(fold_times(&[1.0], 0.0, 0.0).is_err());
        assert!(fold_times(&[1.0], f64::NAN, 0.0).is_err());
    }
}
