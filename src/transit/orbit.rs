//! The planet's path across the star: the sky-projected separation z (stellar radii) of the
//! planet's centre from the star's centre at a time, for a circular orbit or an eccentric
//! one (e, ω), given a/R★, the impact parameter b and the time of mid-transit.

use serde::{Deserialize, Serialize};
use std::f64::consts::{FRAC_PI_2, TAU};

/// The orbit of a transiting planet relative to its star (the star's radius is the unit of
/// length). The mid-transit time is the time of conjunction (true anomaly f = π/2 − ω).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct TransitOrbit {
    /// Orbital period, days.
    pub period_d: f64,
    /// Semi-major axis in stellar radii, a/R★ (> 1).
    pub scaled_semi_major_axis: f64,
    /// Impact parameter b = (a cos i / R★)·(1 − e²)/(1 + e sin ω), stellar radii (≥ 0).
    pub impact_parameter: f64,
    /// Eccentricity (0 ≤ e < 1).
    pub eccentricity: f64,
    /// Argument of periastron of the planet's orbit ω, radians (ignored for e = 0).
    pub periastron_argument_rad: f64,
}

impl TransitOrbit {
    /// A circular orbit.
    pub fn circular(period_d: f64, scaled_semi_major_axis: f64, impact_parameter: f64) -> TransitOrbit {
        TransitOrbit {
            period_d,
            scaled_semi_major_axis,
            impact_parameter,
            eccentricity: 0.0,
            periastron_argument_rad: 0.0,
        }
    }

    /// Whether the numbers describe an orbit: finite, P > 0, a/R★ > 1, 0 ≤ b < a/R★ (of the
    /// conjunction distance), 0 ≤ e < 1.
    pub fn is_valid(&self) -> bool {
        let conj = self.conjunction_distance();
        self.period_d.is_finite()
            && self.period_d > 0.0
            && self.scaled_semi_major_axis.is_finite()
            && self.scaled_semi_major_axis > 1.0
            && self.eccentricity >= 0.0
            && self.eccentricity < 1.0
            && self.periastron_argument_rad.is_finite()
            && self.impact_parameter >= 0.0
            && self.impact_parameter < conj
    }

    /// Star–planet distance at conjunction, stellar radii: a(1 − e²)/(1 + e sin ω).
    pub fn conjunction_distance(&self) -> f64 {
        let e = self.eccentricity;
        self.scaled_semi_major_axis * (1.0 - e * e) / (1.0 + e * self.periastron_argument_rad.sin())
    }

    /// cos i from b (radians are not needed by the model).
    pub fn cos_inclination(&self) -> f64 {
        (self.impact_parameter / self.conjunction_distance()).clamp(0.0, 1.0)
    }

    /// Inclination, degrees.
    pub fn inclination_deg(&self) -> f64 {
        self.cos_inclination().acos().to_degrees()
    }

    /// Sky-projected separation z (stellar radii) at `dt_d` days after mid-transit. Behind
    /// the star (at the secondary eclipse) the separation is returned as +∞ so the planet
    /// occults nothing.
    ///
    /// Accuracy: Kepler's equation solved to 1e-14 rad. Source: the standard sky-plane
    /// geometry, e.g. Winn (2010), "Transits and occultations", in Exoplanets (ed. Seager),
    /// eqs. 1–5.
    pub fn separation(&self, dt_d: f64) -> f64 {
        let cos_i = self.cos_inclination();
        let a = self.scaled_semi_major_axis;
        let e = self.eccentricity;
        if e == 0.0 {
            let phase = TAU * dt_d / self.period_d;
            let (s, c) = phase.sin_cos();
            if c <= 0.0 {
                return f64::INFINITY;
            }
            return a * (s * s + cos_i * cos_i * c * c).sqrt();
        }
        let omega = self.periastron_argument_rad;
        // Mean anomaly at conjunction, from f = π/2 − ω.
        let f0 = FRAC_PI_2 - omega;
        let e0 = 2.0 * (((1.0 - e) / (1.0 + e)).sqrt() * (f0 / 2.0).tan()).atan();
        let m0 = e0 - e * e0.sin();
        let m = m0 + TAU * dt_d / self.period_d;
        let ecc = eccentric_anomaly(m, e);
        let f = 2.0 * (((1.0 + e) / (1.0 - e)).sqrt() * (ecc / 2.0).tan()).atan();
        let r = a * (1.0 - e * ecc.cos());
        let (s, c) = (omega + f).sin_cos();
        if s <= 0.0 {
            return f64::INFINITY;
        }
        r * (c * c + s * s * cos_i * cos_i).sqrt()
    }

    /// Total transit duration T₁₄ (first to fourth contact) for radius ratio `p`, days; 0 for
    /// a grazing-free miss (b ≥ 1 + p). Circular formula of Seager & Mallén-Ornelas (2003,
    /// ApJ 585, 1038, eq. 3), scaled by √(1 − e²)/(1 + e sin ω) for an eccentric orbit
    /// (Winn 2010, eq. 16).
    pub fn total_duration_d(&self, p: f64) -> f64 {
        let b = self.impact_parameter;
        if b >= 1.0 + p {
            return 0.0;
        }
        let a = self.scaled_semi_major_axis;
        let sin_i = (1.0 - self.cos_inclination().powi(2)).sqrt();
        let arg = (((1.0 + p).powi(2) - b * b).sqrt() / (a * sin_i)).min(1.0);
        let e = self.eccentricity;
        let factor = (1.0 - e * e).sqrt() / (1.0 + e * self.periastron_argument_rad.sin());
        self.period_d / std::f64::consts::PI * arg.asin() * factor
    }
}

/// Eccentric anomaly E from mean anomaly M (rad) for 0 ≤ e < 1: Newton–Raphson on
/// M = E − e sin E with a bisection safeguard, |residual| < 1e-14 rad. Source: Danby (1988),
/// Fundamentals of Celestial Mechanics, §6.6.
fn eccentric_anomaly(m: f64, e: f64) -> f64 {
    let m = m.rem_euclid(TAU);
    let m = if m > std::f64::consts::PI { m - TAU } else { m };
    let (mut lo, mut hi) = (-std::f64::consts::PI, std::f64::consts::PI);
    let mut x = if e > 0.8 { m.signum() * std::f64::consts::PI } else { m + e * m.sin() };
    for _ in 0..60 {
        let (s, c) = x.sin_cos();
        let f = x - e * s - m;
        if f.abs() < 1e-15 {
            break;
        }
        if f > 0.0 {
            hi = x;
        } else {
            lo = x;
        }
        let mut next = x - f / (1.0 - e * c);
        if !(next > lo && next < hi) {
            next = 0.5 * (lo + hi);
        }
        x = next;
    }
    x
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn circular_separation_at_mid_transit_is_the_impact_parameter() {
        let o = TransitOrbit::circular(3.0, 10.0, 0.4);
        assert!((o.separation(0.0) - 0.4).abs() < 1e-12);
        assert!(o.separation(1.5).is_infinite());
    }

    #[test]
    fn eccentric_separation_at_conjunction_is_the_impact_parameter() {
        let o = TransitOrbit {
            period_d: 5.0,
            scaled_semi_major_axis: 12.0,
            impact_parameter: 0.3,
            eccentricity: 0.3,
            periastron_argument_rad: 1.1,
        };
        assert!((o.separation(0.0) - 0.3).abs() < 1e-9, "{}", o.separation(0.0));
        // Symmetric about conjunction to first order; the minimum lies within seconds of it.
        let dz = o.separation(0.001) - o.separation(-0.001);
        assert!(dz.abs() < 1e-3);
    }
}
