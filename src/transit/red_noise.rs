//! Time-correlated ("red") noise in fit residuals: the time-averaging method of Winn et al.
//! (2008, ApJ 683, 1076, §3; after Pont, Zucker & Queloz 2006). Residuals are averaged in
//! bins of N consecutive points; for white noise the scatter of the bin means falls as
//! σ₁/√N. The ratio β of the measured to the expected scatter, averaged over bin lengths
//! comparable to the ingress duration, inflates the timing uncertainty.

/// The time-averaging factor β of `residuals` (in time order, evenly enough sampled), over
/// bins of `min_points` to `max_points` consecutive points (each bin length used needs at
/// least `min_bins` bins).
///
/// For each N: σ_N = rms of the bin means (about zero: fit residuals with a free baseline),
/// expected σ₁/√N with σ₁ the rms of the unbinned residuals; β = max(1, mean of σ_N /
/// expected over the N used). Returns 1 when no bin length qualifies. Source: Winn et al.
/// (2008), ApJ 683, 1076, §3 (their √(M/(M−1)) factor belongs to a scatter measured about
/// the sample mean; here it is about zero, whose expectation is σ₁²/N exactly).
pub fn time_averaging_beta(residuals: &[f64], min_points: usize, max_points: usize, min_bins: usize) -> f64 {
    let n = residuals.len();
    if n == 0 {
        return 1.0;
    }
    let sigma1 = (residuals.iter().map(|r| r * r).sum::<f64>() / n as f64).sqrt();
    if !(sigma1 > 0.0) {
        return 1.0;
    }
    let (mut sum, mut count) = (0.0, 0usize);
    for width in min_points.max(2)..=max_points {
        let bins = n / width;
        if bins < min_bins.max(2) {
            break;
        }
        // Bins laid from the start; the leftover tail (< width points) is unused.
        let mut s2 = 0.0;
        for k in 0..bins {
            let mean = residuals[k * width..(k + 1) * width].iter().sum::<f64>() / width as f64;
            s2 += mean * mean;
        }
        let sigma_n = (s2 / bins as f64).sqrt();
        sum += sigma_n / (sigma1 / (width as f64).sqrt());
        count += 1;
    }
    if count == 0 { 1.0 } else { (sum / count as f64).max(1.0) }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::random::SeededRng;

    #[test]
    fn random_walk_noise_gives_large_beta_and_white_noise_near_one() {
        let mut rng = SeededRng::new(7);
        let white: Vec<f64> = (0..2000).map(|_| rng.normal()).collect();
        let mut level = 0.0;
        let red: Vec<f64> = (0..2000)
            .map(|_| {
                level = 0.95 * level + 0.5 * rng.normal();
                level + rng.normal()
            })
            .collect();
        let bw = time_averaging_beta(&white, 5, 20, 10);
        let br = time_averaging_beta(&red, 5, 20, 10);
        assert!(bw < 1.15, "white β {bw}");
        assert!(br > 2.0, "red β {br}");
    }
}
