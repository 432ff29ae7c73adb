//! The light-travel-time effect of a companion: the eclipsing pair moves on an orbit about
//! the barycentre of the triple and its events arrive early or late by the light time across
//! that orbit. Kepler's equation and Irwin's (1952, ApJ 116, 211, eq. 1) delay formula.

use std::f64::consts::{PI, TAU};

/// Eccentric anomaly E from mean anomaly M (rad) and eccentricity 0 ≤ e < 1, solving
/// M = E − e sin E.
///
/// Accuracy: |E − e sin E − M| < 1e-14 rad. Method: Newton–Raphson from the starter
/// E₀ = M + e sin M (or π for e > 0.8), with a bisection safeguard. Source: Danby (1988),
/// Fundamentals of Celestial Mechanics, §6.6.
pub fn eccentric_anomaly(mean_anomaly_rad: f64, e: f64) -> f64 {
    let m = mean_anomaly_rad.rem_euclid(TAU);
    let mm = if m > PI { m - TAU } else { m }; // in (−π, π]
    if e == 0.0 {
        return mm;
    }
    let (mut lo, mut hi) = (-PI, PI);
    let mut x = if e > 0.8 { mm.signum() * PI } else { mm + e * mm.sin() };
    for _ in 0..60 {
        let (sin_x, cos_x) = x.sin_cos();
        let f = x - e * sin_x - mm;
        if f == 0.0 {
            return x;
        }
        if f > 0.0 {
            hi = x
        } else {
            lo = x
        }
        let step = f / (1.0 - e * cos_x);
        // Converged: test before the bracket, or a zero-length step at the root would be
        // taken for a step outside it and send the iteration into bisection. The tolerance
        // is a few units in the last place of E: near |E| = π the rounding of f alone makes
        // steps of ~1e-15, which a fixed 1e-15 never accepted (60 iterations per call).
        if step.abs() <= 4.0 * f64::EPSILON * (1.0 + x.abs()) {
            return x - step;
        }
        let mut next = x - step;
        if !(next > lo && next < hi) {
            next = 0.5 * (lo + hi);
        }
        x = next;
    }
    x
}

/// True anomaly ν (rad) from eccentric anomaly E and eccentricity e:
/// tan(ν/2) = √((1+e)/(1−e)) tan(E/2). Source: Danby (1988), eq. 6.3.
pub fn true_anomaly(eccentric_anomaly_rad: f64, e: f64) -> f64 {
    let half = eccentric_anomaly_rad / 2.0;
    2.0 * (((1.0 + e).sqrt()) * half.sin()).atan2((1.0 - e).sqrt() * half.cos())
}

/// Light-time delay of the eclipsing pair, in the units of `projected_light_time`:
///
/// τ = (a₁₂ sin i / c) · [ (1 − e²)/(1 + e cos ν) · sin(ν + ω) + e sin ω ]
///
/// Given: `projected_light_time` = a₁₂ sin i / c (any time unit), eccentricity e, argument
/// of periastron ω (rad), and the mean anomaly M = 2π(t − T_peri)/P₃ (rad).
/// Returned: τ (positive = late). The semi-amplitude (half the peak-to-peak range) is
/// (a₁₂ sin i / c)·√(1 − e² cos² ω). Accuracy: that of [`eccentric_anomaly`].
/// Source: Irwin (1952), ApJ 116, 211, eq. (1).
pub fn irwin_delay(projected_light_time: f64, e: f64, omega_rad: f64, mean_anomaly_rad: f64) -> f64 {
    let ea = eccentric_anomaly(mean_anomaly_rad, e);
    let nu = true_anomaly(ea, e);
    projected_light_time * ((1.0 - e * e) / (1.0 + e * nu.cos()) * (nu + omega_rad).sin() + e * omega_rad.sin())
}

/// Semi-amplitude of Irwin's delay, (a₁₂ sin i / c)·√(1 − e² cos² ω), in the units of
/// `projected_light_time`. Source: Irwin (1952), ApJ 116, 211, §II.
pub fn irwin_semi_amplitude(projected_light_time: f64, e: f64, omega_rad: f64) -> f64 {
    projected_light_time * (1.0 - e * e * omega_rad.cos().powi(2)).sqrt()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn kepler_solution_satisfies_the_equation() {
        for &e in &[0.0, 0.1, 0.5, 0.9, 0.99] {
            for k in 0..200 {
                let m = -7.0 + 0.07 * k as f64;
                let ea = eccentric_anomaly(m, e);
                let resid = (ea - e * ea.sin() - m).rem_euclid(TAU);
                assert!(resid.min(TAU - resid) < 1e-12, "e={e} M={m}");
            }
        }
    }

    /// Irwin (1952), §II: the peak-to-peak range of τ is 2 (a sin i/c) √(1 − e² cos² ω).
    #[test]
    fn semi_amplitude_matches_irwin() {
        for &(e, w) in &[(0.0, 0.3), (0.3, 1.0), (0.6, 0.0), (0.8, 2.5)] {
            let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
            for k in 0..200_000 {
                let d = irwin_delay(1.0, e, w, TAU * k as f64 / 200_000.0);
                lo = lo.min(d);
                hi = hi.max(d);
            }
            assert!(((hi - lo) / 2.0 - irwin_semi_amplitude(1.0, e, w)).abs() < 1e-6, "e={e}");
        }
    }

    /// e → 0: the orbit is a circle and τ = (a sin i/c) sin(M + ω), a pure sinusoid (Irwin 1952).
    #[test]
    fn circular_limit_is_a_sinusoid() {
        for k in 0..100 {
            let m = 0.1 * k as f64;
            assert!((irwin_delay(2.0, 0.0, 0.7, m) - 2.0 * (m + 0.7).sin()).abs() < 1e-13);
            // Small e: deviation is first order in e.
            assert!((irwin_delay(2.0, 1e-4, 0.7, m) - 2.0 * (m + 0.7).sin()).abs() < 1e-3);
        }
    }
}
