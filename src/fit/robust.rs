//! Robust loss by iteratively reweighted least squares: Huber's loss keeps the square for
//! normalised residuals |r| ≤ k and grows linearly beyond, which is the same as weighting
//! each observation by min(1, k/|r|) and refitting until the weights settle.
//! Source: Huber (1964), Ann. Math. Stat. 35, 73; the tuning constant k = 1.345 gives 95 %
//! efficiency for Gaussian errors (Holland & Welsch 1977, Commun. Stat. A6, 813).

/// The usual Huber tuning constant (95 % Gaussian efficiency).
pub const HUBER_DEFAULT_K: f64 = 1.345;

/// Huber weight factors min(1, k/|r|) of residuals normalised by their 1σ errors.
///
/// Given: normalised residuals r (dimensionless), k > 0. Returned: one factor in (0, 1] per
/// residual, to multiply the weights 1/σ² by. Non-finite residuals get the smallest factor.
pub fn huber_weight_factors(normalised_residuals: &[f64], k: f64) -> Vec<f64> {
    normalised_residuals
        .iter()
        .map(|r| {
            let a = r.abs();
            if !a.is_finite() {
                1e-6
            } else if a <= k {
                1.0
            } else {
                k / a
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn weights_are_one_inside_and_k_over_r_outside() {
        let w = huber_weight_factors(&[0.0, -1.0, 1.345, 2.69, -13.45, f64::NAN], HUBER_DEFAULT_K);
        assert_eq!(&w[..3], &[1.0, 1.0, 1.0]);
        assert!((w[3] - 0.5).abs() < 1e-12 && (w[4] - 0.1).abs() < 1e-12 && w[5] <= 1e-6);
    }
}
