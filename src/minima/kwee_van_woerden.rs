//! The Kwee & van Woerden (1956) time of minimum.
//!
//! Source: K. K. Kwee & H. van Woerden, "A method for computing accurately the epoch of
//! minimum of an eclipsing variable", Bull. Astron. Inst. Netherlands 12, 327 (1956).
//!
//! The observations are interpolated linearly onto a uniform grid of as many points as
//! there are observations. For a trial centre T the grid is reflected about T and
//! S(T) = Σₖ (m(T + kΔt) − m(T − kΔt))² is summed over the reflected pairs. Trial centres
//! lie on grid points and on the midpoints between them (so no further interpolation is
//! needed); the one with the smallest S per pair is taken with its two neighbours, S is
//! summed over a common set of pairs at the three, and a parabola S(T) = aT² + bT + c
//! through them gives the centre T₀ = −b/(2a) and the standard error
//!
//!   σ²(T₀) = (4ac − b²) / (4a² (Z − 1)),
//!
//! with Z the number of independent pairs. As in the paper (from memory), Z = N/4 with N
//! the number of observations inside the reflected range: the interpolated values are not
//! independent. The literature reports (from memory) that this error is unreliable for few
//! points and tends to under-estimate the true scatter when the noise is correlated; the
//! integration tests in `tests/minima.rs` measure the ratio on synthetic minima.
//!
//! The method is unweighted, as in the paper: per-point uncertainties are not used (a light
//! curve with very unequal errors is better timed with a weighted symmetric fit).
//!
//! The sum of squares is the same for magnitudes and fluxes and for minima and maxima, so
//! the method times the brightest point of a pulsator unchanged.

use super::{MinimaError, validate};

/// Result of the Kwee–van Woerden method.
#[derive(Debug, Clone, PartialEq)]
pub struct KweeVanWoerden {
    /// Time of the symmetric extremum, days (same origin as the input times).
    pub centre_d: f64,
    /// Standard error of the centre, days (the paper's formula).
    pub error_d: f64,
    /// Reflected pairs summed at each of the three trial centres.
    pub pairs: usize,
    /// Observations inside the reflected range (N of the paper).
    pub observations_used: usize,
    /// Independent pairs Z = N/4.
    pub independent_pairs: f64,
    /// Grid step Δt, days.
    pub grid_step_d: f64,
    /// Minimum of the fitted parabola S(T₀), squared value units.
    pub sum_of_squares_min: f64,
}

/// Fewest observations accepted: Z = N/4 must exceed 1 with a margin, and the three trial
/// centres need at least three pairs each.
pub const MIN_POINTS: usize = 8;

fn interpolate(t: &[f64], v: &[f64], x: f64) -> f64 {
    let j = t.partition_point(|&ti| ti <= x);
    if j == 0 {
        return v[0];
    }
    if j >= t.len() {
        return v[t.len() - 1];
    }
    let (t0, t1) = (t[j - 1], t[j]);
    let f = (x - t0) / (t1 - t0);
    v[j - 1] + f * (v[j] - v[j - 1])
}

/// Pairs (i, k) reflected about half-step position `j` (grid index j/2), for k = 1..=K.
fn max_pairs(j: usize, m: usize) -> usize {
    let g = j / 2;
    if j.is_multiple_of(2) { g.min(m - 1 - g) } else { (g + 1).min(m - 1 - g) }
}

fn sum_of_squares(grid: &[f64], j: usize, pairs: usize) -> f64 {
    let g = j / 2;
    let mut s = 0.0;
    for k in 1..=pairs {
        let (lo, hi) = if j.is_multiple_of(2) { (g - k, g + k) } else { (g + 1 - k, g + k) };
        let d = grid[hi] - grid[lo];
        s += d * d;
    }
    s
}

/// Kwee–van Woerden time of the symmetric extremum of one event.
///
/// Given: times (days, any origin, strictly increasing) and values (magnitudes or fluxes)
/// of the points around one minimum or maximum, both branches present. Returned: centre
/// and its standard error in days. Accuracy: the centre is limited by the noise and by the
/// grid interpolation (linear); the error is the paper's formula (see the module notes on
/// its reliability). Errors: too few points, no symmetric extremum inside the middle half
/// of the window, or zero scatter (noise-free data).
pub fn kwee_van_woerden(time_d: &[f64], value: &[f64]) -> Result<KweeVanWoerden, MinimaError> {
    validate(time_d, value, None)?;
    let n = time_d.len();
    if n < MIN_POINTS {
        return Err(MinimaError::TooFewPoints { method: "the Kwee–van Woerden method", needed: MIN_POINTS, got: n });
    }
    let m = n;
    let h = (time_d[n - 1] - time_d[0]) / (m - 1) as f64;
    let grid: Vec<f64> = (0..m).map(|k| interpolate(time_d, value, time_d[0] + k as f64 * h)).collect();
    // Scan trial centres whose reflection covers at least a quarter of the grid on each side.
    let min_pairs = ((m - 1) / 4).max(3);
    let half_steps = 2 * (m - 1);
    let mut best: Option<(usize, f64)> = None;
    for j in 1..half_steps {
        let k = max_pairs(j, m);
        if k < min_pairs {
            continue;
        }
        let s = sum_of_squares(&grid, j, k) / k as f64;
        if best.is_none_or(|(_, b)| s < b) {
            best = Some((j, s));
        }
    }
    let Some((jc, _)) = best else {
        return Err(MinimaError::TooFewPoints { method: "the Kwee–van Woerden method", needed: MIN_POINTS, got: n });
    };
    if max_pairs(jc - 1, m) < min_pairs || max_pairs(jc + 1, m) < min_pairs {
        return Err(MinimaError::NoExtremum(format!(
            "the most symmetric point lies at the edge of the middle half of the window ({:.6} d after its first point); centre the window on the event",
            jc as f64 * h / 2.0
        )));
    }
    let pairs = max_pairs(jc - 1, m).min(max_pairs(jc, m)).min(max_pairs(jc + 1, m));
    let (s_minus, s_0, s_plus) =
        (sum_of_squares(&grid, jc - 1, pairs), sum_of_squares(&grid, jc, pairs), sum_of_squares(&grid, jc + 1, pairs));
    // Parabola in u = (T − T_jc)/(Δt/2).
    let a_u = 0.5 * (s_minus + s_plus) - s_0;
    let b_u = 0.5 * (s_plus - s_minus);
    if !(a_u > 0.0) {
        return Err(MinimaError::NoExtremum(
            "the reflection sum has no minimum (the branches are not symmetric about any trial centre)".into(),
        ));
    }
    let u0 = -b_u / (2.0 * a_u);
    if u0.abs() > 1.5 {
        return Err(MinimaError::NoExtremum(format!(
            "the parabola through the reflection sums peaks {u0:.2} half-steps from the best trial centre"
        )));
    }
    let s_min = s_0 - b_u * b_u / (4.0 * a_u);
    if !(s_min > 0.0) {
        return Err(MinimaError::NoScatter);
    }
    let half = 0.5 * h;
    let a = a_u / (half * half);
    let centre_d = time_d[0] + jc as f64 * half + u0 * half;
    let reach = pairs as f64 * h;
    let observations_used = time_d.iter().filter(|&&t| (t - centre_d).abs() <= reach).count();
    let z = observations_used as f64 / 4.0;
    if z <= 1.0 {
        return Err(MinimaError::TooFewPoints {
            method: "the Kwee–van Woerden error (Z = N/4 > 1)",
            needed: 5,
            got: observations_used,
        });
    }
    // (4ac − b²)/(4a²(Z − 1)) = S(T₀) / (a (Z − 1)).
    let error_d = (s_min / (a * (z - 1.0))).sqrt();
    Ok(KweeVanWoerden {
        centre_d,
        error_d,
        pairs,
        observations_used,
        independent_pairs: z,
        grid_step_d: h,
        sum_of_squares_min: s_min,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::SeededRng;

    #[test]
    fn noise_free_symmetric_dip_is_centred_exactly_and_has_no_scatter() {
        // A parabola-bottomed dip sampled on a grid that is not symmetric about the centre.
        let t: Vec<f64> = (0..41).map(|i| 0.013 + 0.005 * i as f64).collect();
        let c = 0.1137;
        let v: Vec<f64> = t.iter().map(|x| 10.0 + 0.5 * (-(x - c) * (x - c) / (2.0 * 0.03f64.powi(2))).exp()).collect();
        match kwee_van_woerden(&t, &v) {
            Err(MinimaError::NoScatter) => {}
            Ok(k) => assert!((k.centre_d - c).abs() < 2e-4, "{k:?}"),
            Err(e) => panic!("{e}"),
        }
    }

    #[test]
    fn noisy_dip_recovered_and_sign_does_not_matter() {
        let mut rng = SeededRng::new(3);
        let t: Vec<f64> = (0..60).map(|i| 0.004 * i as f64 + 0.001 * rng.uniform()).collect();
        let c = 0.121;
        let v: Vec<f64> = t
            .iter()
            .map(|x| 10.0 + 0.4 * (-(x - c) * (x - c) / (2.0 * 0.04f64.powi(2))).exp() + 0.005 * rng.normal())
            .collect();
        let k = kwee_van_woerden(&t, &v).unwrap();
        assert!((k.centre_d - c).abs() < 5.0 * k.error_d, "{k:?}");
        let neg: Vec<f64> = v.iter().map(|x| -x).collect();
        let k2 = kwee_van_woerden(&t, &neg).unwrap();
        assert_eq!(k.centre_d, k2.centre_d);
    }

    #[test]
    fn too_few_points_refused() {
        let t = [0.0, 0.1, 0.2, 0.3, 0.4];
        let v = [1.0, 2.0, 3.0, 2.0, 1.0];
        assert!(matches!(kwee_van_woerden(&t, &v), Err(MinimaError::TooFewPoints { .. })));
    }
}
