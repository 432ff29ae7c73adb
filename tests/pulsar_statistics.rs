//! Calibration of the photon statistics on uniform (unpulsed) phases, against their
//! published null distributions. Seeded; every trial is independent.

use rayon::prelude::*;
use skyclock::fit::SeededRng;
use skyclock::pulsar::statistics::*;
use statrs::distribution::{ChiSquared, ContinuousCDF};

fn uniform_phases(seed: u64, n: usize) -> Vec<f64> {
    let mut r = SeededRng::for_stream(seed, 11);
    (0..n).map(|_| r.uniform()).collect()
}

/// Kolmogorov–Smirnov distance between sample and a CDF.
fn ks_distance(mut x: Vec<f64>, cdf: impl Fn(f64) -> f64) -> f64 {
    x.sort_by(|a, b| a.total_cmp(b));
    let n = x.len() as f64;
    x.iter()
        .enumerate()
        .map(|(i, &v)| {
            let f = cdf(v);
            (f - i as f64 / n).abs().max(((i + 1) as f64 / n - f).abs())
        })
        .fold(0.0, f64::max)
}

#[test]
fn z2n_follows_chi2_with_2n_degrees_of_freedom() {
    // Null distribution χ²₂ₙ: Buccheri et al. 1983, A&A 128, 245. CDF: statrs 0.19.
    for n in [1usize, 2, 4] {
        let z: Vec<f64> =
            (0..3000u64).into_par_iter().map(|s| z2n(&uniform_phases(s, 400), None, n).unwrap()).collect();
        let chi = ChiSquared::new(2.0 * n as f64).unwrap();
        let d = ks_distance(z, |v| chi.cdf(v));
        // KS 1 % critical value for m = 3000: 1.63/√m = 0.0298 (common practice).
        assert!(d < 0.0298, "Z²_{n}: KS distance {d}");
    }
}

#[test]
fn weighted_z2_keeps_its_null_distribution() {
    // Kerr 2011, ApJ 732, 38: weighted Z²ₙ is χ²₂ₙ under the null hypothesis.
    let chi = ChiSquared::new(4.0).unwrap();
    let z: Vec<f64> = (0..3000u64)
        .into_par_iter()
        .map(|s| {
            let p = uniform_phases(s, 400);
            let mut r = SeededRng::for_stream(s, 12);
            let w: Vec<f64> = (0..400).map(|_| r.uniform()).collect();
            z2n(&p, Some(&w), 2).unwrap()
        })
        .collect();
    assert!(ks_distance(z, |v| chi.cdf(v)) < 0.0298);
}

#[test]
fn rayleigh_tail_matches_greenwood_durand_for_few_photons() {
    // Small N (8 photons), where the χ²₂ limit e^{-Z/2} is off by several per cent; the
    // Greenwood & Durand (1955) expansion is the reference (Zar, Biostatistical Analysis).
    let trials = 40_000u64;
    let z: Vec<f64> = (0..trials).into_par_iter().map(|s| rayleigh(&uniform_phases(s, 8), None).unwrap()).collect();
    for threshold in [3.0, 6.0, 9.0] {
        let frac = z.iter().filter(|&&v| v > threshold).count() as f64 / trials as f64;
        let expect = rayleigh_false_alarm(threshold, 8);
        let sigma = (expect * (1.0 - expect) / trials as f64).sqrt();
        assert!((frac - expect).abs() < 4.0 * sigma + 1e-4, "Z>{threshold}: {frac} vs {expect}");
    }
}

#[test]
fn h_test_false_alarm_follows_exp_minus_0_4_h() {
    // de Jager & Büsching 2010, A&A 517, L9: P(H > h) ≈ exp(−0.4 h) for uniform phases.
    let trials = 20_000u64;
    let h: Vec<f64> = (0..trials).into_par_iter().map(|s| h_test(&uniform_phases(s, 300), None).unwrap().h).collect();
    for threshold in [2.0, 5.0, 8.0] {
        let frac = h.iter().filter(|&&v| v > threshold).count() as f64 / trials as f64;
        let expect = (-0.4f64 * threshold).exp();
        // The calibration itself is quoted to ~10 % (de Jager & Büsching 2010, Fig. 1);
        // allow that plus 4σ of binomial noise.
        let sigma = (expect * (1.0 - expect) / trials as f64).sqrt();
        assert!((frac - expect).abs() < 0.12 * expect + 4.0 * sigma, "H>{threshold}: {frac} vs {expect}");
    }
}

#[test]
fn epoch_folding_follows_chi2_with_bins_minus_one() {
    // Leahy et al. 1983, ApJ 266, 160: S ~ χ²_{M−1}.
    let chi = ChiSquared::new(9.0).unwrap();
    let s: Vec<f64> =
        (0..3000u64).into_par_iter().map(|s| epoch_folding_chi2(&uniform_phases(s, 500), None, 10).unwrap()).collect();
    assert!(ks_distance(s, |v| chi.cdf(v)) < 0.0298);
}
