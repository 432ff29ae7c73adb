//! False-alarm probabilities of the survey cascade's stages: a single-trial tail
//! probability of the χ² improvement of a model over a constant, carried to the number of
//! independent trials searched (frequencies, phases, durations) and then to the number of
//! sources of a field. The analytic Lomb–Scargle probability lives in
//! `periodogram::significance`; these cover the harmonic series and the box, which have none.

/// Upper tail Q(x; ν) = P(χ²_ν > x) of a χ² variable with an even number of degrees of
/// freedom ν = 2m: Q = e^{−x/2} Σ_{j<m} (x/2)^j / j! (exact identity; Abramowitz & Stegun
/// 26.4.21). Returns 1 for x ≤ 0. Accuracy: ~1e-15 relative while Q > 1e-300.
pub fn chi2_tail_even(x: f64, dof: usize) -> f64 {
    if x.is_nan() || dof == 0 {
        return f64::NAN;
    }
    if x <= 0.0 {
        return 1.0;
    }
    let m = dof.div_ceil(2);
    let h = 0.5 * x;
    let (mut term, mut sum) = (1.0f64, 1.0f64);
    for j in 1..m {
        term *= h / j as f64;
        sum += term;
    }
    ((sum.ln() - h).exp()).min(1.0)
}

/// Complementary error function erfc(x) by the Chebyshev fit of Press et al., Numerical
/// Recipes 3rd ed. §6.2 ("erfccheb" predecessor `erfcc`, fractional error < 1.2e-7
/// everywhere; coefficients from memory, checked in the tests against tabulated values).
pub fn erfc(x: f64) -> f64 {
    let z = x.abs();
    let t = 1.0 / (1.0 + 0.5 * z);
    let poly = -z * z - 1.265_512_23
        + t * (1.000_023_68
            + t * (0.374_091_96
                + t * (0.096_784_18
                    + t * (-0.186_288_06
                        + t * (0.278_868_07
                            + t * (-1.135_203_98 + t * (1.488_515_87 + t * (-0.822_152_23 + t * 0.170_872_77))))))));
    let r = t * poly.exp();
    if x >= 0.0 { r } else { 2.0 - r }
}

/// One-sided tail of a unit normal beyond z: P(Z > z) = erfc(z/√2)/2.
pub fn normal_upper_tail(z: f64) -> f64 {
    0.5 * erfc(z / std::f64::consts::SQRT_2)
}

/// Probability that at least one of `trials` independent trials reaches a single-trial
/// probability `p`: 1 − (1 − p)^trials, computed as −expm1(trials · ln1p(−p)) so that tiny
/// values survive. Trials < 1 count as 1. Source: definition (common practice).
pub fn over_trials(p: f64, trials: f64) -> f64 {
    if !p.is_finite() {
        return f64::NAN;
    }
    let p = p.clamp(0.0, 1.0);
    if p >= 1.0 {
        return 1.0;
    }
    (-(trials.max(1.0) * (-p).ln_1p()).exp_m1()).clamp(0.0, 1.0)
}

/// The false-alarm probability of one source's detection within a field of `n_sources`
/// sources searched the same way: the chance that some source of a field of pure noise
/// shows a detection at least this strong ([`over_trials`]).
pub fn field_false_alarm(source_false_alarm: f64, n_sources: usize) -> f64 {
    over_trials(source_false_alarm, n_sources.max(1) as f64)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn chi2_tail_matches_closed_forms() {
        // ν = 2: Q = e^{−x/2} (exact).
        assert!((chi2_tail_even(3.0, 2) - (-1.5f64).exp()).abs() < 1e-15);
        // ν = 4: Q = e^{−x/2}(1 + x/2); Abramowitz & Stegun table 26.8: Q(9.488; 4) = 0.05.
        assert!((chi2_tail_even(9.487_729, 4) - 0.05).abs() < 1e-6);
        // ν = 6: 5 % point 12.5916 (A&S table 26.8).
        assert!((chi2_tail_even(12.591_587, 6) - 0.05).abs() < 1e-6);
        assert_eq!(chi2_tail_even(-1.0, 4), 1.0);
    }

    #[test]
    fn erfc_matches_tabulated_values() {
        // erfc(1) = 0.157 299 207 050 285, erfc(2) = 0.004 677 734 981 047 (A&S table 7.1).
        assert!((erfc(1.0) / 0.157_299_207_050_285 - 1.0).abs() < 2e-7);
        assert!((erfc(2.0) / 0.004_677_734_981_047 - 1.0).abs() < 2e-7);
        assert!((erfc(-1.0) - (2.0 - 0.157_299_207_050_285)).abs() < 2e-7);
        // one-sided 5σ tail 2.866 5e-7 (common practice, from memory)
        assert!((normal_upper_tail(5.0) / 2.866_515_7e-7 - 1.0).abs() < 1e-5);
    }

    #[test]
    fn trials_compound_as_independent_draws() {
        assert!((over_trials(0.1, 2.0) - 0.19).abs() < 1e-15);
        assert!((over_trials(1e-20, 1e6) / 1e-14 - 1.0).abs() < 1e-9);
        assert!((field_false_alarm(0.001, 1000) - (1.0 - 0.999f64.powi(1000))).abs() < 1e-12);
    }
}
