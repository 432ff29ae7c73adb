//! Levenberg–Marquardt nonlinear least squares (Marquardt 1963, J. SIAM 11, 431; damping
//! scaled by the diagonal of JᵀJ as in Moré 1978, LNM 630, 105). The step equations are
//! solved with the small Cholesky solver; the final covariance comes from the weighted
//! linear least-squares routine applied to the Jacobian at the solution.

use super::{FitError, linear::weighted_linear_lsq, small::cholesky_solve_in_place};

/// A model for nonlinear least squares: n observations, p parameters.
pub trait LsqModel {
    /// Number of free parameters p.
    fn n_params(&self) -> usize;
    /// Number of observations n.
    fn n_obs(&self) -> usize;
    /// Model predictions for parameters `params`, written to `out` (length n).
    fn predict(&self, params: &[f64], out: &mut [f64]);
    /// Jacobian ∂prediction_i/∂param_j, row-major n×p, written to `jac`.
    fn jacobian(&self, params: &[f64], jac: &mut [f64]);
    /// Observed values (length n).
    fn observed(&self) -> &[f64];
    /// Weights 1/σ² (length n).
    fn weight(&self) -> &[f64];
}

/// Options of the Levenberg–Marquardt iteration.
#[derive(Debug, Clone, Copy)]
pub struct LevenbergOptions {
    /// Maximum number of accepted or rejected steps.
    pub max_iterations: usize,
    /// Stop when the relative decrease of χ² falls below this.
    pub relative_tolerance: f64,
    /// Initial damping λ.
    pub initial_damping: f64,
    /// Also stop when an accepted step lowers χ² by less than this absolute amount (χ²
    /// units: 1e-4 moves the parameters by ~1 % of their 1σ; 0 disables the test).
    pub absolute_tolerance: f64,
    /// Compute the covariance at the solution (a thin SVD of the Jacobian); callers that
    /// need only the parameters (e.g. bootstrap resamples) switch it off.
    pub covariance: bool,
}

impl Default for LevenbergOptions {
    fn default() -> Self {
        LevenbergOptions {
            max_iterations: 200,
            relative_tolerance: 1e-12,
            initial_damping: 1e-3,
            absolute_tolerance: 0.0,
            covariance: true,
        }
    }
}

/// Result of a nonlinear fit.
#[derive(Debug, Clone, PartialEq)]
pub struct NonlinearFit {
    /// Best-fitting parameters.
    pub params: Vec<f64>,
    /// Covariance (JᵀWJ)⁻¹ at the solution, row-major p×p (true covariance for w = 1/σ²).
    pub covariance: Vec<f64>,
    /// χ² at the solution.
    pub chi2: f64,
    /// Degrees of freedom n − p.
    pub dof: usize,
    /// Iterations used.
    pub iterations: usize,
    /// Whether the tolerance was met before `max_iterations`.
    pub converged: bool,
}

impl NonlinearFit {
    /// 1-σ uncertainty of parameter `j`.
    pub fn sigma(&self, j: usize) -> f64 {
        let p = self.params.len();
        self.covariance.get(j * p + j).map_or(f64::NAN, |v| v.max(0.0).sqrt())
    }
}

fn chi2_of<M: LsqModel>(m: &M, params: &[f64], pred: &mut [f64]) -> f64 {
    m.predict(params, pred);
    m.observed().iter().zip(pred.iter()).zip(m.weight()).map(|((y, f), w)| w * (y - f) * (y - f)).sum()
}

/// Levenberg–Marquardt minimisation of χ² = Σ w_i (y_i − f_i(θ))².
///
/// Given: a model, starting parameters `start`. Returned: parameters, covariance, χ².
/// Accuracy: converges to a local minimum; relative χ² tolerance per options.
/// Source: Marquardt (1963); Press et al., Numerical Recipes 3rd ed. (2007), §15.5.2.
pub fn levenberg_marquardt<M: LsqModel>(
    model: &M,
    start: &[f64],
    options: &LevenbergOptions,
) -> Result<NonlinearFit, FitError> {
    let p = model.n_params();
    let n = model.n_obs();
    if start.len() != p {
        return Err(FitError::LengthMismatch { what: "starting parameters", expected: p, got: start.len() });
    }
    if n < p {
        return Err(FitError::TooFewObservations { needed: p, got: n });
    }
    let (y, w) = (model.observed(), model.weight());
    if y.len() != n || w.len() != n {
        return Err(FitError::LengthMismatch {
            what: "observations or weights",
            expected: n,
            got: y.len().min(w.len()),
        });
    }
    if let Some((i, &v)) = w.iter().enumerate().find(|(_, v)| !(v.is_finite() && **v > 0.0)) {
        return Err(FitError::BadWeight { index: i, value: v });
    }
    let mut params = start.to_vec();
    let mut pred = vec![0.0; n];
    let mut jac = vec![0.0; n * p];
    let mut chi2 = chi2_of(model, &params, &mut pred);
    if !chi2.is_finite() {
        return Err(FitError::Diverged { iterations: 0 });
    }
    let mut lambda = options.initial_damping;
    let mut converged = false;
    let mut iterations = 0;
    let mut jtj = vec![0.0; p * p];
    let mut jtr = vec![0.0; p];
    let mut trial = vec![0.0; p];
    while iterations < options.max_iterations {
        iterations += 1;
        // `pred` already holds the model at `params`: from the start, or from the trial step
        // that was accepted last.
        model.jacobian(&params, &mut jac);
        jtj.iter_mut().for_each(|v| *v = 0.0);
        jtr.iter_mut().for_each(|v| *v = 0.0);
        for i in 0..n {
            let r = y[i] - pred[i];
            let row = &jac[i * p..(i + 1) * p];
            for a in 0..p {
                let wa = w[i] * row[a];
                jtr[a] += wa * r;
                for b in 0..=a {
                    jtj[a * p + b] += wa * row[b];
                }
            }
        }
        for a in 0..p {
            for b in 0..a {
                jtj[b * p + a] = jtj[a * p + b];
            }
        }
        let mut improved = false;
        for _ in 0..30 {
            let mut m = jtj.clone();
            for a in 0..p {
                m[a * p + a] += lambda * jtj[a * p + a].max(1e-300);
            }
            let mut step = jtr.clone();
            if !cholesky_solve_in_place(&mut m, &mut step, p) {
                lambda *= 10.0;
                continue;
            }
            for a in 0..p {
                trial[a] = params[a] + step[a];
            }
            let c = chi2_of(model, &trial, &mut pred);
            if c.is_finite() && c <= chi2 {
                let rel = (chi2 - c) / chi2.max(1e-300);
                let chi2_drop = chi2 - c;
                params.copy_from_slice(&trial);
                chi2 = c;
                lambda = (lambda * 0.1).max(1e-15);
                improved = true;
                if rel < options.relative_tolerance || chi2_drop < options.absolute_tolerance {
                    converged = true;
                }
                break;
            }
            lambda *= 10.0;
        }
        if !improved {
            // No downhill step exists within damping range: at the minimum to machine precision.
            converged = true;
        }
        if converged {
            break;
        }
    }
    if params.iter().any(|v| !v.is_finite()) {
        return Err(FitError::Diverged { iterations });
    }
    if !options.covariance {
        return Ok(NonlinearFit { params, covariance: Vec::new(), chi2, dof: n - p, iterations, converged });
    }
    model.jacobian(&params, &mut jac);
    let lin = weighted_linear_lsq(&jac, p, &vec![0.0; n], w)?;
    Ok(NonlinearFit { params, covariance: lin.covariance, chi2, dof: n - p, iterations, converged })
}

#[cfg(test)]
mod tests {
    use super::*;
    struct Expo {
        t: Vec<f64>,
        y: Vec<f64>,
        w: Vec<f64>,
    }
    impl LsqModel for Expo {
        fn n_params(&self) -> usize {
            2
        }
        fn n_obs(&self) -> usize {
            self.t.len()
        }
        fn predict(&self, p: &[f64], out: &mut [f64]) {
            for (o, t) in out.iter_mut().zip(&self.t) {
                *o = p[0] * (-p[1] * t).exp();
            }
        }
        fn jacobian(&self, p: &[f64], j: &mut [f64]) {
            for (i, t) in self.t.iter().enumerate() {
                let e = (-p[1] * t).exp();
                j[2 * i] = e;
                j[2 * i + 1] = -p[0] * t * e;
            }
        }
        fn observed(&self) -> &[f64] {
            &self.y
        }
        fn weight(&self) -> &[f64] {
            &self.w
        }
    }
    #[test]
    fn recovers_noise_free_exponential() {
        // Exact data y = 3 exp(-0.7 t) (invented): the minimum is at the true values.
        let t: Vec<f64> = (0..20).map(|i| i as f64 * 0.25).collect();
        let y = t.iter().map(|t| 3.0 * (-0.7 * t).exp()).collect();
        let m = Expo { t, y, w: vec![1.0; 20] };
        let fit = levenberg_marquardt(&m, &[1.0, 0.1], &LevenbergOptions::default()).unwrap();
        assert!((fit.params[0] - 3.0).abs() < 1e-8 && (fit.params[1] - 0.7).abs() < 1e-8, "{:?}", fit.params);
    }
}
