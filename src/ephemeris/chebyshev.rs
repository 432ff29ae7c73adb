//! Chebyshev series: evaluation with derivative, fitting by interpolation at Chebyshev
//! nodes, and the derivative series. Shared by the SPK reader and the embedded pack.
//!
//! Conventions as in JPL SPK types 2 and 3: a record holds, for each component, the
//! coefficients `c_0 … c_{n-1}` of `f(x) = Σ c_k T_k(x)` on the normalised time
//! `x = (t − mid) / radius ∈ [−1, 1]`.

/// Most coefficients per component this module evaluates (stack buffers).
pub const MAX_COEFFICIENTS: usize = 64;

/// Values `T_k(x)` and derivatives `dT_k/dx` for `k < n` written into `t` and `dt`.
/// `n <= MAX_COEFFICIENTS`.
#[inline]
pub fn basis_with_derivative(x: f64, n: usize, t: &mut [f64], dt: &mut [f64]) {
    debug_assert!(n <= t.len() && n <= dt.len());
    if n == 0 {
        return;
    }
    t[0] = 1.0;
    dt[0] = 0.0;
    if n == 1 {
        return;
    }
    t[1] = x;
    dt[1] = 1.0;
    let two_x = 2.0 * x;
    for k in 2..n {
        t[k] = two_x * t[k - 1] - t[k - 2];
        dt[k] = two_x * dt[k - 1] + 2.0 * t[k - 1] - dt[k - 2];
    }
}

/// Evaluates three series (x, y, z components stored one after another, `n` coefficients
/// each, in `coefficients[0..3n]`) and their derivatives with respect to `x`, by the
/// Clenshaw recurrence and its derivative (the three components interleaved).
/// Returns `(values, d values / dx)`.
/// Source: Clenshaw (1955), MTAC 9, 118; Numerical Recipes, 3rd ed., §5.8.
#[inline]
pub fn evaluate3(coefficients: &[f64], n: usize, x: f64) -> ([f64; 3], [f64; 3]) {
    let (cx, rest) = coefficients[..3 * n].split_at(n);
    let (cy, cz) = rest.split_at(n);
    let two_x = 2.0 * x;
    // b: Clenshaw sums; d: their derivatives with respect to x.
    let (mut b1, mut b2) = ([0.0f64; 3], [0.0f64; 3]);
    let (mut d1, mut d2) = ([0.0f64; 3], [0.0f64; 3]);
    for k in (1..n).rev() {
        let c = [cx[k], cy[k], cz[k]];
        for j in 0..3 {
            let d0 = 2.0 * b1[j] + two_x * d1[j] - d2[j];
            let b0 = c[j] + two_x * b1[j] - b2[j];
            d2[j] = d1[j];
            d1[j] = d0;
            b2[j] = b1[j];
            b1[j] = b0;
        }
    }
    let c0 = [cx[0], cy[0], cz[0]];
    let mut value = [0.0; 3];
    let mut slope = [0.0; 3];
    for j in 0..3 {
        value[j] = c0[j] + x * b1[j] - b2[j];
        slope[j] = b1[j] + x * d1[j] - d2[j];
    }
    (value, slope)
}

/// Evaluates three series without derivatives.
#[inline]
pub fn evaluate3_values(coefficients: &[f64], n: usize, x: f64) -> [f64; 3] {
    let mut value = [0.0; 3];
    for (c, out) in value.iter_mut().enumerate() {
        // Clenshaw recurrence.
        let coef = &coefficients[c * n..(c + 1) * n];
        let (mut b1, mut b2) = (0.0, 0.0);
        for k in (1..n).rev() {
            let b0 = coef[k] + 2.0 * x * b1 - b2;
            b2 = b1;
            b1 = b0;
        }
        *out = coef[0] + x * b1 - b2;
    }
    value
}

/// The `n` Chebyshev nodes of the first kind on [−1, 1], `x_j = cos(π (j + ½) / n)`.
pub fn nodes(n: usize) -> Vec<f64> {
    (0..n).map(|j| (std::f64::consts::PI * (j as f64 + 0.5) / n as f64).cos()).collect()
}

/// Coefficients of the degree-(n−1) polynomial interpolating `values[j] = f(nodes(n)[j])`
/// (discrete Chebyshev transform). Near-minimax for smooth `f`.
/// Source: Press et al., Numerical Recipes, 3rd ed., §5.8 (chebft).
pub fn fit_at_nodes(values: &[f64]) -> Vec<f64> {
    let n = values.len();
    let mut c = vec![0.0; n];
    for (k, ck) in c.iter_mut().enumerate() {
        let mut s = 0.0;
        for (j, v) in values.iter().enumerate() {
            s += v * (std::f64::consts::PI * k as f64 * (j as f64 + 0.5) / n as f64).cos();
        }
        *ck = 2.0 * s / n as f64;
    }
    c[0] *= 0.5;
    c
}

/// Coefficients of the derivative series d/dx of `Σ c_k T_k(x)` (same length; the last
/// coefficient is 0). Source: Numerical Recipes, 3rd ed., §5.9 (chder).
pub fn derivative_coefficients(c: &[f64]) -> Vec<f64> {
    let n = c.len();
    let mut d = vec![0.0; n];
    if n < 2 {
        return d;
    }
    d[n - 2] = 2.0 * (n - 1) as f64 * c[n - 1];
    for k in (0..n.saturating_sub(2)).rev() {
        d[k] = d[k + 2] + 2.0 * (k + 1) as f64 * c[k + 1];
    }
    d[0] *= 0.5;
    d
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Clenshaw (fast path) against direct summation of T_k and T_k' (the exact twin).
    #[test]
    fn clenshaw_matches_direct_summation() {
        for n in [1usize, 2, 3, 13, 27, 40] {
            let coefs: Vec<f64> =
                (0..3 * n).map(|i| ((i * 7919 % 113) as f64 - 56.0) * 10f64.powi(-((i % n) as i32))).collect();
            for x in [-1.0, -0.77, 0.0, 0.31, 1.0] {
                let mut t = vec![0.0; n];
                let mut dt = vec![0.0; n];
                basis_with_derivative(x, n, &mut t, &mut dt);
                let (v, s) = evaluate3(&coefs, n, x);
                for c in 0..3 {
                    let dv: f64 = (0..n).map(|k| coefs[c * n + k] * t[k]).sum();
                    let ds: f64 = (0..n).map(|k| coefs[c * n + k] * dt[k]).sum();
                    assert!((v[c] - dv).abs() <= 1e-12 * (1.0 + dv.abs()), "n={n} x={x}");
                    assert!((s[c] - ds).abs() <= 1e-11 * (1.0 + ds.abs()), "n={n} x={x}: {} {ds}", s[c]);
                }
            }
        }
    }

    #[test]
    fn fit_reproduces_a_polynomial_and_its_derivative() {
        // f(x) = 3 − 2x + 5x³ is exactly representable with 4 coefficients.
        let f = |x: f64| 3.0 - 2.0 * x + 5.0 * x * x * x;
        let df = |x: f64| -2.0 + 15.0 * x * x;
        let n = 6;
        let values: Vec<f64> = nodes(n).iter().map(|&x| f(x)).collect();
        let c = fit_at_nodes(&values);
        let mut three = c.clone();
        three.extend_from_slice(&c);
        three.extend_from_slice(&c);
        for x in [-1.0, -0.3, 0.0, 0.7, 1.0] {
            let (v, s) = evaluate3(&three, n, x);
            assert!((v[0] - f(x)).abs() < 1e-12);
            assert!((s[1] - df(x)).abs() < 1e-12);
            let w = evaluate3_values(&three, n, x);
            assert!((w[2] - f(x)).abs() < 1e-12);
            let d = derivative_coefficients(&c);
            let mut dd = d.clone();
            dd.extend_from_slice(&d);
            dd.extend_from_slice(&d);
            assert!((evaluate3_values(&dd, n, x)[0] - df(x)).abs() < 1e-12);
        }
    }
}
