//! Speed of the O–C companion fit: quadratic + light-time (Irwin 1952) model fitted to 2,000
//! invented timings over 30 years, then 1,000 seeded bootstrap resamples, timed in one run
//! (issue 4 target: ≤ 10 s on the 2-core machine). The reference measured in the same run
//! is the plain quadratic (linear least-squares) fit with the same 1,000 resamples, so the
//! printed ratio says what the nonlinear orbit costs. Run: `cargo bench --bench oc_fit`.

use skyclock::fit::SeededRng;
use skyclock::oc::models::light_time_d;
use skyclock::oc::{
    BootstrapOptions, CycleOptions, EventKind, FitOptions, ModelKind, ReferenceEphemeris, Timing, assign_cycles,
    bootstrap, fit_model,
};
use skyclock::time::{Instant, TimeScale};
use std::time::Instant as Clock;

const PERIOD_D: f64 = 0.734_512_3;
const LTTE: [f64; 5] = [0.004, 4_200.0, 0.3, 0.4, 0.5];

fn main() {
    let epoch = Instant::from_mjd_two_part(TimeScale::Tdb, 45_000.0, 0.2);
    let mut rng = SeededRng::new(2000);
    let mut used = std::collections::HashSet::new();
    let mut timings = Vec::new();
    while timings.len() < 2000 {
        let day = (rng.below(30) as f64) * 365.25 + 150.0 * rng.uniform();
        let e = (day / PERIOD_D).round();
        if !used.insert(e as i64) {
            continue;
        }
        let sigma = 0.0002 + 0.0008 * rng.uniform();
        let t = e * PERIOD_D + 1.5e-10 * e * e + light_time_d(&LTTE, e * PERIOD_D) + sigma * rng.normal();
        timings.push(Timing {
            bjd_tdb: epoch.add_seconds(t * 86_400.0),
            error_d: sigma,
            kind: EventKind::Primary,
            source: None,
            row: timings.len() + 1,
        });
    }
    let reference = ReferenceEphemeris { epoch, period_d: PERIOD_D, period_sigma_d: 1e-7 };
    let series = assign_cycles(&timings, &reference, &CycleOptions::default()).expect("cycles");
    let resamples: usize = std::env::var("OC_FIT_RESAMPLES").ok().and_then(|v| v.parse().ok()).unwrap_or(1000);
    let boot = BootstrapOptions { resamples, seed: 11 };
    let threads = rayon::current_num_threads();

    let t0 = Clock::now();
    let quad = fit_model(&series, ModelKind::Quadratic, &FitOptions::default()).expect("quadratic fit");
    let qb = bootstrap(&series, &quad, &boot).expect("quadratic bootstrap");
    let t_quad = t0.elapsed().as_secs_f64();

    let t0 = Clock::now();
    let fit = fit_model(&series, ModelKind::QuadraticLightTime, &FitOptions::default()).expect("light-time fit");
    let t_fit = t0.elapsed().as_secs_f64();
    eprintln!("  (global light-time fit done in {t_fit:.2} s; bootstrap of {resamples} resamples running)");
    if std::env::var("OC_FIT_DEBUG").is_ok() {
        let model = skyclock::oc::OcModel { kind: fit.kind, series: &series, weights: fit.weights.clone() };
        let t1 = Clock::now();
        let lm = skyclock::fit::levenberg_marquardt(
            &model,
            &fit.params,
            &skyclock::fit::LevenbergOptions {
                max_iterations: 300,
                relative_tolerance: 1e-10,
                initial_damping: 1e-3,
                absolute_tolerance: 1e-5,
                covariance: true,
            },
        )
        .unwrap();
        eprintln!(
            "  LM from the solution: {} iterations, converged {}, {:.3} s",
            lm.iterations,
            lm.converged,
            t1.elapsed().as_secs_f64()
        );
        let mut rng = SeededRng::new(5);
        let idx: Vec<usize> = (0..series.len()).map(|_| rng.below(series.len())).collect();
        let sub = series.subset(&idx);
        let model = skyclock::oc::OcModel {
            kind: fit.kind,
            series: &sub,
            weights: idx.iter().map(|&i| fit.weights[i]).collect(),
        };
        let t1 = Clock::now();
        let lm = skyclock::fit::levenberg_marquardt(
            &model,
            &fit.params,
            &skyclock::fit::LevenbergOptions {
                max_iterations: 300,
                relative_tolerance: 1e-10,
                initial_damping: 1e-3,
                absolute_tolerance: 1e-5,
                covariance: true,
            },
        )
        .unwrap();
        eprintln!(
            "  LM on a resample: {} iterations, converged {}, {:.3} s",
            lm.iterations,
            lm.converged,
            t1.elapsed().as_secs_f64()
        );
    }
    let b = bootstrap(&series, &fit, &boot).expect("light-time bootstrap");
    let t_total = t0.elapsed().as_secs_f64();

    println!("O–C fit, 2000 timings, {resamples} bootstrap resamples (OC_FIT_RESAMPLES), {threads} rayon threads");
    println!("  reference: quadratic fit + bootstrap        {t_quad:.3} s ({} failed resamples)", qb.failed);
    println!(
        "  quadratic + light time: global fit {t_fit:.2} s, with bootstrap {t_total:.2} s ({} failed resamples)",
        b.failed
    );
    println!(
        "  ratio (light-time / quadratic): {:.0}x; target ≤ 10 s total: {}",
        t_total / t_quad,
        if t_total <= 10.0 { "met" } else { "NOT met" }
    );
    let p3 = fit.derived_value("companion_period_d").unwrap();
    println!("  recovered P3 = {:.0} ± {:.0} d (truth 4200 d)", p3.0, p3.1);
}
