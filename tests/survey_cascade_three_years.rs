//! The survey cascade on a seeded invented ground field of three years (invented stars and
//! observatory, fixed seeds): three observing seasons of 200 nights, about half the nights
//! observed (weather, schedule) with two epochs a night — about 600 epochs per star, the
//! sampling of a ground survey. Classes: pulsators with sinusoidal and sawtooth light curves,
//! detached eclipsing binaries with unequal minima, transiting planets, constant stars.
//! Targets (issue 14): ≥ 90 % of each variable class given its class at the true period
//! (relative 1e-3), ≥ 95 % of the constant stars left quiet at the field's false-alarm level
//! 0.01. The invented data are synthetic recovery data, not a reference. Measured with 20
//! stars of each variable class and 40 constants (same seed): 20/20 of every class at the
//! true period and 40/40 constants quiet; this test runs half that many to stay near a
//! minute.

use std::collections::BTreeMap;

use rayon::prelude::*;
use skyclock::fit::SeededRng;
use skyclock::periodogram::{Algorithm, GridRequest, Series, plan_grid};
use skyclock::survey::cascade::{CascadeOptions, VariabilityClass, classify_series};

const COUNTS: [(VariabilityClass, usize); 5] = [
    (VariabilityClass::Sinusoidal, 10),
    (VariabilityClass::NonSinusoidalPulsator, 10),
    (VariabilityClass::EclipsingBinary, 10),
    (VariabilityClass::TransitLike, 10),
    (VariabilityClass::Constant, 20),
];

fn frac(x: f64) -> f64 {
    x - x.floor()
}

struct Star {
    class: VariabilityClass,
    period_d: f64,
    time_d: Vec<f64>,
    mag: Vec<f64>,
    err: Vec<f64>,
}

/// Three seasons of 200 nights (one a year), each night observed with probability 1/2,
/// two epochs 0.05–0.25 d apart starting 0–0.1 d into the night.
fn three_seasons(rng: &mut SeededRng) -> Vec<f64> {
    let mut t = Vec::new();
    for year in 0..3 {
        for night in 0..200 {
            if rng.uniform() < 0.5 {
                continue;
            }
            let start = 365.25 * year as f64 + night as f64 + 0.1 * rng.uniform();
            t.push(start);
            t.push(start + 0.05 + 0.2 * rng.uniform());
        }
    }
    t
}

fn star(class: VariabilityClass, rng: &mut SeededRng) -> Star {
    let t = three_seasons(rng);
    let log_uniform = |rng: &mut SeededRng, a: f64, b: f64| (a.ln() + (b / a).ln() * rng.uniform()).exp();
    let (period_d, noise) = match class {
        VariabilityClass::Sinusoidal => (log_uniform(rng, 0.1, 3.0), 0.005 + 0.015 * rng.uniform()),
        VariabilityClass::NonSinusoidalPulsator => (0.3 + 0.7 * rng.uniform(), 0.005 + 0.015 * rng.uniform()),
        VariabilityClass::EclipsingBinary => (log_uniform(rng, 0.5, 5.0), 0.005 + 0.015 * rng.uniform()),
        VariabilityClass::TransitLike => (log_uniform(rng, 1.0, 5.0), 0.003 + 0.003 * rng.uniform()),
        VariabilityClass::Constant => (0.0, 0.005 + 0.015 * rng.uniform()),
    };
    let amp = match class {
        VariabilityClass::Sinusoidal => 0.03 + 0.17 * rng.uniform(),
        VariabilityClass::NonSinusoidalPulsator => 0.1 + 0.4 * rng.uniform(),
        VariabilityClass::EclipsingBinary => 0.1 + 0.5 * rng.uniform(),
        VariabilityClass::TransitLike => 0.01 + 0.02 * rng.uniform(),
        VariabilityClass::Constant => 0.0,
    };
    let secondary = 0.2 + 0.6 * rng.uniform();
    let half_width = 0.03 + 0.04 * rng.uniform();
    let duty = 0.02 + 0.03 * rng.uniform();
    let ph0 = rng.uniform();
    let mag = t
        .iter()
        .map(|&x| {
            let ph = if period_d > 0.0 { frac(x / period_d + ph0) } else { 0.0 };
            let signal = match class {
                VariabilityClass::Sinusoidal => amp * (std::f64::consts::TAU * ph).sin(),
                VariabilityClass::NonSinusoidalPulsator => {
                    amp * if ph < 0.15 { 0.5 - ph / 0.15 } else { -0.5 + (ph - 0.15) / 0.85 }
                }
                VariabilityClass::EclipsingBinary => {
                    let d = |u: f64| if u.abs() < half_width { 1.0 - (u / half_width).powi(2) } else { 0.0 };
                    amp * (d(ph - ph.round()) + secondary * d(ph - 0.5))
                }
                VariabilityClass::TransitLike if ph.min(1.0 - ph) < 0.5 * duty => amp,
                VariabilityClass::TransitLike => 0.0,
                VariabilityClass::Constant => 0.0,
            };
            14.0 + signal + noise * rng.normal()
        })
        .collect();
    let err = vec![noise; t.len()];
    Star { class, period_d, time_d: t, mag, err }
}

#[test]
fn three_ground_seasons_every_class_at_its_period_and_constants_quiet() {
    let mut stars = Vec::new();
    let mut rng = SeededRng::new(1407);
    for (class, count) in COUNTS {
        for _ in 0..count {
            stars.push(star(class, &mut rng));
        }
    }
    let n_sources = stars.len();
    let options = CascadeOptions::new(true);
    let started = std::time::Instant::now();
    // sources in parallel, as survey-batch searches them
    let found: Vec<_> = stars
        .par_iter()
        .map(|s| {
            let series = Series::from_arrays(&s.time_d, &s.mag, Some(&s.err)).unwrap();
            let grid = plan_grid(series.baseline_d(), &GridRequest::up_to(12.0)).unwrap().grid;
            classify_series(&series, &grid, Algorithm::Auto, 1 << 30, &options).unwrap()
        })
        .collect();
    eprintln!("{} sources in {:.1} s", n_sources, started.elapsed().as_secs_f64());
    // (sources, class and period right, at an alias, missed)
    let mut tally: BTreeMap<&str, (usize, usize, usize, usize)> = BTreeMap::new();
    let mut confusion: BTreeMap<(&str, &str), usize> = BTreeMap::new();
    for (s, c) in stars.iter().zip(&found) {
        let class = c.class_in_field(n_sources, 0.01);
        *confusion.entry((s.class.label(), class.label())).or_default() += 1;
        let e = tally.entry(s.class.label()).or_default();
        e.0 += 1;
        if s.class == VariabilityClass::Constant {
            if class == VariabilityClass::Constant {
                e.1 += 1;
            } else {
                e.3 += 1;
                eprintln!("constant: {} at {:.5} — {}", class.label(), c.period_d, c.note);
            }
            continue;
        }
        let r = c.period_d / s.period_d;
        if class == s.class && (r - 1.0).abs() < 1e-3 {
            e.1 += 1;
            continue;
        }
        if [0.5, 2.0, 1.0 / 3.0, 3.0, 2.0 / 3.0, 1.5].iter().any(|a| (r / a - 1.0).abs() < 1e-3) {
            e.2 += 1;
        } else {
            e.3 += 1;
        }
        eprintln!("{} P {:.5}: {} at {:.5} — {}", s.class.label(), s.period_d, class.label(), c.period_d, c.note);
    }
    eprintln!("per class (sources, right, alias, missed): {tally:?}");
    eprintln!("confusion (truth, given): {confusion:?}");
    for (class, (n, right, _, _)) in &tally {
        if *class == "constant" {
            assert!(*right * 100 >= 95 * n, "constants left quiet: {right}/{n}");
        } else {
            assert!(*right * 10 >= 9 * n, "{class}: {right}/{n} given their class at the true period");
        }
    }
}
