//! The centre of an event from a symmetric model fitted by least squares.
//!
//! Models, with u = (t − T₀)/w and w half the span of the points:
//! - even polynomial of degree 2: f = c₀ + c₂u² (the classical parabola fit around an
//!   extremum, common practice);
//! - even polynomial of degree 4: f = c₀ + c₂u² + c₄u⁴ (a flatter bottom);
//! - Gaussian profile: f = b + d·exp(−u²/(2s²)), a simple symmetric eclipse or pulse shape.
//!
//! T₀ and the shape parameters are fitted together with Levenberg–Marquardt
//! (`fit::levenberg`). Two errors of T₀ are returned: the covariance error (scaled by the
//! reduced χ² when no uncertainties are given, common practice) and a seeded bootstrap
//! error — the standard deviation of T₀ over fits to points resampled with replacement
//! (Efron & Tibshirani 1993, An Introduction to the Bootstrap, ch. 6 and 9). Each resample
//! has its own random stream (`SeededRng::for_stream`), so the result does not depend on
//! the number of threads.
//!
//! Maxima of pulsators use the same models: the sign passed in says whether the event is
//! a peak or a trough of the written values (see [`super::peak_sign`]).

use rayon::prelude::*;

use super::{MinimaError, validate};
use crate::fit::{LevenbergOptions, LsqModel, SeededRng, levenberg_marquardt, weighted_linear_lsq};

/// The symmetric model.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SymmetricShape {
    /// c₀ + c₂u².
    Polynomial2,
    /// c₀ + c₂u² + c₄u⁴.
    Polynomial4,
    /// b + d·exp(−u²/(2s²)).
    Gaussian,
}

impl SymmetricShape {
    /// Name for tables and messages.
    pub fn name(self) -> &'static str {
        match self {
            SymmetricShape::Polynomial2 => "symmetric-polynomial-2",
            SymmetricShape::Polynomial4 => "symmetric-polynomial-4",
            SymmetricShape::Gaussian => "symmetric-gaussian",
        }
    }
    fn n_params(self) -> usize {
        match self {
            SymmetricShape::Polynomial2 => 3,
            _ => 4,
        }
    }
}

/// Options of the symmetric fit.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SymmetricOptions {
    /// The model.
    pub shape: SymmetricShape,
    /// Bootstrap resamples (0: covariance error only).
    pub bootstrap_resamples: usize,
    /// Seed of the bootstrap streams.
    pub seed: u64,
}

impl Default for SymmetricOptions {
    fn default() -> Self {
        SymmetricOptions { shape: SymmetricShape::Polynomial2, bootstrap_resamples: 200, seed: 1 }
    }
}

/// Result of a symmetric fit.
#[derive(Debug, Clone, PartialEq)]
pub struct SymmetricFit {
    /// Centre T₀, days (same origin as the input times).
    pub centre_d: f64,
    /// 1σ error of T₀ from the covariance matrix, days.
    pub error_covariance_d: f64,
    /// 1σ error of T₀ from the bootstrap, days (None without resamples).
    pub error_bootstrap_d: Option<f64>,
    /// Resamples whose fit failed (not counted in the bootstrap error).
    pub bootstrap_failed: usize,
    /// χ² of the fit (weights 1/σ², or 1 without uncertainties).
    pub chi2: f64,
    /// Degrees of freedom.
    pub dof: usize,
    /// Value of the model at T₀ (the extremum), value units.
    pub extremum_value: f64,
}

struct Model<'a> {
    shape: SymmetricShape,
    x: Vec<f64>,
    y: &'a [f64],
    w: &'a [f64],
}

impl LsqModel for Model<'_> {
    fn n_params(&self) -> usize {
        self.shape.n_params()
    }
    fn n_obs(&self) -> usize {
        self.x.len()
    }
    fn predict(&self, p: &[f64], out: &mut [f64]) {
        for (o, &x) in out.iter_mut().zip(&self.x) {
            let u = x - p[0];
            *o = match self.shape {
                SymmetricShape::Polynomial2 => p[1] + p[2] * u * u,
                SymmetricShape::Polynomial4 => p[1] + p[2] * u * u + p[3] * u.powi(4),
                SymmetricShape::Gaussian => p[1] + p[2] * (-u * u / (2.0 * p[3] * p[3])).exp(),
            };
        }
    }
    fn jacobian(&self, p: &[f64], jac: &mut [f64]) {
        let np = self.n_params();
        for (i, &x) in self.x.iter().enumerate() {
            let u = x - p[0];
            let row = &mut jac[i * np..(i + 1) * np];
            match self.shape {
                SymmetricShape::Polynomial2 => {
                    row[0] = -2.0 * p[2] * u;
                    row[1] = 1.0;
                    row[2] = u * u;
                }
                SymmetricShape::Polynomial4 => {
                    row[0] = -2.0 * p[2] * u - 4.0 * p[3] * u.powi(3);
                    row[1] = 1.0;
                    row[2] = u * u;
                    row[3] = u.powi(4);
                }
                SymmetricShape::Gaussian => {
                    let s2 = p[3] * p[3];
                    let e = (-u * u / (2.0 * s2)).exp();
                    row[0] = p[2] * e * u / s2;
                    row[1] = 1.0;
                    row[2] = e;
                    row[3] = p[2] * e * u * u / (s2 * p[3]);
                }
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

/// Starting parameters: a weighted quadratic c₀ + c₁x + c₂x² gives the vertex; the polynomial
/// shapes start there, the Gaussian starts from the vertex depth and edge level.
fn start(shape: SymmetricShape, x: &[f64], y: &[f64], w: &[f64], sign: f64) -> Result<Vec<f64>, MinimaError> {
    let design: Vec<f64> = x.iter().flat_map(|&xi| [1.0, xi, xi * xi]).collect();
    let q = weighted_linear_lsq(&design, 3, y, w)?;
    let (c0, c1, c2) = (q.params[0], q.params[1], q.params[2]);
    // The event must be a peak (sign > 0) or a trough (sign < 0) of the values.
    if !(c2 * sign < 0.0) {
        return Err(MinimaError::NoExtremum(format!(
            "the points curve the wrong way for a {} (a parabola through them opens {})",
            if sign > 0.0 { "peak of the values" } else { "trough of the values" },
            if c2 > 0.0 { "upwards" } else { "downwards" }
        )));
    }
    let mut x0 = -c1 / (2.0 * c2);
    if !(x0.abs() <= 1.0) {
        x0 = 0.0;
    }
    let top = c0 + c1 * x0 + c2 * x0 * x0;
    Ok(match shape {
        SymmetricShape::Polynomial2 => vec![x0, top, c2],
        SymmetricShape::Polynomial4 => vec![x0, top, c2, 0.0],
        SymmetricShape::Gaussian => {
            let edge = {
                let outer: Vec<f64> =
                    x.iter().zip(y).filter(|(xi, _)| (**xi - x0).abs() > 0.6).map(|(_, yi)| *yi).collect();
                if outer.is_empty() { c0 + c2 } else { outer.iter().sum::<f64>() / outer.len() as f64 }
            };
            vec![x0, edge, top - edge, 0.35]
        }
    })
}

fn solve(
    shape: SymmetricShape,
    x: Vec<f64>,
    y: &[f64],
    w: &[f64],
    p0: &[f64],
) -> Result<crate::fit::NonlinearFit, MinimaError> {
    let model = Model { shape, x, y, w };
    let fit = levenberg_marquardt(&model, p0, &LevenbergOptions::default())?;
    if !fit.converged {
        return Err(MinimaError::NotConverged { iterations: fit.iterations });
    }
    if fit.params.iter().any(|v| !v.is_finite()) {
        return Err(MinimaError::NoExtremum("the fit produced non-finite parameters".into()));
    }
    Ok(fit)
}

/// Fits a symmetric model around one event and returns its centre with covariance and
/// bootstrap errors.
///
/// Given: times (days, strictly increasing), values, optional 1σ uncertainties, `sign`
/// (+1 if the event is a peak of the values, −1 if a trough; see [`super::peak_sign`]),
/// `origin_d` (a time near the event, e.g. the predicted centre, days — used only to
/// centre and scale the problem), options. Returned: [`SymmetricFit`]. Accuracy: limited by
/// the noise and by how well the model matches the event's shape over the window (an
/// asymmetric event biases T₀). Errors: too few points, points curving the wrong way,
/// non-convergence, a centre outside the points.
pub fn fit_symmetric(
    time_d: &[f64],
    value: &[f64],
    error: Option<&[f64]>,
    sign: f64,
    origin_d: f64,
    options: &SymmetricOptions,
) -> Result<SymmetricFit, MinimaError> {
    validate(time_d, value, error)?;
    let shape = options.shape;
    let n = time_d.len();
    let needed = shape.n_params() + 2;
    if n < needed {
        return Err(MinimaError::TooFewPoints { method: shape.name(), needed, got: n });
    }
    if !origin_d.is_finite() {
        return Err(MinimaError::BadOption(format!("the origin of the fit must be a finite time, got {origin_d}")));
    }
    let scale_d = time_d.iter().map(|t| (t - origin_d).abs()).fold(0.0, f64::max);
    let x: Vec<f64> = time_d.iter().map(|t| (t - origin_d) / scale_d).collect();
    let w: Vec<f64> = match error {
        Some(e) => e.iter().map(|s| 1.0 / (s * s)).collect(),
        None => vec![1.0; n],
    };
    let p0 = start(shape, &x, value, &w, sign)?;
    let fit = solve(shape, x.clone(), value, &w, &p0)?;
    let x_min = x.iter().copied().fold(f64::INFINITY, f64::min);
    let x_max = x.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    if fit.params[0] < x_min || fit.params[0] > x_max {
        return Err(MinimaError::NoExtremum(format!(
            "the fitted centre lies {:+.6} d from the origin of the fit (the predicted centre), outside the points",
            fit.params[0] * scale_d
        )));
    }
    // The fitted extremum must be of the requested kind (curvature sign).
    let curvature = match shape {
        SymmetricShape::Polynomial2 | SymmetricShape::Polynomial4 => -fit.params[2],
        SymmetricShape::Gaussian => fit.params[2],
    };
    if !(curvature * sign > 0.0) {
        return Err(MinimaError::NoExtremum(
            "the fitted model has the opposite extremum (a peak where a trough was asked for, or the reverse)".into(),
        ));
    }
    let scale_cov = if error.is_some() { 1.0 } else { fit.chi2 / fit.dof.max(1) as f64 };
    let error_covariance_d = fit.sigma(0) * scale_cov.sqrt() * scale_d;
    if !(error_covariance_d > 0.0) {
        return Err(MinimaError::NoScatter);
    }
    let (error_bootstrap_d, failed) = if options.bootstrap_resamples > 0 {
        let results: Vec<Option<f64>> = (0..options.bootstrap_resamples)
            .into_par_iter()
            .map(|k| {
                let mut rng = SeededRng::for_stream(options.seed, k as u64);
                let idx: Vec<usize> = (0..n).map(|_| rng.below(n)).collect();
                let xs: Vec<f64> = idx.iter().map(|&i| x[i]).collect();
                let ys: Vec<f64> = idx.iter().map(|&i| value[i]).collect();
                let ws: Vec<f64> = idx.iter().map(|&i| w[i]).collect();
                solve(shape, xs, &ys, &ws, &fit.params).ok().map(|f| f.params[0] * scale_d).filter(|c| c.is_finite())
            })
            .collect();
        let ok: Vec<f64> = results.iter().flatten().copied().collect();
        let failed = results.len() - ok.len();
        if ok.len() < 10usize.max(results.len() / 2) {
            (None, failed)
        } else {
            let mean = ok.iter().sum::<f64>() / ok.len() as f64;
            let var = ok.iter().map(|c| (c - mean) * (c - mean)).sum::<f64>() / (ok.len() - 1) as f64;
            (Some(var.sqrt()), failed)
        }
    } else {
        (None, 0)
    };
    Ok(SymmetricFit {
        centre_d: origin_d + fit.params[0] * scale_d,
        error_covariance_d,
        error_bootstrap_d,
        bootstrap_failed: failed,
        chi2: fit.chi2,
        dof: fit.dof,
        extremum_value: match shape {
            SymmetricShape::Gaussian => fit.params[1] + fit.params[2],
            _ => fit.params[1],
        },
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn dip(c: f64, noise: f64, seed: u64) -> (Vec<f64>, Vec<f64>) {
        let mut rng = SeededRng::new(seed);
        let t: Vec<f64> = (0..50).map(|i| 0.002 * i as f64).collect();
        let v = t
            .iter()
            .map(|x| 10.0 + 0.3 * (-(x - c).powi(2) / (2.0 * 0.02f64.powi(2))).exp() + noise * rng.normal())
            .collect();
        (t, v)
    }

    #[test]
    fn each_shape_recovers_a_noise_free_centre() {
        // Sampling symmetric about the centre, so even a mismatched shape is unbiased.
        let c = 0.05;
        let (t, v) = dip(c, 0.0, 1);
        let (t, v): (Vec<f64>, Vec<f64>) = t.into_iter().zip(v).filter(|(x, _)| (x - c).abs() < 0.02).unzip();
        for shape in [SymmetricShape::Polynomial2, SymmetricShape::Polynomial4, SymmetricShape::Gaussian] {
            let o = SymmetricOptions { shape, bootstrap_resamples: 0, seed: 1 };
            match fit_symmetric(&t, &v, None, 1.0, 0.0513, &o) {
                Ok(f) => assert!((f.centre_d - c).abs() < 1e-6, "{shape:?} {f:?}"),
                Err(MinimaError::NoScatter) => {}
                Err(e) => panic!("{shape:?}: {e}"),
            }
        }
    }

    #[test]
    fn wrong_sign_is_refused_and_bootstrap_is_reproducible() {
        let (t, v) = dip(0.05, 0.004, 2);
        let o = SymmetricOptions { shape: SymmetricShape::Gaussian, bootstrap_resamples: 50, seed: 9 };
        assert!(matches!(fit_symmetric(&t, &v, None, -1.0, 0.05, &o), Err(MinimaError::NoExtremum(_))));
        let a = fit_symmetric(&t, &v, None, 1.0, 0.05, &o).unwrap();
        let b = fit_symmetric(&t, &v, None, 1.0, 0.05, &o).unwrap();
        assert_eq!(a, b);
        assert!((a.centre_d - 0.05).abs() < 5.0 * a.error_covariance_d);
        assert!(a.error_bootstrap_d.unwrap() > 0.0);
    }
}
