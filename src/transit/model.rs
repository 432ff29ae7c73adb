//! The flux of a star with quadratic limb darkening while a dark spherical planet crosses
//! it: the analytic formulae of Mandel & Agol (2002, ApJ 580, L171), every case of their
//! Table 1 (the planet outside, on the limb, inside, on the centre, touching the limb from
//! inside, covering the centre, covering the whole star).
//!
//! The occulted flux is split into three geometric integrals over the occulted area A:
//! `uniform` λᵉ = A/π, `linear` = (1/π)∫_A μ dA (the λᵈ + ⅔Θ(p − z) of the paper) and
//! `quadratic` ηᵈ = (1/π)∫_A r² dA (r the distance from the stellar centre, μ = √(1 − r²),
//! lengths in stellar radii). The limb-darkening coefficients enter only linearly, which the
//! fits use for exact derivatives.

use serde::{Deserialize, Serialize};
use std::f64::consts::PI;

use super::elliptic::{complete_first_kind, complete_second_kind, complete_third_kind};

/// Quadratic limb darkening I(μ)/I(1) = 1 − u₁(1 − μ) − u₂(1 − μ)² (Kopal 1950; the law of
/// Mandel & Agol 2002, eq. 1 with c₁ = c₃ = 0).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct QuadraticLimbDarkening {
    /// Linear coefficient u₁.
    pub u1: f64,
    /// Quadratic coefficient u₂.
    pub u2: f64,
}

impl QuadraticLimbDarkening {
    /// A uniform disc (u₁ = u₂ = 0).
    pub const UNIFORM: QuadraticLimbDarkening = QuadraticLimbDarkening { u1: 0.0, u2: 0.0 };

    /// Intensity at distance `r` (stellar radii) from the disc centre, relative to the
    /// centre; 0 outside the disc.
    pub fn intensity(&self, r: f64) -> f64 {
        if !(r <= 1.0) {
            return 0.0;
        }
        let one_minus_mu = 1.0 - (1.0 - r * r).max(0.0).sqrt();
        1.0 - self.u1 * one_minus_mu - self.u2 * one_minus_mu * one_minus_mu
    }

    /// Disc-integrated flux of the unocculted star divided by π I(1): 1 − u₁/3 − u₂/6 (the
    /// 4Ω of Mandel & Agol 2002).
    pub fn total_flux(&self) -> f64 {
        1.0 - self.u1 / 3.0 - self.u2 / 6.0
    }

    /// Whether the intensity is positive everywhere on the disc and never rises towards the
    /// limb: u₁ + u₂ < 1, u₁ > 0, u₁ + 2u₂ > 0 (Kipping 2013, MNRAS 435, 2152, eqs. 8–10;
    /// u₁ = 0 with u₂ = 0 is allowed for a uniform disc).
    pub fn is_physical(&self) -> bool {
        let (u1, u2) = (self.u1, self.u2);
        (u1 == 0.0 && u2 == 0.0) || (u1 + u2 < 1.0 && u1 > 0.0 && u1 + 2.0 * u2 > 0.0)
    }
}

/// The three geometric integrals over the occulted area, in units of π (stellar radius 1).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct OccultedIntegrals {
    /// λᵉ: occulted area / π.
    pub uniform: f64,
    /// (1/π) ∫ μ dA over the occulted area (λᵈ + ⅔ Θ(p − z) of Mandel & Agol).
    pub linear: f64,
    /// ηᵈ = (1/π) ∫ r² dA over the occulted area.
    pub quadratic: f64,
}

impl OccultedIntegrals {
    const NONE: OccultedIntegrals = OccultedIntegrals { uniform: 0.0, linear: 0.0, quadratic: 0.0 };

    /// Relative flux F = 1 − [c₀ λᵉ + c₂ L + c₄ (λᵉ − ηᵈ)] / (4Ω) for limb darkening `ld`, with
    /// c₀ = 1 − u₁ − u₂, c₂ = u₁ + 2u₂, c₄ = −u₂ (Mandel & Agol 2002, eq. 7 for the quadratic law).
    pub fn flux(&self, ld: &QuadraticLimbDarkening) -> f64 {
        let (c0, c2, c4) = (1.0 - ld.u1 - ld.u2, ld.u1 + 2.0 * ld.u2, -ld.u2);
        let deficit = c0 * self.uniform + c2 * self.linear + c4 * (self.uniform - self.quadratic);
        1.0 - deficit / ld.total_flux()
    }

    /// ∂F/∂u₁ and ∂F/∂u₂ at `ld` (exact: F is a ratio of functions linear in u₁, u₂).
    pub fn flux_gradient_limb_darkening(&self, ld: &QuadraticLimbDarkening) -> (f64, f64) {
        let n = ld.total_flux();
        let deficit = 1.0 - self.flux(ld); // D/n
        // D = (1 − u₁ − u₂)λᵉ + (u₁ + 2u₂)L − u₂(λᵉ − η)
        let d_u1 = -self.uniform + self.linear;
        let d_u2 = -self.uniform + 2.0 * self.linear - (self.uniform - self.quadratic);
        // F = 1 − D/n, n = 1 − u₁/3 − u₂/6
        (-(d_u1 / n) - deficit / n / 3.0, -(d_u2 / n) - deficit / n / 6.0)
    }
}

/// Relative tolerance within which the planet is taken to sit exactly on a contact or on
/// the stellar centre (the special rows of Mandel & Agol's Table 1).
const CONTACT_TOLERANCE: f64 = 1e-12;

/// The occulted integrals for a planet of radius `p` (stellar radii, > 0) whose centre is
/// `z` stellar radii (≥ 0) from the stellar centre, projected on the sky.
///
/// Accuracy: within 1e-9 of a numerical integration over the disc for 1e-4 ≤ p ≤ 2
/// (tests/transit_model.rs); exact contacts are handled by their own formulae. Source:
/// Mandel & Agol (2002), ApJ 580, L171, Table 1 and eqs. 1–8. For p ≤ 0 or non-finite
/// input, nothing is occulted.
pub fn occulted_integrals(p: f64, z: f64) -> OccultedIntegrals {
    if !(p > 0.0 && p.is_finite() && z.is_finite()) {
        return OccultedIntegrals::NONE;
    }
    let z = z.abs();
    // Case 1: no overlap.
    if z >= 1.0 + p {
        return OccultedIntegrals::NONE;
    }
    // Case 11: the planet covers the whole star.
    if p >= 1.0 && z <= p - 1.0 {
        return OccultedIntegrals { uniform: 1.0, linear: 2.0 / 3.0, quadratic: 0.5 };
    }
    let tol = CONTACT_TOLERANCE;
    let a = (z - p) * (z - p);
    let b = (z + p) * (z + p);
    let q = p * p - z * z;
    let eta2 = 0.5 * p * p * (p * p + 2.0 * z * z);
    let theta = if p > z { 2.0 / 3.0 } else { 0.0 };
    // λᵉ, the uniform-source fraction.
    let partial = z > (1.0 - p).abs();
    let (kappa0, kappa1) = if partial {
        (
            ((p * p + z * z - 1.0) / (2.0 * p * z)).clamp(-1.0, 1.0).acos(),
            ((1.0 - p * p + z * z) / (2.0 * z)).clamp(-1.0, 1.0).acos(),
        )
    } else {
        (0.0, 0.0)
    };
    let uniform = if partial {
        let root = (4.0 * z * z - (1.0 + z * z - p * p).powi(2)).max(0.0).sqrt() / 2.0;
        (p * p * kappa0 + kappa1 - root) / PI
    } else {
        p * p
    };
    let eta1 = || {
        (kappa1 + 2.0 * eta2 * kappa0 - 0.25 * (1.0 + 5.0 * p * p + z * z) * ((1.0 - a) * (b - 1.0)).max(0.0).sqrt())
            / (2.0 * PI)
    };
    // Case 10: the planet centred on the star (p < 1).
    if z <= tol * p.max(1.0) {
        let lambda6 = -2.0 / 3.0 * (1.0 - p * p).powf(1.5);
        return OccultedIntegrals { uniform: p * p, linear: lambda6 + 2.0 / 3.0, quadratic: eta2 };
    }
    // Case 6: p = z = ½.
    if (p - 0.5).abs() <= tol && (z - 0.5).abs() <= tol {
        return OccultedIntegrals { uniform, linear: 1.0 / 3.0 - 4.0 / (9.0 * PI), quadratic: 3.0 / 32.0 };
    }
    // Cases 5 and 7: the planet's limb crosses the stellar centre (z = p).
    if (z - p).abs() <= tol * p {
        if p < 0.5 {
            let kc = (1.0 - 4.0 * p * p).max(0.0).sqrt(); // modulus 2p
            let lambda4 = 1.0 / 3.0
                + 2.0 / (9.0 * PI)
                    * (4.0 * (2.0 * p * p - 1.0) * complete_second_kind(kc)
                        + (1.0 - 4.0 * p * p) * complete_first_kind(kc));
            return OccultedIntegrals { uniform, linear: lambda4, quadratic: eta2 };
        }
        let kc = (1.0 - 1.0 / (4.0 * p * p)).max(0.0).sqrt(); // modulus 1/(2p)
        let lambda3 = 1.0 / 3.0 + 16.0 * p / (9.0 * PI) * (2.0 * p * p - 1.0) * complete_second_kind(kc)
            - (1.0 - 4.0 * p * p) * (3.0 - 8.0 * p * p) / (9.0 * PI * p) * complete_first_kind(kc);
        return OccultedIntegrals { uniform, linear: lambda3, quadratic: eta1() };
    }
    // Case 4: the planet touches the limb from inside (z = 1 − p, p < ½).
    if p < 0.5 && (z - (1.0 - p)).abs() <= tol {
        let lambda5 = 2.0 / (3.0 * PI) * (1.0 - 2.0 * p).acos()
            - 4.0 / (9.0 * PI) * (3.0 + 2.0 * p - 8.0 * p * p) * (p * (1.0 - p)).sqrt();
        return OccultedIntegrals { uniform, linear: lambda5 + theta, quadratic: eta2 };
    }
    if partial {
        // Cases 2 and 8: the planet on the limb, λ₁ and η₁ (modulus k < 1).
        let k2 = (1.0 - a) / (4.0 * z * p);
        let kc = ((b - 1.0) / (4.0 * z * p)).max(0.0).sqrt();
        let lambda1 = if k2 >= 1.0 || kc == 0.0 {
            // Numerically on the contact z = 1 − p (p > ½ side).
            0.0
        } else {
            ((1.0 - b) * (2.0 * b + a - 3.0) - 3.0 * q * (b - 2.0)) * complete_first_kind(kc)
                + 4.0 * p * z * (z * z + 7.0 * p * p - 4.0) * complete_second_kind(kc)
                - 3.0 * (q / a) * complete_third_kind((a - 1.0) / a, kc)
        } / (9.0 * PI * (p * z).sqrt());
        return OccultedIntegrals { uniform, linear: lambda1 + theta, quadratic: eta1() };
    }
    // Cases 3 and 9: the planet inside the disc, λ₂ and η₂ (modulus 1/k < 1).
    let kc = ((1.0 - b) / (1.0 - a)).max(0.0).sqrt();
    let lambda2 = 2.0 / (9.0 * PI * (1.0 - a).sqrt())
        * ((1.0 - 5.0 * z * z + p * p + q * q) * complete_first_kind(kc)
            + (1.0 - a) * (z * z + 7.0 * p * p - 4.0) * complete_second_kind(kc)
            - 3.0 * (q / a) * complete_third_kind((a - b) / a, kc));
    OccultedIntegrals { uniform, linear: lambda2 + theta, quadratic: eta2 }
}

/// Relative flux of a star with quadratic limb darkening `ld` behind a planet of radius
/// ratio `p` = Rₚ/R★ at projected separation `z` (stellar radii). 1 out of transit.
///
/// Accuracy: ≤ 1e-9 against a numerical integration over the disc (tests/transit_model.rs).
/// Source: Mandel & Agol (2002), ApJ 580, L171.
pub fn transit_flux(p: f64, z: f64, ld: &QuadraticLimbDarkening) -> f64 {
    occulted_integrals(p, z).flux(ld)
}

/// Small-planet approximation of the flux: the intensity under the planet taken as the
/// intensity at its centre (inside the disc), or its mean over the occulted ring between
/// r = z − p and the limb (on the limb): F ≈ 1 − p² I★(z)/(4Ω) inside and
/// F ≈ 1 − λᵉ I★(z)/(4Ω) on the limb.
///
/// Accuracy: for p ≤ 0.1, relative error of the depth of order p² (Mandel & Agol 2002,
/// §5); use [`transit_flux`] for measurement, this for quick estimates and checks. Source:
/// Mandel & Agol (2002), ApJ 580, L171, eq. 8.
pub fn small_planet_flux(p: f64, z: f64, ld: &QuadraticLimbDarkening) -> f64 {
    if !(p > 0.0 && p.is_finite() && z.is_finite()) {
        return 1.0;
    }
    let z = z.abs();
    if z >= 1.0 + p {
        return 1.0;
    }
    let norm = ld.total_flux();
    if z <= 1.0 - p {
        return 1.0 - p * p * ld.intensity(z) / norm;
    }
    // Mean intensity over the ring from max(z − p, 0) to 1, weighted by area.
    let r0 = (z - p).max(0.0);
    let steps = 64;
    let (mut num, mut den) = (0.0, 0.0);
    for i in 0..steps {
        let r = r0 + (1.0 - r0) * (i as f64 + 0.5) / steps as f64;
        num += ld.intensity(r) * r;
        den += r;
    }
    let mean = if den > 0.0 { num / den } else { 0.0 };
    1.0 - occulted_integrals(p, z).uniform * mean / norm
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn uniform_disc_inside_loses_the_area_ratio() {
        // Uniform source, planet fully inside: depth p² (Mandel & Agol 2002, λᵉ = p²).
        let f = transit_flux(0.1, 0.3, &QuadraticLimbDarkening::UNIFORM);
        assert!((f - (1.0 - 0.01)).abs() < 1e-15);
    }
}
