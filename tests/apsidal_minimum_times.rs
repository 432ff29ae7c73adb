//! The times of minimum of an eccentric eclipsing binary (`oc::eclipse_times`) checked from
//! outside the code that computes them:
//!
//! * an independent brute-force reference: the orbit followed forward in time with Kepler's
//!   equation (`oc::orbit::eccentric_anomaly`, itself checked against the equation) and the
//!   projected separation r²(1 − sin² i sin² θ) minimised by golden-section search over time
//!   (geometry: common practice, e.g. Kopal 1959, Close Binary Systems, ch. VI, from memory);
//! * the e → 0 limit: primary and secondary exactly half a period apart (common practice);
//! * the first-order result that the secondary follows the primary by
//!   P/2 + (P/π)·e·cos ω·(1 + csc² i) (Sterne 1939, MNRAS 99, 451, from memory; at i = 90°
//!   this is P/2 + (2P/π) e cos ω);
//! * the series against the exact solution, with an error that shrinks as e⁶ (edge-on) and
//!   stays within e²·cot⁴ i plus that at other inclinations.
//!
//! No published worked case with all digits was at hand, so the exact solution (checked by
//! the brute force) is the outside reference of the series.

use std::f64::consts::{PI, TAU};

use skyclock::oc::EventKind;
use skyclock::oc::eclipse_times::{MinimumTimeMethod, minimum_offset_rad};
use skyclock::oc::orbit::{eccentric_anomaly, true_anomaly};

/// Projected separation² at mean anomaly M.
fn separation2(m: f64, e: f64, w: f64, i: f64) -> f64 {
    let nu = true_anomaly(eccentric_anomaly(m, e), e);
    let r = (1.0 - e * e) / (1.0 + e * nu.cos());
    r * r * (1.0 - (i.sin() * (nu + w).sin()).powi(2))
}

/// Brute force: golden-section minimum of the separation over mean anomaly within ±2 rad of
/// the circular-orbit conjunction M₀ = θ_c − ω, on the side of the orbit of this conjunction,
/// returned as the offset M − M₀.
fn brute_force_offset(kind: EventKind, e: f64, w: f64, i: f64) -> f64 {
    let theta_c = if kind == EventKind::Primary { PI / 2.0 } else { 1.5 * PI };
    let m0 = theta_c - w;
    // Coarse scan first, so the bracket holds the deepest point.
    let (mut best, mut best_f) = (m0, f64::INFINITY);
    for k in 0..=4000 {
        let m = m0 - 2.0 + 4.0 * k as f64 / 4000.0;
        let f = separation2(m, e, w, i);
        // The right conjunction: sin θ > 0 at primary, < 0 at secondary.
        let nu = true_anomaly(eccentric_anomaly(m, e), e);
        let in_front = (nu + w).sin() * (theta_c.sin()) > 0.0;
        if in_front && f < best_f {
            best_f = f;
            best = m;
        }
    }
    let (mut a, mut b) = (best - 1e-3, best + 1e-3);
    let g = (5f64.sqrt() - 1.0) / 2.0;
    for _ in 0..200 {
        let c = b - g * (b - a);
        let d = a + g * (b - a);
        if separation2(c, e, w, i) < separation2(d, e, w, i) { b = d } else { a = c }
    }
    let m = 0.5 * (a + b);
    (m - m0 + PI).rem_euclid(TAU) - PI
}

#[test]
fn exact_minimum_times_match_a_brute_force_search_over_the_orbit() {
    // A golden-section minimum is good to ~√ε of the curvature scale: 1e-7 rad is ample.
    let mut worst: f64 = 0.0;
    for &e in &[0.0, 0.05, 0.2, 0.45, 0.7] {
        for &i_deg in &[90.0, 88.0, 84.0, 80.0] {
            for k in 0..12 {
                let w = -PI + TAU * (k as f64 + 0.3) / 12.0;
                let i = f64::to_radians(i_deg);
                for kind in [EventKind::Primary, EventKind::Secondary] {
                    let exact = minimum_offset_rad(kind, e, w, i, MinimumTimeMethod::Exact).unwrap();
                    let brute = brute_force_offset(kind, e, w, i);
                    worst = worst.max((exact - brute).abs());
                    assert!((exact - brute).abs() < 2e-7, "e={e} i={i_deg} ω={w} {kind}: {exact} vs {brute}");
                }
            }
        }
    }
    eprintln!("exact vs brute force: worst {worst:.2e} rad");
}

#[test]
fn circular_orbit_puts_secondary_half_a_period_after_primary() {
    for method in [MinimumTimeMethod::Exact, MinimumTimeMethod::Series] {
        for &i_deg in &[90.0, 85.0, 78.0] {
            for k in 0..8 {
                let w = 0.7 * k as f64;
                let i = f64::to_radians(i_deg);
                let p = minimum_offset_rad(EventKind::Primary, 0.0, w, i, method).unwrap();
                let s = minimum_offset_rad(EventKind::Secondary, 0.0, w, i, method).unwrap();
                assert!(p.abs() < 1e-14 && s.abs() < 1e-14, "{method:?} i={i_deg}: {p} {s}");
                // Tiny e: departures are first order in e.
                let p = minimum_offset_rad(EventKind::Primary, 1e-6, w, i, method).unwrap();
                assert!(p.abs() < 1e-5);
            }
        }
    }
}

/// Sterne (1939), first order in e: (T_II − T_I − P/2) = (P/π) e cos ω (1 + csc² i); in mean
/// anomaly φ_II − φ_I = 2 e cos ω (1 + csc² i). The second-order remainder is O(e²).
#[test]
fn separation_of_minima_follows_the_first_order_formula() {
    for &i_deg in &[90.0, 86.0, 82.0] {
        let i = f64::to_radians(i_deg);
        let csc2 = 1.0 / i.sin().powi(2);
        for &e in &[1e-3, 1e-2, 0.05] {
            for k in 0..10 {
                let w = 0.63 * k as f64;
                let first_order = 2.0 * e * w.cos() * (1.0 + csc2);
                for method in [MinimumTimeMethod::Exact, MinimumTimeMethod::Series] {
                    let p = minimum_offset_rad(EventKind::Primary, e, w, i, method).unwrap();
                    let s = minimum_offset_rad(EventKind::Secondary, e, w, i, method).unwrap();
                    assert!(
                        (s - p - first_order).abs() < 3.0 * e * e + 1e-15,
                        "{method:?} e={e} i={i_deg} ω={w}: {} vs {first_order}",
                        s - p
                    );
                }
            }
        }
    }
}

#[test]
fn series_converges_to_the_exact_solution_as_e_to_the_sixth_edge_on() {
    let i = PI / 2.0;
    for &e in &[0.05, 0.1, 0.2, 0.3] {
        let mut worst: f64 = 0.0;
        for k in 0..72 {
            let w = TAU * k as f64 / 72.0;
            for kind in [EventKind::Primary, EventKind::Secondary] {
                let x = minimum_offset_rad(kind, e, w, i, MinimumTimeMethod::Exact).unwrap();
                let s = minimum_offset_rad(kind, e, w, i, MinimumTimeMethod::Series).unwrap();
                worst = worst.max((x - s).abs());
            }
        }
        eprintln!("edge-on e = {e}: series − exact ≤ {worst:.2e} rad ({:.3} e⁶)", worst / e.powi(6));
        assert!(worst < 0.25 * e.powi(6), "e = {e}: {worst}");
    }
}

#[test]
fn series_stays_close_to_the_exact_solution_when_inclined() {
    // Inclination enters the series to first order in cot² i: the remainder is of order
    // e²·cot⁴ i (plus the e⁶ of the eccentricity series).
    for &i_deg in &[88.0, 85.0, 80.0] {
        let i = f64::to_radians(i_deg);
        let cot4 = (i.cos() / i.sin()).powi(4);
        for &e in &[0.05, 0.15, 0.3] {
            for k in 0..36 {
                let w = TAU * k as f64 / 36.0;
                for kind in [EventKind::Primary, EventKind::Secondary] {
                    let x = minimum_offset_rad(kind, e, w, i, MinimumTimeMethod::Exact).unwrap();
                    let s = minimum_offset_rad(kind, e, w, i, MinimumTimeMethod::Series).unwrap();
                    let bound = 0.25 * e.powi(6) + 4.0 * e * e * cot4 + 1e-14;
                    assert!((x - s).abs() < bound, "i={i_deg} e={e} ω={w} {kind}: {x} vs {s}, bound {bound:.1e}");
                }
            }
        }
    }
}
