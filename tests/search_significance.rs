//! False-alarm probabilities: Baluev (2008, MNRAS 385, 1279) against a bootstrap on white
//! noise, the bootstrap's independence of the thread count, and the log-space evaluation
//! against astropy 8.0.2 and a 50-digit mpmath 1.4.1 evaluation
//! (tests/reference/baluev_fap.csv, generator and README beside it).

mod reference_tables;

use skyclock::fit::SeededRng;
use skyclock::periodogram::significance::{
    BootstrapOptions, baluev_fap, baluev_log10_fap, bootstrap_fap, format_log10_probability,
};
use skyclock::periodogram::*;

fn white_noise(seed: u64, n: usize) -> Series {
    let mut rng = SeededRng::new(seed);
    let mut t: Vec<f64> = (0..n).map(|_| rng.uniform() * 40.0).collect();
    t.sort_by(|a, b| a.total_cmp(b));
    let y: Vec<f64> = t.iter().map(|_| rng.normal()).collect();
    Series::from_arrays(&t, &y, None).unwrap()
}

/// Baluev's FAP is an upper bound that is tight for small probabilities (Baluev 2008;
/// "tight below FAP ≈ 0.1" is from memory of the paper's simulations). Here, on white
/// noise (N = 120, f ≤ 5 c/d), at the powers that 300 bootstrap trials exceed 10 % and 5 %
/// of the time, the Baluev value lies within [0.7, 1.6] × the bootstrap value.
#[test]
fn baluev_agrees_with_bootstrap_on_white_noise() {
    let s = white_noise(3, 120);
    let plan = plan_grid(s.baseline_d(), &GridRequest::up_to(5.0)).unwrap();
    let method = GeneralisedLombScargle { algorithm: Algorithm::Exact };
    let boot = bootstrap_fap(&s, &plan.grid, &method, 1.0, &BootstrapOptions { trials: 300, seed: 17 }).unwrap();
    let mut maxima = boot.trial_max_power.clone();
    maxima.sort_by(|a, b| b.total_cmp(a));
    for q in [0.10, 0.05] {
        let z = maxima[(q * maxima.len() as f64) as usize];
        let fap = baluev_fap(z, &s, plan.grid.max_freq_per_day()).unwrap();
        eprintln!("bootstrap {q} -> Baluev {fap:.4} at z={z:.4}");
        assert!(fap >= 0.7 * q && fap <= 1.6 * q, "q={q}: Baluev {fap} at z={z}");
    }
}

/// Seeded bootstrap: the same numbers on 1 and 2 threads.
#[test]
fn bootstrap_is_independent_of_threads() {
    let s = white_noise(4, 80);
    let plan = plan_grid(s.baseline_d(), &GridRequest::up_to(3.0)).unwrap();
    let method = GeneralisedLombScargle::default();
    let opts = BootstrapOptions { trials: 40, seed: 99 };
    let run = |threads: usize| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(|| bootstrap_fap(&s, &plan.grid, &method, 0.1, &opts).unwrap())
    };
    assert_eq!(run(1), run(2));
}

/// FAP decreases with power and stays in [0, 1]; bad arguments are refused.
#[test]
fn baluev_is_monotonic_and_checks_input() {
    let s = white_noise(5, 60);
    let mut last = 1.0;
    for k in 1..20 {
        let f = baluev_fap(k as f64 * 0.04, &s, 5.0).unwrap();
        assert!((0.0..=1.0).contains(&f) && f <= last);
        last = f;
    }
    assert!(baluev_fap(1.5, &s, 5.0).is_err());
    assert!(baluev_fap(0.5, &s, -1.0).is_err());
}

/// The invented series of tests/reference/generate_fap_references.py.
fn reference_series(n: usize) -> Series {
    let t: Vec<f64> = (0..n).map(|i| 0.05 * i as f64 + 0.02 * (1.7 * i as f64).sin()).collect();
    let y: Vec<f64> = t.iter().map(|x| x.sin()).collect();
    let dy = vec![1.0; n];
    Series::from_arrays(&t, &y, Some(&dy)).unwrap()
}

/// astropy 8.0.2 (float64) where it does not underflow, relative 1e-9; the 50-digit mpmath
/// log₁₀ everywhere, 1e-9 in log₁₀ — down to 1e-993, far below the 1e-16 at which a
/// probability computed as 1 − CDF loses all its digits.
#[test]
fn log_space_false_alarm_matches_astropy_and_a_50_digit_evaluation() {
    let rows = reference_tables::read("baluev_fap.csv");
    assert_eq!(rows.len(), 17);
    let mut smallest_log10 = 0.0_f64;
    for r in &rows {
        let s = reference_series(reference_tables::f(r, "n") as usize);
        let (z, fmax) = (reference_tables::f(r, "power"), reference_tables::f(r, "max_freq_per_day"));
        let log10 = baluev_log10_fap(z, &s, fmax).unwrap();
        let want_log10 = reference_tables::f(r, "log10_fap_mpmath");
        assert!((log10 - want_log10).abs() < 1e-9, "z = {z}: log10 {log10} vs mpmath {want_log10}");
        let astropy = reference_tables::f(r, "fap_astropy");
        let fap = baluev_fap(z, &s, fmax).unwrap();
        if astropy >= 1e-300 {
            assert!((fap / astropy - 1.0).abs() < 1e-9, "z = {z}: {fap} vs astropy {astropy}");
        } else {
            assert_eq!(fap, 0.0, "below the f64 range the plain value underflows, as astropy's");
        }
        smallest_log10 = smallest_log10.min(log10);
    }
    assert!(smallest_log10 < -900.0);
}

/// The text form: plain digits while an f64 holds the value, a power of ten below.
#[test]
fn log_probabilities_print_without_a_floor() {
    assert_eq!(format_log10_probability(-0.5), "0.316");
    assert_eq!(format_log10_probability(-26.823_908_740_944_32), "1.50e-27");
    assert_eq!(format_log10_probability(-412.34), "10^-412.3");
    assert_eq!(format_log10_probability(f64::NEG_INFINITY), "0");
    assert_eq!(format_log10_probability(f64::NAN), "n/a");
    // A perfect fit (power 1) has probability 0; power 0 has probability 1.
    let s = reference_series(50);
    assert_eq!(baluev_log10_fap(1.0, &s, 5.0).unwrap(), f64::NEG_INFINITY);
    assert_eq!(baluev_log10_fap(0.0, &s, 5.0).unwrap(), 0.0);
}

/// A whole search (`survey::search::search_series`, exact GLS, the grid planned for the
/// baseline) on an invented light curve whose top peak has a false-alarm probability near
/// 1e-27, against astropy 8.0.2 on the same numbers and grid
/// (tests/reference/search_fap_reference.csv, `LombScargle(...).false_alarm_probability(
/// method="baluev")`; generator and README beside it): the same grid and peak, the power to
/// 1e-9, and the report's log₁₀ false-alarm probability to 1e-5 in log₁₀ (the probability
/// to 2.3e-5 relative; a power 1e-9 off moves it by ~3e-7). The report's plain probability
/// is the same number, not floored, and its text keeps the digits.
#[test]
fn search_report_false_alarm_near_1e_minus_27_matches_astropy_in_log_space() {
    use skyclock::survey::report::{format_false_alarm, period_search_report};
    use skyclock::survey::search::{SearchPlan, search_series};
    let rows = reference_tables::read("search_fap_series.csv");
    let col = |name: &str| rows.iter().map(|r| reference_tables::f(r, name)).collect::<Vec<f64>>();
    let s = Series::from_arrays(&col("time_d"), &col("value"), Some(&col("error"))).unwrap();
    let reference = &reference_tables::read("search_fap_reference.csv")[0];
    let mut plan = SearchPlan::sinusoid_up_to(10.0);
    plan.algorithm = Algorithm::Exact;
    let out = search_series(&s, &plan).unwrap();
    let grid = out.spectrum.grid;
    assert!((grid.start_per_day / reference_tables::f(reference, "grid_start_per_day") - 1.0).abs() < 1e-14);
    assert!((grid.step_per_day / reference_tables::f(reference, "grid_step_per_day") - 1.0).abs() < 1e-14);
    assert_eq!(grid.len, reference_tables::f(reference, "grid_count") as usize);
    let top = &out.peaks[0];
    assert_eq!(top.peak.grid_index, reference_tables::f(reference, "peak_index") as usize);
    assert!((top.peak.power - reference_tables::f(reference, "power_astropy")).abs() < 1e-9);
    let want_log10 = reference_tables::f(reference, "log10_fap_astropy");
    assert!(want_log10 < -26.0 && want_log10 > -28.0, "the reference is the ~1e-27 case");
    let report = period_search_report(&out, "sinusoid", "times as given", "2460000.0");
    let peak = &report.result.peaks[0];
    assert!(
        (peak.log10_false_alarm_probability - want_log10).abs() < 1e-5,
        "log10 FAP {} vs astropy {want_log10}",
        peak.log10_false_alarm_probability
    );
    let astropy = reference_tables::f(reference, "fap_astropy");
    assert!(
        (peak.false_alarm_probability / astropy - 1.0).abs() < 3e-5,
        "{} vs {astropy}",
        peak.false_alarm_probability
    );
    let text = format_false_alarm(top.fap, top.log10_fap);
    assert!(text.starts_with("1.5") && text.ends_with("e-27"), "{text}");
    // in the JSON the field survives a round trip
    let json = serde_json::to_string(&report).unwrap();
    assert!(json.contains("\"log10_false_alarm_probability\":-26.79"), "{json}");
}

/// Below the smallest f64 the report's plain probability is 0 and its log₁₀ carries the
/// value (same 50-digit mpmath reference as above, N = 2000, power 0.9: log₁₀ = −993.2).
#[test]
fn search_report_keeps_the_log_where_the_probability_underflows() {
    use skyclock::survey::report::format_false_alarm;
    let rows = reference_tables::read("baluev_fap.csv");
    let r = rows.iter().find(|r| reference_tables::f(r, "log10_fap_mpmath") < -900.0).unwrap();
    let s = reference_series(reference_tables::f(r, "n") as usize);
    let log10 =
        baluev_log10_fap(reference_tables::f(r, "power"), &s, reference_tables::f(r, "max_freq_per_day")).unwrap();
    assert_eq!(10f64.powf(log10), 0.0);
    assert_eq!(format_false_alarm(0.0, log10), "10^-993.2");
}
