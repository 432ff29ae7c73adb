//! The individual delays between arrival at the observer and at the solar-system
//! barycentre, each as a plain function of vectors (km, s).
//!
//! Sign convention: t_barycentre = t_observer(TDB) + Rømer + curvature − Shapiro.
//! References: Lorimer & Kramer (2005, *Handbook of Pulsar Astronomy*, §8.2);
//! Backer & Hellings (1986, ARA&A 24, 537); IERS Conventions (2010), ch. 11;
//! Eastman, Siverd & Gaudi (2010, PASP 122, 935).

use crate::constants::ASTRONOMICAL_UNIT_KM as AU_KM;
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

/// Nominal solar radius, km: IAU 2015 Resolution B3 (R☉ᴺ = 695 700 km).
pub const SUN_RADIUS_KM: f64 = 695_700.0;
/// Equatorial radius of Jupiter, km (1 bar level; IAU WGCCRE 2015 report, Archinal et al.
/// 2018, Celest. Mech. Dyn. Astr. 130, 22; from memory).
pub const JUPITER_RADIUS_KM: f64 = 71_492.0;
/// Equatorial radius of Saturn, km (same source as [`JUPITER_RADIUS_KM`]; from memory).
pub const SATURN_RADIUS_KM: f64 = 60_268.0;

/// Shapiro delay of a body of gravitational parameter `gm` (km³/s²) and radius `radius_km`
/// at `body_km`, for light from a source at infinity in direction `unit` reaching
/// `observer_km` (all barycentric, km): −(2GM/c³) ln[(|ρ| + ρ·n̂) / 1 au], s, with
/// ρ = observer − body. This is −(2GM/c³) [ln(1 + cos θ) + ln(|ρ| / 1 au)], θ the angle
/// between the body→observer vector and the observer→source direction: the limit of the
/// Shapiro (1964) light time (2GM/c³) ln[(r_o + r_s + R)/(r_o + r_s − R)] for r_s → ∞, less
/// the constant (2GM/c³) ln(2 r_s / 1 au), which shifts every time alike. The distance term
/// is kept (IERS Conventions 2010 ch. 11 write the one-way delay per station as
/// ln(|x| + k̂·x), from memory; the pulsar-timing form −(2GM/c³) ln(1 + cos θ) of Backer &
/// Hellings 1986, ARA&A 24, 537, leaves it out): ≤ 0.17 µs over the year for an observer at
/// the Earth, but 6.8 µs for an observer at 0.5 au (`docs/arrival.md`).
///
/// Near the body's line of sight |ρ| + ρ·n̂ is computed as b² / (|ρ| − ρ·n̂), with the impact
/// parameter b = |ρ × n̂|, free of cancellation. A ray whose impact parameter is below the
/// body's radius passes through the body (the source is occulted): the value is capped at the
/// limb's, b = `radius_km`. Accuracy: that of the positions and of GM (1 km in the impact
/// parameter at the solar limb ↔ 28 ps).
pub fn shapiro_delay_s(
    observer_km: &[f64; 3],
    body_km: &[f64; 3],
    unit: &[f64; 3],
    gm_km3_per_s2: f64,
    radius_km: f64,
) -> f64 {
    let rho = [observer_km[0] - body_km[0], observer_km[1] - body_km[1], observer_km[2] - body_km[2]];
    let norm = dot(&rho, &rho).sqrt();
    if !(norm > 0.0) {
        return 0.0;
    }
    let along = dot(&rho, unit);
    let path_km = if along >= 0.0 {
        // The source lies on the far side from the body: no cancellation.
        norm + along
    } else {
        let cross = [
            rho[1] * unit[2] - rho[2] * unit[1],
            rho[2] * unit[0] - rho[0] * unit[2],
            rho[0] * unit[1] - rho[1] * unit[0],
        ];
        let impact_km = dot(&cross, &cross).sqrt();
        let radius = radius_km.min(norm);
        if impact_km < radius {
            // Occulted: the grazing ray's |ρ| + ρ·n̂ = |ρ| − √(|ρ|² − R²).
            radius * radius / (norm + ((norm - radius) * (norm + radius)).sqrt())
        } else {
            impact_km * impact_km / (norm - along)
        }
    };
    -shapiro_scale_s(gm_km3_per_s2) * (path_km / AU_KM).ln()
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
        let obs = [AU_KM, 0.0, 0.0];
        let shapiro = |unit: &[f64; 3]| shapiro_delay_s(&obs, &[0.0; 3], unit, gm, SUN_RADIUS_KM);
        assert!(shapiro(&[0.0, 1.0, 0.0]).abs() < 1e-15);
        assert!((shapiro(&[1.0, 0.0, 0.0]) + shapiro_scale_s(gm) * 2f64.ln()).abs() < 1e-15);
        // The distance term: the same geometry seen from 2 au is −(2GM/c³) ln 2 lower.
        let far = [2.0 * AU_KM, 0.0, 0.0];
        let from_far = shapiro_delay_s(&far, &[0.0; 3], &[0.0, 1.0, 0.0], gm, SUN_RADIUS_KM);
        assert!((from_far + shapiro_scale_s(gm) * 2f64.ln()).abs() < 1e-15, "{from_far}");
        // Grazing the limb (0.266°) the delay is ~+112 µs; further in the ray is blocked and
        // the value stays at the limb's.
        let limb = (SUN_RADIUS_KM / AU_KM).asin();
        let at = |elongation: f64| shapiro(&[-elongation.cos(), elongation.sin(), 0.0]);
        let near = at(limb);
        assert!(near > 105e-6 && near < 120e-6, "{near}");
        assert_eq!(at(0.5 * limb), near);
        assert_eq!(at(0.0), near);
        assert!(at(1.01 * limb) < near && at(1.01 * limb) > near - 0.3e-6);
    }
}
