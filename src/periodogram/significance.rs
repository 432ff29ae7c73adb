//! False-alarm probabilities of periodogram peaks: Baluev's analytic approximation for
//! the generalised Lomb–Scargle periodogram, and a seeded parallel bootstrap that works for
//! any method. Both answer: how often would noise alone give a maximum this high?

use super::special::ln_gamma;
use super::{FrequencyGrid, Periodogram, SearchError, Series};
use crate::fit::SeededRng;
use rayon::prelude::*;

/// Analytic false-alarm probability of the highest GLS peak of power `power` (standard
/// normalisation, floating mean, p = 1 − χ²/χ²₀) searched up to `max_freq_per_day`.
/// FAP ≈ 1 − (1 − (1−z)^{(N−3)/2}) · exp(−τ(z)), with
/// τ = γ(N−1) · W · (1−z)^{(N−4)/2} · √((N−1) z / 2), W = f_max · √(4π Var_w(t)),
/// γ(n) = √(2/n) Γ(n/2)/Γ((n−1)/2). An upper bound that is tight for small FAP; accurate to
/// a few per cent for FAP ≲ 0.1 on white noise. Source: Baluev (2008), MNRAS 385, 1279,
/// §§3–4 (the "Davies bound" for the z-normalised periodogram).
///
/// Evaluated without cancellation (see [`baluev_log10_fap`]), so that probabilities far
/// below the machine epsilon keep their digits (1.5e-27 stays 1.5e-27); values below the
/// smallest `f64` (~1e-308) come back as 0 — use [`baluev_log10_fap`] for those.
pub fn baluev_fap(power: f64, series: &Series, max_freq_per_day: f64) -> Result<f64, SearchError> {
    Ok(10f64.powf(baluev_log10_fap(power, series, max_freq_per_day)?).clamp(0.0, 1.0))
}

/// log₁₀ of [`baluev_fap`], computed in log space so that it never underflows: with
/// s = (1−z)^{(N−3)/2} and τ as in [`baluev_fap`], both kept as logarithms,
/// FAP = −expm1(ln1p(−s) − τ) where s or τ exceeds 1e-13, and ln FAP = logaddexp(ln s, ln τ)
/// below (FAP = s + τ − sτ, so the neglected sτ is < 1e-13 of the result). Relative accuracy
/// of the probability ~1e-12 over its whole range (tests/search_significance.rs checks
/// astropy 8.0.2 `LombScargle.false_alarm_probability(method="baluev")` and a 50-digit
/// mpmath evaluation of the same formula where astropy's `f64` underflows).
pub fn baluev_log10_fap(power: f64, series: &Series, max_freq_per_day: f64) -> Result<f64, SearchError> {
    let n = series.len();
    if n < 5 {
        return Err(SearchError::TooFewPoints {
            needed: 5,
            got: n,
            dropped: series.n_dropped,
            reason: "the analytic false-alarm probability",
        });
    }
    if !(power.is_finite() && (0.0..=1.0).contains(&power)) {
        return Err(SearchError::InvalidParameter {
            name: "power",
            value: power,
            expected: "a normalised power between 0 and 1",
        });
    }
    if !(max_freq_per_day.is_finite() && max_freq_per_day > 0.0) {
        return Err(SearchError::InvalidParameter {
            name: "maximum frequency (c/d)",
            value: max_freq_per_day,
            expected: "a finite frequency > 0",
        });
    }
    let sw: f64 = series.weight.iter().sum();
    let tm: f64 = series.time_d.iter().zip(&series.weight).map(|(t, w)| t * w).sum::<f64>() / sw;
    let var_t: f64 = series.time_d.iter().zip(&series.weight).map(|(t, w)| w * (t - tm) * (t - tm)).sum::<f64>() / sw;
    Ok(baluev_log10_fap_nested(power, n, 1, var_t, max_freq_per_day))
}

/// [`baluev_log10_fap`] for a sinusoid added to any linear base model of `base_parameters`
/// parameters (1: the floating mean of the GLS; 2: a line, as for the O–C of a linear
/// ephemeris), with power z = 1 − χ²(base + sinusoid)/χ²(base), `n` points of weighted time
/// variance `var_t` (time units²; frequencies in the inverse unit). Baluev's N_H = n − d_H and
/// N_K = N_H − 2. Source: Baluev (2008), MNRAS 385, 1279, §§3–4. Needs n ≥ d_H + 4 and
/// 0 ≤ z ≤ 1 (NaN otherwise).
pub fn baluev_log10_fap_nested(power: f64, n: usize, base_parameters: usize, var_t: f64, max_freq: f64) -> f64 {
    if n < base_parameters + 4 || !(power.is_finite() && (0.0..=1.0).contains(&power)) || !(var_t > 0.0) {
        return f64::NAN;
    }
    let max_freq_per_day = max_freq;
    let w_eff = max_freq_per_day * (4.0 * std::f64::consts::PI * var_t).sqrt();
    let nh = (n - base_parameters) as f64;
    let nk = nh - 2.0;
    let z = power;
    if z == 0.0 {
        return 0.0;
    }
    // ln(1 − z); −∞ at z = 1 (a perfect fit: probability 0, log10 −∞).
    let ln_one_minus_z = (-z).ln_1p();
    let ln_single = 0.5 * nk * ln_one_minus_z;
    let ln_gamma_factor = 0.5 * (2.0 / nh).ln() + ln_gamma(0.5 * nh) - ln_gamma(0.5 * (nh - 1.0));
    let ln_tau = ln_gamma_factor + w_eff.ln() + 0.5 * (nk - 1.0) * ln_one_minus_z + 0.5 * (0.5 * nh * z).ln();
    const SMALL: f64 = -30.0; // e^−30 ≈ 1e-13
    let ln_fap = if ln_single.max(ln_tau) > SMALL {
        let x = (-ln_single.exp()).ln_1p() - ln_tau.exp();
        (-x.exp_m1()).min(1.0).ln()
    } else {
        let (hi, lo) = if ln_single >= ln_tau { (ln_single, ln_tau) } else { (ln_tau, ln_single) };
        if hi == f64::NEG_INFINITY { f64::NEG_INFINITY } else { hi + (lo - hi).exp().ln_1p() }
    };
    (ln_fap / std::f64::consts::LN_10).min(0.0)
}

/// A probability given as its log₁₀ (e.g. from [`baluev_log10_fap`]) as text: "0.123",
/// "3.10e-5", "1.50e-27" while an `f64` holds it, and "10^-412.3" below (~1e-300); "0" for
/// an exact zero (log −∞) and "n/a" for NaN. Unlike a value computed as 1 − CDF, a
/// log-space probability has no floor at the machine epsilon, so no "< 1e-16" bound is
/// needed for it (common practice for very small probabilities).
pub fn format_log10_probability(log10_p: f64) -> String {
    if log10_p.is_nan() {
        "n/a".to_string()
    } else if log10_p == f64::NEG_INFINITY {
        "0".to_string()
    } else if log10_p >= -1.0 {
        format!("{:.3}", 10f64.powf(log10_p.min(0.0)))
    } else if log10_p >= -300.0 {
        format!("{:.2e}", 10f64.powf(log10_p))
    } else {
        format!("10^{log10_p:.1}")
    }
}

/// Options of the bootstrap false-alarm probability.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BootstrapOptions {
    /// Number of resampled light curves.
    pub trials: usize,
    /// Seed; trial k uses stream k of this seed, so results do not depend on threads.
    pub seed: u64,
}

/// Result of a bootstrap.
#[derive(Debug, Clone, PartialEq)]
pub struct BootstrapFap {
    /// Fraction of trials whose highest peak reached the observed power (resolution 1/trials).
    pub fap: f64,
    /// Number of such trials.
    pub exceedances: usize,
    /// The highest power of each trial, in trial order.
    pub trial_max_power: Vec<f64>,
}

/// Bootstrap false-alarm probability: keep the times, draw (value, weight) pairs with
/// replacement, evaluate `method` on `grid`, and count how often the highest power reaches
/// `observed_power`. Parallel over trials; deterministic for a given seed.
/// Source: common practice (e.g. Süveges 2014, MNRAS 440, 2099; VanderPlas 2018, §7.4.2).
pub fn bootstrap_fap(
    series: &Series,
    grid: &FrequencyGrid,
    method: &dyn Periodogram,
    observed_power: f64,
    options: &BootstrapOptions,
) -> Result<BootstrapFap, SearchError> {
    if options.trials == 0 {
        return Err(SearchError::InvalidParameter {
            name: "bootstrap trials",
            value: 0.0,
            expected: "at least 1 trial (100 or more for a useful estimate)",
        });
    }
    method.check_series(series)?;
    let n = series.len();
    let results: Vec<Result<f64, SearchError>> = (0..options.trials)
        .into_par_iter()
        .map(|k| {
            let mut rng = SeededRng::for_stream(options.seed, k as u64);
            let mut trial = series.clone();
            for i in 0..n {
                let j = rng.below(n);
                trial.value[i] = series.value[j];
                trial.weight[i] = series.weight[j];
            }
            if trial.value.iter().all(|&v| v == trial.value[0]) {
                return Ok(0.0);
            }
            let spec = method.evaluate_unchecked(&trial, grid)?;
            Ok(spec.argmax().map_or(0.0, |(_, p)| p))
        })
        .collect();
    let trial_max_power = results.into_iter().collect::<Result<Vec<f64>, SearchError>>()?;
    let exceedances = trial_max_power.iter().filter(|&&p| p >= observed_power).count();
    Ok(BootstrapFap { fap: exceedances as f64 / options.trials as f64, exceedances, trial_max_power })
}

/// A probability as text, in the style of [`format_log10_probability`] ("0.123",
/// "3.10e-5", "1.50e-27"), with no floor: the analytic and cascade probabilities keep their
/// relative accuracy down to ~1e-300 (see [`baluev_log10_fap`]). "< 1e-307" for 0 (the value
/// underflowed: print its log₁₀ with [`format_log10_probability`] where it is at hand), "n/a"
/// for NaN.
pub fn format_probability(p: f64) -> String {
    if p.is_nan() {
        "n/a".to_string()
    } else if p <= 0.0 {
        "< 1e-307".to_string()
    } else {
        format_log10_probability(p.min(1.0).log10())
    }
}

#[cfg(test)]
mod format_tests {
    use super::*;

    #[test]
    fn probabilities_print_without_a_floor() {
        assert_eq!(format_probability(1.5e-27), "1.50e-27");
        assert_eq!(format_probability(3.1e-5), "3.10e-5");
        assert_eq!(format_probability(0.123), "0.123");
        assert_eq!(format_probability(0.0), "< 1e-307");
        assert_eq!(format_probability(f64::NAN), "n/a");
        assert_eq!(format_log10_probability(-412.34), "10^-412.3");
    }
}
