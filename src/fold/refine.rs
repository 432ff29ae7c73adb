//! Period refinement: a Fourier series of K harmonics with a common frequency,
//! y = z + Σ_k a_k cos 2πk f t + b_k sin 2πk f t, fitted by Levenberg–Marquardt from a
//! periodogram peak. The frequency uncertainty is the least-squares one, scaled by
//! √(χ²/dof) when the data carry no uncertainties (or when χ²/dof > 1).
//! Source: e.g. Schwarzenberg-Czerny (1996), ApJ 460, L107 (the harmonic model);
//! Press et al., Numerical Recipes 3rd ed., §15.4–15.5 (covariance).

use crate::fit::{LevenbergOptions, LsqModel, levenberg_marquardt};
use crate::periodogram::{SearchError, Series};
use std::f64::consts::TAU;

/// A refined period.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RefinedPeriod {
    /// Fitted frequency, cycles per day.
    pub freq_per_day: f64,
    /// 1σ of the frequency, cycles per day (least-squares σ times `err_scale`).
    pub freq_err_per_day: f64,
    /// Period 1/f, days.
    pub period_d: f64,
    /// 1σ of the period, days (σ_f / f²).
    pub period_err_d: f64,
    /// Harmonics in the model.
    pub harmonics: usize,
    /// χ² of the fit (weighted sum of squared residuals: value² units when the data carry
    /// no uncertainties).
    pub chi2: f64,
    /// Degrees of freedom of the fit: points minus fitted parameters.
    pub dof: usize,
    /// Factor applied to the least-squares σ: √(χ²/dof) when the data carry uncertainties
    /// and χ²/dof > 1 (the model or the errors do not describe the data), 1 when χ²/dof ≤ 1;
    /// the residual rms (√(χ²/dof)) without uncertainties.
    pub err_scale: f64,
    /// Whether the σ was inflated: data with uncertainties and χ²/dof > 1.
    pub err_inflated: bool,
}

struct Harmonic<'a> {
    t: Vec<f64>,
    y: &'a [f64],
    w: &'a [f64],
    k: usize,
}

impl LsqModel for Harmonic<'_> {
    fn n_params(&self) -> usize {
        2 + 2 * self.k
    }
    fn n_obs(&self) -> usize {
        self.t.len()
    }
    fn predict(&self, p: &[f64], out: &mut [f64]) {
        for (o, &t) in out.iter_mut().zip(&self.t) {
            let mut v = p[1];
            for h in 1..=self.k {
                let (s, c) = (TAU * h as f64 * p[0] * t).sin_cos();
                v += p[2 * h] * c + p[2 * h + 1] * s;
            }
            *o = v;
        }
    }
    fn jacobian(&self, p: &[f64], jac: &mut [f64]) {
        let np = self.n_params();
        for (i, &t) in self.t.iter().enumerate() {
            let row = &mut jac[i * np..(i + 1) * np];
            row[0] = 0.0;
            row[1] = 1.0;
            for h in 1..=self.k {
                let hf = h as f64;
                let (s, c) = (TAU * hf * p[0] * t).sin_cos();
                row[0] += TAU * hf * t * (-p[2 * h] * s + p[2 * h + 1] * c);
                row[2 * h] = c;
                row[2 * h + 1] = s;
            }
        }
    }
    fn observed(&self) -> &[f64] {
        self.y
    }
    fn weight(&self) -> &[f64] {
        self.w
    }
}

/// Refines a frequency guess (c/d) with a `harmonics`-term Fourier series (1..=10).
/// Refuses a refined frequency more than one resolution element 1/T from the guess.
pub fn refine_period(series: &Series, freq_guess_per_day: f64, harmonics: usize) -> Result<RefinedPeriod, SearchError> {
    if !(1..=10).contains(&harmonics) {
        return Err(SearchError::InvalidParameter { name: "harmonics", value: harmonics as f64, expected: "1 to 10" });
    }
    if !(freq_guess_per_day.is_finite() && freq_guess_per_day > 0.0) {
        return Err(SearchError::InvalidParameter {
            name: "frequency guess (c/d)",
            value: freq_guess_per_day,
            expected: "a finite frequency > 0",
        });
    }
    let np = 2 + 2 * harmonics;
    if series.len() <= np {
        return Err(SearchError::TooFewPoints {
            needed: np + 1,
            got: series.len(),
            dropped: series.n_dropped,
            reason: "period refinement with this many harmonics",
        });
    }
    let t_mid = 0.5 * (series.time_d[0] + series.time_d[series.len() - 1]);
    let model = Harmonic {
        t: series.time_d.iter().map(|t| t - t_mid).collect(),
        y: &series.value,
        w: &series.weight,
        k: harmonics,
    };
    // Linear start at the guessed frequency: a few LM iterations with f nearly fixed would
    // do, but a zero start for the coefficients converges as well for a well-placed guess.
    let mut p0 = vec![0.0; np];
    p0[0] = freq_guess_per_day;
    p0[1] = series.weighted_mean();
    let lin = {
        let mut design = Vec::with_capacity(series.len() * (np - 1));
        for &t in &model.t {
            design.push(1.0);
            for h in 1..=harmonics {
                let (s, c) = (TAU * h as f64 * freq_guess_per_day * t).sin_cos();
                design.push(c);
                design.push(s);
            }
        }
        crate::fit::weighted_linear_lsq(&design, np - 1, &series.value, &series.weight)?
    };
    p0[1..].copy_from_slice(&lin.params);
    let fit = levenberg_marquardt(&model, &p0, &LevenbergOptions::default())?;
    let f = fit.params[0];
    if (f - freq_guess_per_day).abs() > 1.0 / series.baseline_d() {
        return Err(SearchError::InvalidParameter {
            name: "frequency guess (c/d)",
            value: freq_guess_per_day,
            expected: "a guess within 1/baseline of a least-squares optimum (the fit wandered off: take the guess from a periodogram peak)",
        });
    }
    let red = fit.chi2 / fit.dof.max(1) as f64;
    let scale = if series.has_errors { red.max(1.0).sqrt() } else { red.sqrt() };
    let sf = fit.sigma(0) * scale;
    Ok(RefinedPeriod {
        freq_per_day: f,
        freq_err_per_day: sf,
        period_d: 1.0 / f,
        period_err_d: sf / (f * f),
        harmonics,
        chi2: fit.chi2,
        dof: fit.dof,
        err_scale: scale,
        err_inflated: series.has_errors && red > 1.0,
    })
}
