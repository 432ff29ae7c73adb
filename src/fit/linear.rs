//! Weighted linear least squares with parameter covariance.
//!
//! Minimises χ² = Σ w_i (y_i − Σ_j A_ij x_j)² through the thin singular-value
//! decomposition of the weighted design matrix √w·A (Golub & Van Loan, 4th ed., §5.5),
//! which stays accurate when the normal equations would lose half the digits.

use super::FitError;
use faer::diag::Diag;
use faer::dyn_stack::{MemBuffer, MemStack};
use faer::linalg::svd::{ComputeSvdVectors, svd, svd_scratch};
use faer::{Mat, Par};

/// Result of a weighted linear least-squares fit.
#[derive(Debug, Clone, PartialEq)]
pub struct LinearFit {
    /// Best-fitting parameters x (units of y per unit of the design column).
    pub params: Vec<f64>,
    /// Covariance matrix of the parameters, row-major p×p, (Aᵀ W A)⁻¹. It is the true
    /// covariance when the weights are 1/σ²; otherwise scale it by `chi2 / dof`.
    pub covariance: Vec<f64>,
    /// Weighted sum of squared residuals χ².
    pub chi2: f64,
    /// Degrees of freedom n − p.
    pub dof: usize,
    /// Ratio of the largest to the smallest singular value of √w·A.
    pub condition: f64,
}

impl LinearFit {
    /// 1-σ uncertainty of parameter `j` from the diagonal of the covariance.
    pub fn sigma(&self, j: usize) -> f64 {
        let p = self.params.len();
        self.covariance.get(j * p + j).map_or(f64::NAN, |v| v.max(0.0).sqrt())
    }
}

/// Weighted linear least squares.
///
/// Given: `design` row-major n×p (column j is the model's response to parameter j),
/// `y` (n values), `weight` (n values, 1/σ² for a true covariance, all > 0 and finite).
/// Returned: parameters, covariance (Aᵀ W A)⁻¹, χ², dof. Accuracy: that of a
/// backward-stable SVD; refuses condition numbers above 1e13 with [`FitError::Singular`].
/// Source: Golub & Van Loan, Matrix Computations, 4th ed. (2013), §5.5.
pub fn weighted_linear_lsq(design: &[f64], p: usize, y: &[f64], weight: &[f64]) -> Result<LinearFit, FitError> {
    let n = y.len();
    if p == 0 {
        return Err(FitError::TooFewObservations { needed: 1, got: n });
    }
    if design.len() != n * p {
        return Err(FitError::LengthMismatch { what: "design matrix (n×p)", expected: n * p, got: design.len() });
    }
    if weight.len() != n {
        return Err(FitError::LengthMismatch { what: "weights", expected: n, got: weight.len() });
    }
    if n < p {
        return Err(FitError::TooFewObservations { needed: p, got: n });
    }
    for (i, (&yi, &wi)) in y.iter().zip(weight).enumerate() {
        if !yi.is_finite() {
            return Err(FitError::NonFinite { what: "value", index: i, value: yi });
        }
        if !(wi.is_finite() && wi > 0.0) {
            return Err(FitError::BadWeight { index: i, value: wi });
        }
    }
    if let Some((k, &v)) = design.iter().enumerate().find(|(_, v)| !v.is_finite()) {
        return Err(FitError::NonFinite { what: "design matrix element", index: k, value: v });
    }
    let sw: Vec<f64> = weight.iter().map(|w| w.sqrt()).collect();
    // Scale columns to unit norm so that the condition number reflects real degeneracy,
    // not the units of the parameters.
    let mut col_scale = vec![0.0; p];
    for i in 0..n {
        for j in 0..p {
            let v = design[i * p + j] * sw[i];
            col_scale[j] += v * v;
        }
    }
    for s in col_scale.iter_mut() {
        *s = if *s > 0.0 { 1.0 / s.sqrt() } else { 1.0 };
    }
    let a = Mat::<f64>::from_fn(n, p, |i, j| design[i * p + j] * sw[i] * col_scale[j]);
    let (u, v, s) = thin_svd_sequential(&a)?;
    let (u, v) = (u.as_ref(), v.as_ref());
    let s = s.as_ref().column_vector();
    let smax = (0..p).map(|k| s[k]).fold(0.0, f64::max);
    let smin = (0..p).map(|k| s[k]).fold(f64::INFINITY, f64::min);
    let condition = if smin > 0.0 { smax / smin } else { f64::INFINITY };
    if !(condition < 1e13) {
        return Err(FitError::Singular { condition });
    }
    // x' = V S⁻¹ Uᵀ (√w y); x = D x'
    let wy: Vec<f64> = y.iter().zip(&sw).map(|(a, b)| a * b).collect();
    let mut uty = vec![0.0; p];
    for k in 0..p {
        let mut acc = 0.0;
        for i in 0..n {
            acc += u[(i, k)] * wy[i];
        }
        uty[k] = acc / s[k];
    }
    let mut params = vec![0.0; p];
    for j in 0..p {
        let mut acc = 0.0;
        for k in 0..p {
            acc += v[(j, k)] * uty[k];
        }
        params[j] = acc * col_scale[j];
    }
    let mut covariance = vec![0.0; p * p];
    for i in 0..p {
        for j in 0..p {
            let mut acc = 0.0;
            for k in 0..p {
                acc += v[(i, k)] * v[(j, k)] / (s[k] * s[k]);
            }
            covariance[i * p + j] = acc * col_scale[i] * col_scale[j];
        }
    }
    let mut chi2 = 0.0;
    for i in 0..n {
        let model: f64 = (0..p).map(|j| design[i * p + j] * params[j]).sum();
        let r = y[i] - model;
        chi2 += weight[i] * r * r;
    }
    Ok(LinearFit { params, covariance, chi2, dof: n - p, condition })
}

/// The factors (U, V, S) of a thin singular value decomposition.
type ThinSvd = (Mat<f64>, Mat<f64>, Diag<f64>);

/// Thin SVD A = U S Vᵀ of `a` on the calling thread: faer's default spreads a large
/// decomposition over the rayon pool, whose size would then change the last digits of a
/// fit (and a survey batch on one thread would differ from one on two). Returns (U, V, S).
fn thin_svd_sequential(a: &Mat<f64>) -> Result<ThinSvd, FitError> {
    let (m, n) = (a.nrows(), a.ncols());
    let size = m.min(n);
    let (mut u, mut v, mut s) = (Mat::zeros(m, size), Mat::zeros(n, size), Diag::zeros(size));
    let thin = ComputeSvdVectors::Thin;
    let mut buffer = MemBuffer::new(svd_scratch::<f64>(m, n, thin, thin, Par::Seq, Default::default()));
    svd(
        a.as_ref(),
        s.as_mut(),
        Some(u.as_mut()),
        Some(v.as_mut()),
        Par::Seq,
        MemStack::new(&mut buffer),
        Default::default(),
    )
    .map_err(|e| FitError::Decomposition(format!("{e:?}")))?;
    Ok((u, v, s))
}

#[cfg(test)]
mod tests {
    use super::*;
    #[test]
    fn straight_line_matches_closed_form() {
        // Unweighted straight line through (0,1),(1,3),(2,5.5),(3,6.5):
        // closed-form slope = Sxy/Sxx = 9.5/5 = 1.9, intercept = 4 - 1.9·1.5 = 1.15
        // (textbook formulas, e.g. Bevington & Robinson 2003, eq. 6.12).
        let x = [0.0, 1.0, 2.0, 3.0];
        let y = [1.0, 3.0, 5.5, 6.5];
        let design: Vec<f64> = x.iter().flat_map(|&t| [1.0, t]).collect();
        let fit = weighted_linear_lsq(&design, 2, &y, &[1.0; 4]).unwrap();
        assert!((fit.params[1] - 1.9).abs() < 1e-12);
        assert!((fit.params[0] - 1.15).abs() < 1e-12);
        // var(slope) = 1/Sxx = 0.2 with unit weights.
        assert!((fit.covariance[3] - 0.2).abs() < 1e-12);
        assert_eq!(fit.dof, 2);
    }
    #[test]
    fn refuses_degenerate_and_bad_input() {
        let design = vec![1.0, 2.0, 1.0, 2.0, 1.0, 2.0];
        assert!(matches!(weighted_linear_lsq(&design, 2, &[1.0, 2.0, 3.0], &[1.0; 3]), Err(FitError::Singular { .. })));
        assert!(matches!(weighted_linear_lsq(&[1.0], 1, &[1.0], &[0.0]), Err(FitError::BadWeight { .. })));
        assert!(matches!(
            weighted_linear_lsq(&[1.0, 1.0], 2, &[1.0], &[1.0]),
            Err(FitError::TooFewObservations { .. })
        ));
    }
}
