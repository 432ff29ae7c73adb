//! Recovery and interval calibration of the O–C fits on invented binaries: injected
//! quadratic (steady period change) and light-time (Irwin 1952, ApJ 116, 211) terms,
//! seasonal sampling over three decades, mixed errors (visual/photographic 0.002–0.004 d
//! early on, photoelectric/CCD 0.0002–0.0005 d later). A 1σ interval should contain the
//! truth in 68.3 % of trials (Gaussian errors; common practice); we accept 68 ± 7 % over
//! ≥ 200 seeded trials. All data are synthetic.

use rayon::prelude::*;
use skyclock::fit::SeededRng;
use skyclock::oc::models::light_time_d;
use skyclock::oc::{
    BootstrapOptions, CycleOptions, EventKind, FitOptions, ModelKind, ReferenceEphemeris, Timing, assign_cycles,
    bootstrap, fit_model,
};
use skyclock::time::{Instant, TimeScale};

const PERIOD_D: f64 = 0.734_512_3;
const QUADRATIC_D: f64 = 1.5e-10; // d per cycle²
const LTTE: [f64; 5] = [0.004, 4_200.0, 0.547_722_6 * 0.540_302_3, 0.547_722_6 * 0.841_471, 0.5]; // e = 0.3, ω = 1 rad

fn epoch() -> Instant {
    Instant::from_mjd_two_part(TimeScale::Tdb, 45_000.0, 0.2)
}

/// One invented timing set: ~4 timings per observing season for 30 seasons.
fn simulate(seed: u64, with_ltte: bool) -> Vec<Timing> {
    let mut rng = SeededRng::for_stream(seed, 7);
    let mut out = Vec::new();
    let mut row = 1;
    let mut used = std::collections::HashSet::new();
    for year in 0..30 {
        let per_season = 2 + rng.below(4);
        for _ in 0..per_season {
            let day = year as f64 * 365.25 + 120.0 * rng.uniform();
            let e = (day / PERIOD_D).round() + if rng.uniform() < 0.3 { 0.5 } else { 0.0 };
            if !used.insert((e * 2.0) as i64) {
                continue;
            }
            let kind = if e.fract() != 0.0 { EventKind::Secondary } else { EventKind::Primary };
            let sigma = if year < 12 { 0.002 + 0.002 * rng.uniform() } else { 0.0002 + 0.0003 * rng.uniform() };
            let t_lin = e * PERIOD_D;
            let mut t = t_lin + QUADRATIC_D * e * e + sigma * rng.normal();
            if with_ltte {
                t += light_time_d(&LTTE, t_lin);
            }
            out.push(Timing { bjd_tdb: epoch().add_seconds(t * 86_400.0), error_d: sigma, kind, source: None, row });
            row += 1;
        }
    }
    out
}

fn reference() -> ReferenceEphemeris {
    ReferenceEphemeris { epoch: epoch(), period_d: PERIOD_D, period_sigma_d: 1e-7 }
}

fn within(est: f64, sigma: f64, truth: f64) -> bool {
    sigma.is_finite() && (est - truth).abs() <= sigma
}

fn fraction(hits: usize, n: usize) -> f64 {
    hits as f64 / n as f64
}

#[test]
fn quadratic_term_covariance_and_bootstrap_intervals_are_calibrated() {
    let trials = 240;
    let hits: Vec<(bool, bool)> = (0..trials)
        .into_par_iter()
        .map(|k| {
            let s = assign_cycles(&simulate(1000 + k as u64, false), &reference(), &CycleOptions::default()).unwrap();
            let f = fit_model(&s, ModelKind::Quadratic, &FitOptions::default()).unwrap();
            let b = bootstrap(&s, &f, &BootstrapOptions { resamples: 200, seed: k as u64 }).unwrap();
            (within(f.params[2], f.sigma(2), QUADRATIC_D), within(f.params[2], b.parameter_sigma[2], QUADRATIC_D))
        })
        .collect();
    let cov = fraction(hits.iter().filter(|h| h.0).count(), trials);
    let boot = fraction(hits.iter().filter(|h| h.1).count(), trials);
    eprintln!("quadratic term inside 1σ: covariance {:.1} %, bootstrap {:.1} %", 100.0 * cov, 100.0 * boot);
    assert!((0.61..=0.75).contains(&cov), "covariance coverage {cov}");
    assert!((0.61..=0.75).contains(&boot), "bootstrap coverage {boot}");
}

// Measured 2026-12-02 (a few seconds since the analytic Jacobian and the Kepler-solver
// fix): quadratic term 68.5 %, semi-amplitude 65.0 %, companion period 65.0 %,
// eccentricity 61.5 % inside 1σ.
#[test]
fn light_time_and_quadratic_terms_are_recovered_with_calibrated_intervals() {
    let trials = 200;
    let results: Vec<[bool; 4]> = (0..trials)
        .into_par_iter()
        .map(|k| {
            let s = assign_cycles(&simulate(5000 + k as u64, true), &reference(), &CycleOptions::default()).unwrap();
            let f = fit_model(&s, ModelKind::QuadraticLightTime, &FitOptions::default()).unwrap();
            let (amp_true, _) = {
                let e: f64 = 0.3;
                (LTTE[0] * 86_400.0 * (1.0 - e * e * 1.0f64.cos().powi(2)).sqrt(), 0)
            };
            let (amp, amp_s) = f.derived_value("semi_amplitude_s").unwrap();
            let (p3, p3_s) = f.derived_value("companion_period_d").unwrap();
            let (e, e_s) = f.derived_value("eccentricity").unwrap();
            [
                within(f.params[2], f.sigma(2), QUADRATIC_D),
                within(amp, amp_s, amp_true),
                within(p3, p3_s, LTTE[1]),
                within(e, e_s, 0.3),
            ]
        })
        .collect();
    let names = ["quadratic term", "light-time semi-amplitude", "companion period", "eccentricity"];
    for (j, name) in names.iter().enumerate() {
        let c = fraction(results.iter().filter(|r| r[j]).count(), trials);
        eprintln!("{name} inside 1σ: {:.1} %", 100.0 * c);
        // All four asserted, the eccentricity included (measured 61.5 %, inside the 68 ± 7 %
        // band, 200 trials ⇒ binomial σ = 3.3 %; normal distribution, common practice).
        // Faults caught: an eccentricity σ propagated without the chain rule from √e cos ω,
        // √e sin ω (too small or too large by ~×2 ⇒ coverage < 40 % or > 90 %), a biased
        // eccentricity (e pulled towards 0 by the parameterisation), covariance not scaled.
        assert!((0.61..=0.75).contains(&c), "{name}: coverage {c}");
    }
}

/// Two companions (hierarchical light-time terms add; common practice): invented timings
/// with an outer 4200-d orbit and an inner 1300-d orbit, dense CCD-era sampling. The
/// two-companion fit finds both periods within 3σ, and BIC and the F-test prefer it over
/// one companion. Seeded; two invented systems.
#[test]
fn two_light_time_companions_are_separated_and_preferred() {
    const INNER: [f64; 5] = [0.0015, 1_300.0, 0.2, -0.1, 2.0];
    for seed in [71_u64, 73] {
        let mut rng = SeededRng::for_stream(seed, 3);
        let mut timings = Vec::new();
        let mut used = std::collections::HashSet::new();
        for year in 0..25 {
            for _ in 0..12 {
                let day = year as f64 * 365.25 + 200.0 * rng.uniform();
                let e = (day / PERIOD_D).round();
                if !used.insert(e as i64) {
                    continue;
                }
                let sigma = 0.0002 + 0.0002 * rng.uniform();
                let t_lin = e * PERIOD_D;
                let t = t_lin + light_time_d(&LTTE, t_lin) + light_time_d(&INNER, t_lin) + sigma * rng.normal();
                timings.push(Timing {
                    bjd_tdb: epoch().add_seconds(t * 86_400.0),
                    error_d: sigma,
                    kind: EventKind::Primary,
                    source: None,
                    row: timings.len() + 1,
                });
            }
        }
        let s = assign_cycles(&timings, &reference(), &CycleOptions::default()).unwrap();
        let one = fit_model(&s, ModelKind::LinearLightTime, &FitOptions::default()).unwrap();
        let two = fit_model(&s, ModelKind::LinearTwoLightTime, &FitOptions::default()).unwrap();
        let (pa, pa_s) = two.derived_value("companion_period_d").unwrap();
        let (pb, pb_s) = two.derived_value("companion2_period_d").unwrap();
        let (outer, outer_s, inner, inner_s) = if pa > pb { (pa, pa_s, pb, pb_s) } else { (pb, pb_s, pa, pa_s) };
        eprintln!(
            "seed {seed}: P_outer = {outer:.0} ± {outer_s:.0} d, P_inner = {inner:.1} ± {inner_s:.1} d, χ² {:.0} → {:.0} (n = {})",
            one.chi2,
            two.chi2,
            s.len()
        );
        assert!((outer - LTTE[1]).abs() < 3.0 * outer_s, "outer period {outer} ± {outer_s}");
        assert!((inner - INNER[1]).abs() < 3.0 * inner_s, "inner period {inner} ± {inner_s}");
        let t = skyclock::oc::compare_nested(&one, &two).expect("nested comparison");
        assert!(t.richer_preferred && t.delta_bic < -10.0, "{}", t.verdict);
        assert!(skyclock::oc::information(&two).reduced_chi2 < 1.3);
    }
}

/// Huber robust loss (Huber 1964, Ann. Math. Stat. 35, 73): 5 % of the timings are gross
/// outliers (0.02–0.05 d, e.g. a mis-identified minimum — invented). Plain least squares is
/// pulled away from the injected period change; the robust fit is not, and names the rows.
#[test]
fn robust_loss_resists_gross_outliers() {
    let mut timings = simulate(424_242, false);
    let mut rng = SeededRng::for_stream(424_242, 99);
    let mut bad_rows = Vec::new();
    for (i, t) in timings.iter_mut().enumerate() {
        if i % 20 == 7 {
            let shift_d = (0.02 + 0.03 * rng.uniform()) * if rng.uniform() < 0.7 { 1.0 } else { -1.0 };
            t.bjd_tdb = t.bjd_tdb.add_seconds(shift_d * 86_400.0);
            bad_rows.push(t.row);
        }
    }
    let s = assign_cycles(&timings, &reference(), &CycleOptions::default()).unwrap();
    let plain = fit_model(&s, ModelKind::Quadratic, &FitOptions::default()).unwrap();
    let robust =
        fit_model(&s, ModelKind::Quadratic, &FitOptions { huber_k: Some(1.345), ..Default::default() }).unwrap();
    let pull = |f: &skyclock::oc::ModelFit| (f.params[2] - QUADRATIC_D) / f.sigma(2);
    eprintln!(
        "quadratic term pull: plain {:.1}σ, robust {:.1}σ; {}",
        pull(&plain),
        pull(&robust),
        robust.notes.join("; ")
    );
    assert!(pull(&plain).abs() > 3.0, "the outliers should bias plain least squares");
    assert!(pull(&robust).abs() < 2.5, "robust pull {}", pull(&robust));
    assert!(bad_rows.iter().all(|r| robust.notes[0].contains(&format!(" {r}"))), "{}", robust.notes[0]);
}

/// Bootstrap intervals of the light-time fit (pairs bootstrap, 100 resamples per trial,
/// Efron & Tibshirani 1993, ch. 9): the same 200 invented systems as above; the companion
/// period and the quadratic term inside their bootstrap 1σ in 68 ± 7 % of trials, reported
/// beside the covariance coverage.
#[test]
fn light_time_bootstrap_intervals_are_calibrated() {
    let trials = 200;
    let results: Vec<[bool; 2]> = (0..trials)
        .into_par_iter()
        .map(|k| {
            let s = assign_cycles(&simulate(5000 + k as u64, true), &reference(), &CycleOptions::default()).unwrap();
            let f = fit_model(&s, ModelKind::QuadraticLightTime, &FitOptions::default()).unwrap();
            let b = bootstrap(&s, &f, &BootstrapOptions { resamples: 100, seed: k as u64 }).unwrap();
            let p3_sigma = b.derived_sigma.iter().find(|d| d.0 == "companion_period_d").unwrap().1;
            let p3 = f.derived_value("companion_period_d").unwrap().0;
            [within(f.params[2], b.parameter_sigma[2], QUADRATIC_D), within(p3, p3_sigma, LTTE[1])]
        })
        .collect();
    for (j, name) in ["quadratic term", "companion period"].iter().enumerate() {
        let c = fraction(results.iter().filter(|r| r[j]).count(), trials);
        eprintln!("{name} inside its bootstrap 1σ: {:.1} %", 100.0 * c);
        assert!((0.61..=0.75).contains(&c), "{name}: bootstrap coverage {c}");
    }
}
