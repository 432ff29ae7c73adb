//! The transit model against checks from outside it: an independent numerical integration
//! of the occulted flux over the stellar disc (written here, sharing no code with the
//! model), and the limiting cases of the published formulae (Mandel & Agol 2002, ApJ 580,
//! L171). Target: |F_model − F_numerical| ≤ 1e-6 in relative flux (issue 16); measured here
//! against 1e-8 and printed.

use skyclock::transit::{QuadraticLimbDarkening, occulted_integrals, small_planet_flux, transit_flux};
use std::f64::consts::PI;

/// ∫ₐᵇ g(r) dr by composite Gauss–Legendre (8 nodes per panel) after r = a + (b − a)(1 − cos φ)/2,
/// which removes the square-root behaviour of the integrand at both ends (common practice).
fn integrate(a: f64, b: f64, panels: usize, g: &dyn Fn(f64) -> f64) -> f64 {
    // Gauss–Legendre nodes and weights on [−1, 1], 8 points (Abramowitz & Stegun 1964, Table 25.4).
    const X: [f64; 4] =
        [0.183_434_642_495_649_8, 0.525_532_409_916_329, 0.796_666_477_413_626_7, 0.960_289_856_497_536_3];
    const W: [f64; 4] =
        [0.362_683_783_378_362, 0.313_706_645_877_887_3, 0.222_381_034_453_374_5, 0.101_228_536_290_376_3];
    if b <= a {
        return 0.0;
    }
    let h = PI / panels as f64;
    let mut sum = 0.0;
    for k in 0..panels {
        let mid = (k as f64 + 0.5) * h;
        for j in 0..4 {
            for s in [-1.0, 1.0] {
                let phi = mid + s * X[j] * h / 2.0;
                let r = a + (b - a) * (1.0 - phi.cos()) / 2.0;
                let dr = (b - a) * phi.sin() / 2.0;
                sum += W[j] * h / 2.0 * g(r) * dr;
            }
        }
    }
    sum
}

/// Relative flux by integrating the occulted intensity over rings of the stellar disc: the
/// ring of radius r loses the fraction θ(r)/π that lies under the planet, θ the half-angle of
/// the arc inside the planet's disc (law of cosines), so
/// deficit = ∫₀¹ I(r) 2r θ(r) dr / ∫₀¹ I(r) 2π r dr.
fn numerical_flux(p: f64, z: f64, ld: &QuadraticLimbDarkening) -> f64 {
    let intensity = |r: f64| {
        let m = 1.0 - (1.0 - r * r).max(0.0).sqrt();
        1.0 - ld.u1 * m - ld.u2 * m * m
    };
    let half_angle = |r: f64| {
        if r <= 0.0 {
            return if z < p { PI } else { 0.0 };
        }
        if r + z <= p {
            return PI; // the whole ring under the planet
        }
        if r >= z + p || r <= z - p {
            return 0.0;
        }
        ((r * r + z * z - p * p) / (2.0 * r * z)).clamp(-1.0, 1.0).acos()
    };
    let mut breaks = vec![0.0, 1.0, (z - p).abs(), z + p];
    breaks.retain(|b| *b >= 0.0 && *b <= 1.0);
    breaks.sort_by(|a, b| a.total_cmp(b));
    breaks.dedup();
    let mut deficit = 0.0;
    let mut total = 0.0;
    for w in breaks.windows(2) {
        deficit += integrate(w[0], w[1], 200, &|r| intensity(r) * 2.0 * r * half_angle(r));
        total += integrate(w[0], w[1], 200, &|r| intensity(r) * 2.0 * PI * r);
    }
    1.0 - deficit / total
}

const LAWS: [QuadraticLimbDarkening; 3] = [
    QuadraticLimbDarkening { u1: 0.0, u2: 0.0 },
    QuadraticLimbDarkening { u1: 0.4, u2: 0.25 },
    QuadraticLimbDarkening { u1: 0.9, u2: -0.2 },
];

#[test]
fn model_matches_numerical_integration_over_the_disc() {
    // Every generic row of Mandel & Agol's Table 1: inside (3, 9), on the limb (2, 8), the
    // planet over the centre, large planets (p > ½, p > 1).
    let mut worst: f64 = 0.0;
    for p in [0.01, 0.05, 0.1, 0.3, 0.5, 0.7, 1.2] {
        for i in 0..=60 {
            let z = (1.0 + p) * i as f64 / 60.0 + 1e-3;
            for ld in &LAWS {
                let a = transit_flux(p, z, ld);
                let b = numerical_flux(p, z, ld);
                worst = worst.max((a - b).abs());
                assert!((a - b).abs() < 1e-8, "p {p} z {z} ld {ld:?}: model {a} numerical {b}");
            }
        }
    }
    println!("largest |model − numerical| over the grid: {worst:.2e} (target 1e-6)");
}

#[test]
fn contact_rows_agree_with_their_neighbours_and_the_integration() {
    // Table 1 rows 4 (z = 1 − p), 5 and 7 (z = p), 6 (p = z = ½), 10 (z = 0), 11 (z < p − 1):
    // the special formulae equal the general ones an ε away and the numerical integration.
    let ld = LAWS[1];
    let cases = [
        (0.1, 0.9),
        (0.3, 0.7),
        (0.1, 0.1),
        (0.3, 0.3),
        (0.7, 0.7),
        (1.2, 1.2),
        (0.5, 0.5),
        (0.2, 0.0),
        (0.8, 0.0),
        (1.5, 0.2),
    ];
    for (p, z) in cases {
        let exact = transit_flux(p, z, &ld);
        let numerical = numerical_flux(p, z, &ld);
        assert!((exact - numerical).abs() < 1e-8, "contact p {p} z {z}: {exact} vs numerical {numerical}");
        for eps in [1e-9, -1e-9] {
            let zz = (z + eps).max(0.0);
            let near = transit_flux(p, zz, &ld);
            assert!((exact - near).abs() < 1e-6, "p {p} z {z}→{zz}: {exact} vs {near}");
        }
    }
}

#[test]
fn uniform_source_gives_the_overlap_area() {
    // Uniform source: the deficit is the overlap area of two circles over π (Mandel & Agol
    // 2002, eq. 1; the lens area formula, e.g. Weisstein, "Circle-circle intersection").
    for (p, z) in [(0.1, 0.95), (0.3, 1.1), (0.6, 0.5), (0.1, 0.4)] {
        let d: f64 = z;
        let (r, big) = (p, 1.0);
        let area = if d >= r + big {
            0.0
        } else if d <= big - r {
            PI * r * r
        } else {
            r * r * ((d * d + r * r - big * big) / (2.0 * d * r)).acos()
                + big * big * ((d * d + big * big - r * r) / (2.0 * d * big)).acos()
                - 0.5 * ((-d + r + big) * (d + r - big) * (d - r + big) * (d + r + big)).sqrt()
        };
        let f = transit_flux(p, z, &QuadraticLimbDarkening::UNIFORM);
        assert!((1.0 - f - area / PI).abs() < 1e-14, "p {p} z {z}");
    }
}

#[test]
fn small_planet_limit_is_the_local_intensity() {
    // p → 0: the deficit tends to p² I(z)/(4Ω) (Mandel & Agol 2002, §5, eq. 8), with
    // 4Ω = 1 − u₁/3 − u₂/6 the disc-integrated flux.
    let ld = LAWS[1];
    for z in [0.0, 0.3, 0.6, 0.9] {
        for p in [1e-2, 1e-3] {
            let deficit = 1.0 - transit_flux(p, z, &ld);
            let limit = p * p * ld.intensity(z) / ld.total_flux();
            assert!((deficit / limit - 1.0).abs() < 3.0 * p, "z {z} p {p}: {deficit} vs {limit}");
            let approx = 1.0 - small_planet_flux(p, z, &ld);
            assert!((approx / limit - 1.0).abs() < 1e-8);
        }
    }
}

#[test]
fn full_occultation_leaves_no_light_and_centred_planet_has_its_formula() {
    // A planet larger than the star, centred: F = 0 (Table 1 row 11).
    for ld in &LAWS {
        assert!(transit_flux(1.3, 0.1, ld).abs() < 1e-15);
    }
    // Centred planet, p < 1 (row 10): deficit = [c₀p² + c₂·⅔(1 − (1 − p²)^{3/2}) + c₄(p² − p⁴/2)]/(4Ω),
    // the integral of I(μ) over a centred disc of radius p done by hand (common practice).
    let ld = LAWS[2];
    let p: f64 = 0.4;
    let (c0, c2, c4) = (1.0 - ld.u1 - ld.u2, ld.u1 + 2.0 * ld.u2, -ld.u2);
    let expected = (c0 * p * p + c2 * 2.0 / 3.0 * (1.0 - (1.0 - p * p).powf(1.5)) + c4 * (p * p - p.powi(4) / 2.0))
        / ld.total_flux();
    assert!((1.0 - transit_flux(p, 0.0, &ld) - expected).abs() < 1e-14);
    // No overlap: exactly 1 (row 1).
    assert_eq!(transit_flux(0.1, 1.1 + 1e-12, &ld), 1.0);
    let none = occulted_integrals(0.1, 2.0);
    assert_eq!(none.uniform, 0.0);
}
