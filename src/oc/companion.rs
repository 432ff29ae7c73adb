//! The companion behind a light-time orbit: projected semi-major axis, mass function and
//! minimum mass.

/// Light time for one astronomical unit, s (IAU 2012 au = 149 597 870 700 m exactly; c
/// exact): 499.004 783 836 s.
pub use crate::constants::LIGHT_TIME_PER_AU_S;

/// Projected semi-major axis a₁₂ sin i of the eclipsing pair's orbit, au, from the
/// projected light time a₁₂ sin i / c in seconds. Exact (IAU 2012 Resolution B2).
pub fn projected_semi_major_axis_au(projected_light_time_s: f64) -> f64 {
    projected_light_time_s / LIGHT_TIME_PER_AU_S
}

/// Mass function f(M₃) = (a₁₂ sin i)³ / P₃² = (M₃ sin i)³ / (M₁ + M₂ + M₃)², M☉, from
/// a₁₂ sin i in au and P₃ in years (Kepler's third law in solar units; the small
/// difference between the Julian and sidereal year, 2e-5 relative, is neglected).
/// Source: e.g. Mayer (1990), BAICz 41, 231, eq. 3; Irwin (1952), ApJ 116, 211.
pub fn mass_function_msun(projected_semi_major_axis_au: f64, period_yr: f64) -> f64 {
    projected_semi_major_axis_au.abs().powi(3) / (period_yr * period_yr)
}

/// Minimum companion mass M₃ (sin i = 1), M☉: the positive root of the cubic
/// M₃³ − f·(M₁₂ + M₃)² = 0 for mass function f and binary mass M₁₂ (both M☉).
///
/// The cubic has exactly one positive root (g(0) < 0, g increases beyond its only positive
/// stationary point); found by bracketing and bisection to 1e-14 relative. Returns `None`
/// for non-finite or negative input. Source: the mass-function identity (common practice).
pub fn minimum_companion_mass_msun(mass_function_msun: f64, binary_mass_msun: f64) -> Option<f64> {
    let f = mass_function_msun;
    let m12 = binary_mass_msun;
    if !(f.is_finite() && m12.is_finite() && f >= 0.0 && m12 > 0.0) {
        return None;
    }
    if f == 0.0 {
        return Some(0.0);
    }
    let g = |m: f64| m * m * m - f * (m12 + m) * (m12 + m);
    let (mut lo, mut hi) = (0.0, m12.max(f).max(1e-6));
    while g(hi) < 0.0 {
        hi *= 2.0;
        if !hi.is_finite() {
            return None;
        }
    }
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if g(mid) < 0.0 {
            lo = mid
        } else {
            hi = mid
        }
        if hi - lo <= 1e-14 * hi {
            break;
        }
    }
    Some(0.5 * (lo + hi))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The mass-function identity (a₁₂ sin i)³/P₃² = (M₃ sin i)³/(M₁+M₂+M₃)² (Kepler's third
    /// law with a₁₂ = a·M₃/(M₁+M₂+M₃); common practice, e.g. Mayer 1990, BAICz 41, 231).
    #[test]
    fn mass_function_identity_and_minimum_mass() {
        for &(m12, m3, p_yr) in &[(2.0, 0.5, 10.0), (1.2, 0.08, 3.0), (3.5, 1.7, 40.0)] {
            let m_tot: f64 = m12 + m3;
            let a_au = (m_tot * p_yr * p_yr).cbrt(); // Kepler III, solar units
            let a12 = a_au * m3 / m_tot;
            let f = mass_function_msun(a12, p_yr);
            assert!((f - m3.powi(3) / (m_tot * m_tot)).abs() < 1e-12 * f.max(1.0));
            let m_min = minimum_companion_mass_msun(f, m12).unwrap();
            assert!((m_min - m3).abs() < 1e-10, "{m_min} vs {m3}");
        }
        assert_eq!(minimum_companion_mass_msun(f64::NAN, 2.0), None);
    }

    /// 1 au of light time: 499.004784 s (common practice; IAU 2012 au and exact c).
    #[test]
    fn light_time_per_au() {
        assert!((LIGHT_TIME_PER_AU_S - 499.004784).abs() < 1e-6);
    }
}
