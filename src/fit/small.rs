//! Small dense symmetric positive-definite solves for inner loops (a few parameters,
//! millions of calls), where a general decomposition would cost more than the work.
//! Cholesky factorisation, Golub & Van Loan, Matrix Computations, 4th ed., Alg. 4.2.1.

/// Solve `a x = b` in place for a symmetric positive-definite `p×p` matrix `a`
/// (row-major, overwritten by its Cholesky factor); `b` is overwritten by `x`.
/// Returns `false` (and leaves garbage) when `a` is not numerically positive definite
/// (a pivot ≤ `1e-13 ×` the largest diagonal element).
pub fn cholesky_solve_in_place(a: &mut [f64], b: &mut [f64], p: usize) -> bool {
    if a.len() < p * p || b.len() < p {
        return false;
    }
    let scale = (0..p).map(|i| a[i * p + i].abs()).fold(0.0, f64::max);
    if !(scale > 0.0) {
        return false;
    }
    for j in 0..p {
        let mut d = a[j * p + j];
        for k in 0..j {
            d -= a[j * p + k] * a[j * p + k];
        }
        if !(d > 1e-13 * scale) {
            return false;
        }
        let d = d.sqrt();
        a[j * p + j] = d;
        for i in j + 1..p {
            let mut s = a[i * p + j];
            for k in 0..j {
                s -= a[i * p + k] * a[j * p + k];
            }
            a[i * p + j] = s / d;
        }
    }
    for i in 0..p {
        let mut s = b[i];
        for k in 0..i {
            s -= a[i * p + k] * b[k];
        }
        b[i] = s / a[i * p + i];
    }
    for i in (0..p).rev() {
        let mut s = b[i];
        for k in i + 1..p {
            s -= a[k * p + i] * b[k];
        }
        b[i] = s / a[i * p + i];
    }
    true
}

/// Add one weighted row of a linear least-squares design to the normal equations:
/// `a += w·rowᵀrow`, `b += w·row·y` (`a` is `p×p` row-major with `p = row.len()`).
pub fn add_weighted_row(a: &mut [f64], b: &mut [f64], row: &[f64], weight: f64, y: f64) {
    let p = row.len();
    for j in 0..p {
        b[j] += weight * row[j] * y;
        for k in 0..p {
            a[j * p + k] += weight * row[j] * row[k];
        }
    }
}

/// Solve the normal equations `a x = b` (`p×p`, row-major) after scaling them to a unit
/// diagonal (Jacobi scaling, which makes the pivot test of [`cholesky_solve_in_place`]
/// independent of the parameters' units). Both `a` and `b` are overwritten; returns `x`, or
/// `None` when the scaled matrix is not numerically positive definite.
pub fn solve_scaled_normal_equations(a: &mut [f64], b: &mut [f64], p: usize) -> Option<Vec<f64>> {
    let d: Vec<f64> = (0..p).map(|j| a[j * p + j].sqrt().max(1e-300)).collect();
    for j in 0..p {
        b[j] /= d[j];
        for k in 0..p {
            a[j * p + k] /= d[j] * d[k];
        }
    }
    if !cholesky_solve_in_place(a, b, p) {
        return None;
    }
    Some((0..p).map(|j| b[j] / d[j]).collect())
}

#[cfg(test)]
mod tests {
    use super::*;
    #[test]
    fn solves_a_known_system() {
        // A = [[4,2],[2,3]], x = [1,-2] → b = [0,-4] (hand computation).
        let mut a = vec![4.0, 2.0, 2.0, 3.0];
        let mut b = vec![0.0, -4.0];
        assert!(cholesky_solve_in_place(&mut a, &mut b, 2));
        assert!((b[0] - 1.0).abs() < 1e-14 && (b[1] + 2.0).abs() < 1e-14);
    }
    #[test]
    fn refuses_singular() {
        let mut a = vec![1.0, 1.0, 1.0, 1.0];
        let mut b = vec![1.0, 1.0];
        assert!(!cholesky_solve_in_place(&mut a, &mut b, 2));
    }

    #[test]
    fn scaled_normal_equations_solve_a_badly_scaled_line() {
        // y = 3 + 2e-6·t at t = 0, 1e6, 2e6 (exact, hand computation): columns differ by 1e6.
        let (mut a, mut b) = (vec![0.0; 4], vec![0.0; 2]);
        for t in [0.0, 1e6, 2e6] {
            add_weighted_row(&mut a, &mut b, &[1.0, t], 2.0, 3.0 + 2e-6 * t);
        }
        let x = solve_scaled_normal_equations(&mut a, &mut b, 2).unwrap();
        assert!((x[0] - 3.0).abs() < 1e-12 && (x[1] - 2e-6).abs() < 1e-18, "{x:?}");
        let (mut a, mut b) = (vec![1.0, 1.0, 1.0, 1.0], vec![1.0, 1.0]);
        assert!(solve_scaled_normal_equations(&mut a, &mut b, 2).is_none());
    }
}
