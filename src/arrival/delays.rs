//! The individual delays between arrival at the observer and at the solar-system
//! barycentre, each as a plain function of vectors (km, s).
//!
//! Sign convention: t_barycentre = t_observer(TDB) + Rømer + curvature − Shapiro.
//! References: Lorimer & Kramer (2005, *Handbook of Pulsar Astronomy*, §8.2);
//! Edwards, Hobbs & Manchester (2006, MNRAS 372, 1549, eqs. 4–5 and 28);
//! Eastman, Siverd & Gaudi (2010, PASP 122, 935).

use crate::ephemeris::SPEED_OF_LIGHT_KM_PER_S as C_KM_S;

/// 2GM/c³ of a body with gravitational parameter `gm_km3_per_s2`, s (for the Sun: 9.85 µs).
pub fn shapiro_scale_s(gm_km3_per_s2: f64) -> f64 {
    2.0 * gm_km3_per_s2 / (C_KM_S * C_KM_S * C_KM_S)
}

/// Rømer delay for a source at infinity: r·n̂/c, s, with `observer_km` the observer's
/// barycentric position and `unit` the barycentric unit vector to the source.
/// Exact geometry; accuracy is that of the positions (1 km ↔ 3.3 µs).
pub fn roemer_delay_s(observer_km: &[f64; 3], unit: &[f64; 3]) -> f64 {
    dot(observer_km, unit) / C_KM_S
}

/// Wavefront-curvature (parallax) term for a source at `distance_km`:
/// −(|r|² − (r·n̂)²)/(2 c d), s. Second order in |r|/d; neglected terms ~|r|³/(c d²).
/// Source: Lorimer & Kramer (2005) eq. 8.? "from memory"; derived from |D − r| expanded to
/// second order (see `docs/arrival.md`).
pub fn curvature_delay_s(observer_km: &[f64; 3], unit: &[f64; 3], distance_km: f64) -> f64 {
    let rn = dot(observer_km, unit);
    let r2 = dot(observer_km, observer_km);
    -(r2 - rn * rn) / (2.0 * C_KM_S * distance_km)
}

/// Shapiro delay of a body of gravitational parameter `gm` (km³/s²) at `body_km` for light
/// from direction `unit` reaching `observer_km`: −(2GM/c³) ln(1 + cos θ), s, with θ the
/// angle between the body→observer vector and the observer→source direction
/// (source at infinity). Source: Lorimer & Kramer (2005) §8.2 (from memory); Backer &
/// Hellings (1986, ARA&A 24, 537). Within 0.1° of the body's centre the value is capped.
pub fn shapiro_delay_s(observer_km: &[f64; 3], body_km: &[f64; 3], unit: &[f64; 3], gm_km3_per_s2: f64) -> f64 {
    let rho = [observer_km[0] - body_km[0], observer_km[1] - body_km[1], observer_km[2] - body_km[2]];
    let norm = dot(&rho, &rho).sqrt();
    if norm == 0.0 {
        return 0.0;
    }
    let cos_theta = (dot(&rho, unit) / norm).max(-1.0 + 1.5e-6);
    -shapiro_scale_s(gm_km3_per_s2) * (1.0 + cos_theta).ln()
}

/// Dot product of two 3-vectors.
pub fn dot(a: &[f64; 3], b: &[f64; 3]) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn light_time_for_one_au() {
        // 1 au / c = 499.004784 s (IAU 2012 B2 au = 149597870.700 km; SI c): common practice.
        let r = [149_597_870.700, 0.0, 0.0];
        assert!((roemer_delay_s(&r, &[1.0, 0.0, 0.0]) - 499.004_784).abs() < 1e-6);
    }

    #[test]
    fn curvature_matches_exact_geometry() {
        // Compare with the exact path difference (|D - r| - |D|)/c for a star at 10 pc.
        let d = 10.0 * 3.085_677_581_491_367e13; // 10 pc in km (IAU 2015 B2 pc)
        let unit = [0.6_f64, 0.0, 0.8];
        let r = [1.2e8, -0.7e8, 0.3e8];
        let big = [d * unit[0], d * unit[1], d * unit[2]];
        let diff = [big[0] - r[0], big[1] - r[1], big[2] - r[2]];
        // |D − r| − d = (r² − 2 d r·n̂)/(|D − r| + d), free of cancellation.
        let path = (dot(&r, &r) - 2.0 * d * dot(&r, &unit)) / (dot(&diff, &diff).sqrt() + d);
        let exact = -path / C_KM_S;
        let approx = roemer_delay_s(&r, &unit) + curvature_delay_s(&r, &unit, d);
        assert!((exact - approx).abs() < 1e-9, "{exact} {approx}");
    }

    #[test]
    fn shapiro_size_at_one_au() {
        // Source at 90° from the Sun seen from 1 au: −2GM/c³·ln(1) = 0; opposite the Sun:
        // −2GM/c³·ln 2 ≈ −6.83 µs; 2GM☉/c³ = 9.85 µs (common practice).
        let gm = crate::ephemeris::GM_SUN_KM3_PER_S2;
        assert!((shapiro_scale_s(gm) - 9.85e-6).abs() < 0.01e-6);
        let obs = [1.496e8, 0.0, 0.0];
        assert!(shapiro_delay_s(&obs, &[0.0; 3], &[0.0, 1.0, 0.0], gm).abs() < 1e-15);
        assert!(
            (shapiro_delay_s(&obs, &[0.0; 3], &[1.0, 0.0, 0.0], gm) + shapiro_scale_s(gm) * 2f64.ln()).abs() < 1e-15
        );
        // Grazing the limb (0.27°) the delay is ~+100 µs.
        let a = 0.27_f64.to_radians();
        let near = shapiro_delay_s(&obs, &[0.0; 3], &[-a.cos(), a.sin(), 0.0], gm);
        assert!(near > 90e-6 && near < 130e-6, "{near}");
    }
}
