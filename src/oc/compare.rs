//! Choosing between O–C models: χ², reduced χ², the Bayesian information criterion and the
//! F-test for nested models, with a plain-language verdict that quotes its numbers.

use statrs::distribution::{ContinuousCDF, FisherSnedecor};

use super::fitting::ModelFit;

/// Goodness of fit of one model.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct ModelComparison {
    /// Model name.
    pub model: String,
    /// χ².
    pub chi2: f64,
    /// Degrees of freedom.
    pub dof: usize,
    /// χ²/dof.
    pub reduced_chi2: f64,
    /// BIC = χ² + k ln n (Schwarz 1978, Ann. Stat. 6, 461; Gaussian errors, known σ).
    pub bic: f64,
    /// Number of parameters.
    pub parameters: usize,
}

/// Goodness-of-fit numbers of a fit.
pub fn information(fit: &ModelFit) -> ModelComparison {
    let k = fit.params.len();
    let dof = fit.dof();
    ModelComparison {
        model: fit.kind.name().to_string(),
        chi2: fit.chi2,
        dof,
        reduced_chi2: if dof > 0 { fit.chi2 / dof as f64 } else { f64::INFINITY },
        bic: fit.chi2 + k as f64 * (fit.n as f64).ln(),
        parameters: k,
    }
}

/// The F-test between a simpler model and a richer one that contains it.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct NestedTest {
    /// Simpler model.
    pub simpler: String,
    /// Richer model.
    pub richer: String,
    /// F = [(χ²₁ − χ²₂)/(k₂ − k₁)] / [χ²₂/(n − k₂)].
    pub f_statistic: f64,
    /// Probability of an F this large by chance if the simpler model were true.
    pub p_value: f64,
    /// BIC(richer) − BIC(simpler); negative favours the richer model.
    pub delta_bic: f64,
    /// Whether the richer model is preferred (p < 0.0027, i.e. 3σ, and ΔBIC < −6).
    pub richer_preferred: bool,
    /// The verdict in words with its numbers.
    pub verdict: String,
}

/// F-test of nested models (Bevington & Robinson 2003, Data Reduction and Error Analysis,
/// 3rd ed., §11.4; Lupton 1993, Statistics in Theory and Practice, ch. 12) with the Fisher–
/// Snedecor distribution of `statrs`. Thresholds: p < 0.0027 (3σ) and ΔBIC < −6 ("strong",
/// Kass & Raftery 1995, JASA 90, 773). Returns `None` when the models are not nested in
/// parameter count or a degree of freedom is zero.
pub fn compare_nested(simpler: &ModelFit, richer: &ModelFit) -> Option<NestedTest> {
    let a = information(simpler);
    let b = information(richer);
    if b.parameters <= a.parameters || b.dof == 0 || simpler.n != richer.n {
        return None;
    }
    let d1 = (b.parameters - a.parameters) as f64;
    let d2 = b.dof as f64;
    let f = ((a.chi2 - b.chi2) / d1) / (b.chi2 / d2);
    let p = if f > 0.0 {
        let dist = FisherSnedecor::new(d1, d2).ok()?;
        let p = dist.sf(f);
        // A huge F makes the survival function underflow (or come back undefined); it is
        // then below anything a double can hold, not "no evidence".
        if p.is_finite() {
            p.clamp(0.0, 1.0)
        } else if f > 1.0 {
            0.0
        } else {
            1.0
        }
    } else {
        1.0
    };
    let delta_bic = b.bic - a.bic;
    let f_says = p < F_TEST_P_LIMIT;
    let bic_says = delta_bic < DELTA_BIC_LIMIT;
    let preferred = f_says && bic_says;
    let numbers = format!(
        "χ² {:.1} → {:.1} for {} more parameters; F = {:.2}, {}; ΔBIC = {:.1}",
        a.chi2,
        b.chi2,
        d1,
        f,
        format_p_value(p),
        delta_bic
    );
    let verdict = match (f_says, bic_says) {
        (true, true) => format!(
            "the {} model is preferred over the {} model: the F-test and ΔBIC agree ({numbers})",
            b.model, a.model
        ),
        (false, false) => format!(
            "the {} model is not justified over the {} model: neither the F-test nor ΔBIC favours it ({numbers}); keep the simpler model",
            b.model, a.model
        ),
        (true, false) => format!(
            "the F-test favours the {} model over the {} model but ΔBIC does not reach {DELTA_BIC_LIMIT} ({numbers}); ΔBIC decided (both are required): keep the simpler model",
            b.model, a.model
        ),
        (false, true) => format!(
            "ΔBIC favours the {} model over the {} model but the F-test does not reach p < {F_TEST_P_LIMIT} ({numbers}); the F-test decided (both are required): keep the simpler model",
            b.model, a.model
        ),
    };
    Some(NestedTest {
        simpler: a.model,
        richer: b.model,
        f_statistic: f,
        p_value: p,
        delta_bic,
        richer_preferred: preferred,
        verdict,
    })
}

/// F-test false-alarm limit of [`compare_nested`] (3σ, common practice).
pub const F_TEST_P_LIMIT: f64 = 0.0027;
/// ΔBIC limit of [`compare_nested`] ("strong" evidence, Kass & Raftery 1995).
pub const DELTA_BIC_LIMIT: f64 = -6.0;

/// A p-value as text: below 1e-16 (the double-precision floor of 1 − CDF) as the bound
/// "p < 1e-16", otherwise `p = 1.23e-5` or `p = 0.123`.
pub fn format_p_value(p: f64) -> String {
    if p < crate::constants::PROBABILITY_FLOOR {
        "p < 1e-16".to_string()
    } else if p < 1e-3 {
        format!("p = {p:.2e}")
    } else {
        format!("p = {p:.3}")
    }
}
