//! Periodicity statistics on pulse phases: Rayleigh, Z²ₙ, H-test and epoch-folding χ²,
//! each with optional photon weights (probabilities that a photon comes from the source).
//!
//! Phases are in cycles (any real number; only the fractional part matters).
//! Weighted forms follow Kerr (2011, ApJ 732, 38, eq. 8): Z²ₙ = (2/Σw²) Σₖ |Σⱼ wⱼ e^{2πikφⱼ}|²,
//! which reduces to Buccheri et al. (1983) for unit weights.

use statrs::distribution::{ChiSquared, ContinuousCDF};

use super::PulsarError;

/// Highest harmonic the H-test scans (de Jager et al. 1989 use 20).
pub const H_TEST_MAX_HARMONICS: usize = 20;

/// Trigonometric moments Σ wⱼ cos(2πkφⱼ), Σ wⱼ sin(2πkφⱼ) for k = 1..=harmonics, and Σ w².
///
/// Given: phases (cycles), weights (None = all 1; each finite and ≥ 0), harmonics ≥ 1.
/// Returned: (cos sums, sin sums, Σw²). Accuracy: f64 summation, phases reduced to [0, 1)
/// before the trigonometry. Source: common practice.
pub fn trigonometric_moments(
    phase_cycles: &[f64],
    weights: Option<&[f64]>,
    harmonics: usize,
) -> Result<(Vec<f64>, Vec<f64>, f64), PulsarError> {
    check(phase_cycles, weights)?;
    let mut c = vec![0.0; harmonics];
    let mut s = vec![0.0; harmonics];
    let mut w2 = 0.0;
    for (j, &p) in phase_cycles.iter().enumerate() {
        let w = weights.map_or(1.0, |w| w[j]);
        w2 += w * w;
        let (s1, c1) = (std::f64::consts::TAU * p.rem_euclid(1.0)).sin_cos();
        let (mut ck, mut sk) = (c1, s1);
        for k in 0..harmonics {
            c[k] += w * ck;
            s[k] += w * sk;
            let next_c = ck * c1 - sk * s1;
            sk = sk * c1 + ck * s1;
            ck = next_c;
        }
    }
    Ok((c, s, w2))
}

fn check(phase_cycles: &[f64], weights: Option<&[f64]>) -> Result<(), PulsarError> {
    if phase_cycles.is_empty() {
        return Err(PulsarError::Input("no photons: a periodicity statistic needs at least one phase".into()));
    }
    if let Some((i, p)) = phase_cycles.iter().enumerate().find(|(_, p)| !p.is_finite()) {
        return Err(PulsarError::Input(format!("phase of photon {} is {p}; finite phases are required", i + 1)));
    }
    if let Some(w) = weights {
        if w.len() != phase_cycles.len() {
            return Err(PulsarError::Input(format!(
                "{} weights for {} photons; give one weight per photon",
                w.len(),
                phase_cycles.len()
            )));
        }
        if let Some((i, v)) = w.iter().enumerate().find(|(_, v)| !(v.is_finite() && **v >= 0.0)) {
            return Err(PulsarError::Input(format!(
                "weight of photon {} is {v}; weights must be finite and ≥ 0",
                i + 1
            )));
        }
        if w.iter().all(|v| *v == 0.0) {
            return Err(PulsarError::Input("all photon weights are zero".into()));
        }
    }
    Ok(())
}

/// Z²ₖ for every k = 1..=harmonics from the moments (cumulative sums of the powers).
pub fn cumulative_z2(cos_sums: &[f64], sin_sums: &[f64], sum_w2: f64) -> Vec<f64> {
    let mut acc = 0.0;
    cos_sums
        .iter()
        .zip(sin_sums)
        .map(|(c, s)| {
            acc += 2.0 * (c * c + s * s) / sum_w2;
            acc
        })
        .collect()
}

/// Z²ₙ statistic (Buccheri et al. 1983, A&A 128, 245; weighted: Kerr 2011).
///
/// Given: phases in cycles, optional weights, `harmonics` = n ≥ 1. Returned: Z²ₙ
/// (dimensionless); for uniform phases it follows χ² with 2n degrees of freedom
/// (asymptotically in the number of photons).
pub fn z2n(phase_cycles: &[f64], weights: Option<&[f64]>, harmonics: usize) -> Result<f64, PulsarError> {
    if harmonics == 0 {
        return Err(PulsarError::Input("Z²ₙ needs at least one harmonic".into()));
    }
    let (c, s, w2) = trigonometric_moments(phase_cycles, weights, harmonics)?;
    Ok(*cumulative_z2(&c, &s, w2).last().unwrap_or(&0.0))
}

/// Rayleigh statistic, the Z²₁ form 2R²/N (Mardia & Jupp 2000, §6.3.1).
pub fn rayleigh(phase_cycles: &[f64], weights: Option<&[f64]>) -> Result<f64, PulsarError> {
    z2n(phase_cycles, weights, 1)
}

/// Exact-to-O(N⁻²) tail probability of the Rayleigh statistic Z²₁ = 2R²/N for N uniform
/// unit vectors (Greenwood & Durand 1955, Ann. Math. Stat. 26, 233; as given by Zar,
/// Biostatistical Analysis, 4th ed., eq. 27.4 — from memory):
/// P = e^{−z}[1 + (2z − z²)/(4N) − (24z − 132z² + 76z³ − 9z⁴)/(288N²)], z = Z²₁/2.
/// Clamped to [0, 1]; for N → ∞ it is e^{−Z²₁/2}.
pub fn rayleigh_false_alarm(z2_1: f64, photons: usize) -> f64 {
    let z = 0.5 * z2_1.max(0.0);
    let n = photons.max(1) as f64;
    let p = (-z).exp()
        * (1.0 + (2.0 * z - z * z) / (4.0 * n)
            - (24.0 * z - 132.0 * z * z + 76.0 * z.powi(3) - 9.0 * z.powi(4)) / (288.0 * n * n));
    p.clamp(0.0, 1.0)
}

/// Tail probability of χ² with `dof` degrees of freedom: the single-trial false-alarm
/// probability of Z²ₙ (dof = 2n) and of epoch folding (dof = bins − 1). Source: statrs.
pub fn chi2_false_alarm(statistic: f64, dof: usize) -> f64 {
    match ChiSquared::new(dof.max(1) as f64) {
        Ok(d) => d.sf(statistic.max(0.0)),
        Err(_) => f64::NAN,
    }
}

/// Result of the H-test.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct HTest {
    /// H = max over m of (Z²ₘ − 4m + 4).
    pub h: f64,
    /// The number of harmonics m that gave the maximum.
    pub best_harmonics: usize,
    /// False-alarm probability exp(−0.4 H) (de Jager & Büsching 2010, A&A 517, L9).
    pub false_alarm: f64,
}

/// H-test (de Jager, Raubenheimer & Swanepoel 1989, A&A 221, 180) with m = 1..=20.
/// False alarm: exp(−0.4 H), calibrated by de Jager & Büsching (2010) for H up to ~70.
pub fn h_test(phase_cycles: &[f64], weights: Option<&[f64]>) -> Result<HTest, PulsarError> {
    let (c, s, w2) = trigonometric_moments(phase_cycles, weights, H_TEST_MAX_HARMONICS)?;
    Ok(h_from_cumulative(&cumulative_z2(&c, &s, w2)))
}

/// H-test from cumulative Z²ₘ values (m = 1..).
pub fn h_from_cumulative(z2: &[f64]) -> HTest {
    let mut best = (f64::NEG_INFINITY, 1);
    for (i, z) in z2.iter().enumerate() {
        let m = (i + 1) as f64;
        let h = z - 4.0 * m + 4.0;
        if h > best.0 {
            best = (h, i + 1);
        }
    }
    HTest { h: best.0, best_harmonics: best.1, false_alarm: (-0.4 * best.0.max(0.0)).exp().min(1.0) }
}

/// Epoch-folding χ² (Leahy et al. 1983, ApJ 266, 160): S = Σᵢ (Wᵢ − W/M)² / (Σw²/M) over M
/// phase bins, Wᵢ the (weighted) count in bin i. For unit weights it is Leahy's
/// Σ (nᵢ − N/M)²/(N/M), distributed as χ² with M − 1 degrees of freedom for uniform phases.
pub fn epoch_folding_chi2(phase_cycles: &[f64], weights: Option<&[f64]>, bins: usize) -> Result<f64, PulsarError> {
    check(phase_cycles, weights)?;
    if bins < 2 {
        return Err(PulsarError::Input(format!("epoch folding needs at least 2 phase bins, got {bins}")));
    }
    let mut counts = vec![0.0; bins];
    let mut w2 = 0.0;
    for (j, &p) in phase_cycles.iter().enumerate() {
        let w = weights.map_or(1.0, |w| w[j]);
        let b = ((p.rem_euclid(1.0) * bins as f64) as usize).min(bins - 1);
        counts[b] += w;
        w2 += w * w;
    }
    let total: f64 = counts.iter().sum();
    let expected = total / bins as f64;
    let variance = w2 / bins as f64;
    Ok(counts.iter().map(|c| (c - expected).powi(2) / variance).sum())
}

/// Trials-corrected false-alarm probability 1 − (1 − p)ᴺ, computed without cancellation
/// (−expm1(N·ln1p(−p))). Source: common practice.
pub fn trials_corrected(single_trial: f64, trials: f64) -> f64 {
    if single_trial >= 1.0 {
        return 1.0;
    }
    (-(trials.max(1.0) * (-single_trial.max(0.0)).ln_1p()).exp_m1()).clamp(0.0, 1.0)
}

/// Gaussian-equivalent significance (one-sided, in σ) of a false-alarm probability.
pub fn sigma_equivalent(false_alarm: f64) -> f64 {
    use statrs::distribution::Normal;
    let p = false_alarm.clamp(1e-300, 1.0);
    match Normal::new(0.0, 1.0) {
        Ok(n) => (-n.inverse_cdf(p)).max(0.0),
        Err(_) => f64::NAN,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn z2_of_concentrated_phases_is_2n_per_harmonic() {
        // All phases equal: |Σ e^{ikφ}|² = N², Z²ₙ = 2nN.
        let p = vec![0.3; 50];
        assert!((z2n(&p, None, 3).unwrap() - 300.0).abs() < 1e-9);
        assert!((rayleigh(&p, None).unwrap() - 100.0).abs() < 1e-9);
    }

    #[test]
    fn weights_of_one_match_unweighted_and_bad_weights_refused() {
        let p: Vec<f64> = (0..40).map(|i| (i as f64 * 0.137).fract()).collect();
        let w = vec![1.0; 40];
        assert!((z2n(&p, Some(&w), 2).unwrap() - z2n(&p, None, 2).unwrap()).abs() < 1e-12);
        let mut bad = w.clone();
        bad[7] = -1.0;
        let e = z2n(&p, Some(&bad), 2).unwrap_err().to_string();
        assert!(e.contains("photon 8"), "{e}");
        assert!(z2n(&[], None, 2).is_err());
    }

    #[test]
    fn trials_correction_limits() {
        assert!((trials_corrected(1e-9, 1000.0) - 1e-6).abs() < 1e-12);
        assert_eq!(trials_corrected(0.5, 1.0), 0.5);
        assert!((sigma_equivalent(0.0013499) - 3.0).abs() < 1e-3); // Φ(3) = 0.99865 (common practice)
    }
}
