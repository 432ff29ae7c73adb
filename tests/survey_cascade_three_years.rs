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

#[path = "common/survey_field.rs"]
mod survey_field;
use survey_field::invented_star;

const COUNTS: [(VariabilityClass, usize); 5] = [
    (VariabilityClass::Sinusoidal, 10),
    (VariabilityClass::NonSinusoidalPulsator, 10),
    (VariabilityClass::EclipsingBinary, 10),
    (VariabilityClass::TransitLike, 10),
    (VariabilityClass::Constant, 20),
];

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

#[test]
fn three_ground_seasons_every_class_at_its_period_and_constants_quiet() {
    let mut stars = Vec::new();
    let mut rng = SeededRng::new(1407);
    for (class, count) in COUNTS {
        for _ in 0..count {
            let t = three_seasons(&mut rng);
            stars.push(invented_star(class, t, 14.0, &mut rng));
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
