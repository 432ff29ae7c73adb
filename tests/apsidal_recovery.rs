//! Recovery and interval calibration of the apsidal-motion fit on invented eccentric
//! eclipsing binaries: primary and secondary minima over five decades, seasonal sampling,
//! early timings with 0.002–0.004 d errors and later ones with 0.0003–0.0008 d. The fit
//! starts from a reference period that is off by many σ and never sees the truth: its
//! starting point comes from its own grid over the apsidal rate. A 1σ interval should hold
//! the truth in 68.3 % of trials (Gaussian errors; common practice); we accept 68 ± 7 % over
//! ≥ 200 seeded trials. All data are synthetic.

use std::f64::consts::TAU;

use rayon::prelude::*;
use skyclock::fit::SeededRng;
use skyclock::oc::apsidal::{ApsidalOptions, analyse_apsidal, bootstrap_apsidal, fit_apsidal};
use skyclock::oc::eclipse_times::{MinimumTimeMethod, minimum_offset_rad};
use skyclock::oc::models::light_time_d;
use skyclock::oc::{BootstrapOptions, CycleOptions, EventKind, OcError, ReferenceEphemeris, Timing, assign_cycles};
use skyclock::time::{Instant, TimeScale};

const PS_D: f64 = 2.731_245; // sidereal period
const E: f64 = 0.12;
const OMEGA0: f64 = 1.1; // rad at cycle 0
const U_YR: f64 = 38.0; // apsidal period
const INCL_DEG: f64 = 86.5;
const LTTE: [f64; 5] = [0.006, 7_300.0, 0.447_2 * 0.540_3, 0.447_2 * 0.841_5, 0.4]; // e₃ = 0.2

fn rate() -> f64 {
    TAU * PS_D / (U_YR * 365.25)
}

fn epoch() -> Instant {
    Instant::from_mjd_two_part(TimeScale::Tdb, 41_000.0, 0.3)
}

fn true_time_d(cycle: f64, kind: EventKind) -> f64 {
    let pa = PS_D / (1.0 - rate() / TAU);
    let w = OMEGA0 + rate() * cycle;
    let phi = minimum_offset_rad(kind, E, w, INCL_DEG.to_radians(), MinimumTimeMethod::Exact).unwrap();
    cycle * PS_D + pa / TAU * phi
}

/// One invented set: 2–5 minima per season for 50 seasons, ~40 % of them secondaries.
fn simulate(seed: u64, with_ltte: bool) -> Vec<Timing> {
    let mut rng = SeededRng::for_stream(seed, 11);
    let mut out = Vec::new();
    let mut used = std::collections::HashSet::new();
    for year in 0..50 {
        for _ in 0..2 + rng.below(4) {
            let day = year as f64 * 365.25 + 150.0 * rng.uniform();
            let kind = if rng.uniform() < 0.4 { EventKind::Secondary } else { EventKind::Primary };
            let cycle = (day / PS_D).round() + kind.cycle_offset();
            if !used.insert((cycle * 2.0) as i64) {
                continue;
            }
            let sigma = if year < 20 { 0.002 + 0.002 * rng.uniform() } else { 0.0003 + 0.0005 * rng.uniform() };
            let mut t = true_time_d(cycle, kind) + sigma * rng.normal();
            if with_ltte {
                t += light_time_d(&LTTE, cycle * PS_D);
            }
            let row = out.len() + 1;
            out.push(Timing { bjd_tdb: epoch().add_seconds(t * 86_400.0), error_d: sigma, kind, source: None, row });
        }
    }
    out
}

/// The reference period is 4e-6 d (hundreds of σ) off the truth.
fn reference() -> ReferenceEphemeris {
    ReferenceEphemeris { epoch: epoch(), period_d: PS_D + 4e-6, period_sigma_d: 1e-6 }
}

fn options() -> ApsidalOptions {
    ApsidalOptions { inclination_deg: INCL_DEG, ..Default::default() }
}

fn within(est: f64, sigma: f64, truth: f64) -> bool {
    sigma.is_finite() && (est - truth).abs() <= sigma
}

#[test]
fn apsidal_period_eccentricity_and_omega_intervals_are_calibrated() {
    let trials = 240;
    let hits: Vec<[bool; 3]> = (0..trials)
        .into_par_iter()
        .map(|k| {
            let s = assign_cycles(&simulate(500 + k as u64, false), &reference(), &CycleOptions::default()).unwrap();
            let f = fit_apsidal(&s, &options()).unwrap();
            let (u, su) = f.derived_value("apsidal_period_yr").unwrap();
            let (e, se) = f.derived_value("eccentricity").unwrap();
            let (w, sw) = f.derived_value("periastron_argument_at_epoch_deg").unwrap();
            let dw = (w - OMEGA0.to_degrees() + 180.0).rem_euclid(360.0) - 180.0;
            [within(u, su, U_YR), within(e, se, E), dw.abs() <= sw]
        })
        .collect();
    let frac = |j: usize| hits.iter().filter(|h| h[j]).count() as f64 / trials as f64;
    eprintln!(
        "inside 1σ: apsidal period {:.1} %, e {:.1} %, ω₀ {:.1} %",
        100.0 * frac(0),
        100.0 * frac(1),
        100.0 * frac(2)
    );
    for (j, name) in ["apsidal period", "eccentricity", "ω₀"].iter().enumerate() {
        assert!((0.61..=0.75).contains(&frac(j)), "{name} coverage {}", frac(j));
    }
}

#[test]
fn series_method_recovers_the_same_orbit_as_the_exact_one() {
    let s = assign_cycles(&simulate(3, false), &reference(), &CycleOptions::default()).unwrap();
    let exact = fit_apsidal(&s, &options()).unwrap();
    let series = fit_apsidal(&s, &ApsidalOptions { method: MinimumTimeMethod::Series, ..options() }).unwrap();
    for name in ["apsidal_period_yr", "eccentricity", "periastron_argument_at_epoch_deg"] {
        let (a, sa) = exact.derived_value(name).unwrap();
        let (b, _) = series.derived_value(name).unwrap();
        // At e = 0.12 the series differs from the exact times by ~5e-7 rad ≈ 2e-7 d, far
        // below the timing errors: the estimates agree to a small fraction of 1σ.
        assert!((a - b).abs() < 0.05 * sa, "{name}: {a} vs {b} (σ {sa})");
    }
}

#[test]
fn apsidal_motion_with_a_light_time_companion_is_recovered() {
    let opts = ApsidalOptions { light_time: true, companion_period_range_d: Some((2_000.0, 15_000.0)), ..options() };
    let mut ok = 0;
    for k in 0..4 {
        let s = assign_cycles(&simulate(900 + k, true), &reference(), &CycleOptions::default()).unwrap();
        let f = fit_apsidal(&s, &opts).unwrap();
        let (u, su) = f.derived_value("apsidal_period_yr").unwrap();
        let (p3, sp3) = f.derived_value("companion_period_d").unwrap();
        let reduced = f.chi2 / f.dof() as f64;
        eprintln!("set {k}: U = {u:.2} ± {su:.2} yr, P₃ = {p3:.0} ± {sp3:.0} d, χ²/dof = {reduced:.2}");
        assert!(reduced < 1.5, "set {k}: χ²/dof {reduced}");
        if (u - U_YR).abs() < 3.0 * su && (p3 - LTTE[1]).abs() < 3.0 * sp3 {
            ok += 1;
        }
    }
    assert!(ok >= 3, "{ok} of 4 sets within 3σ");
}

#[test]
fn bootstrap_errors_agree_with_the_covariance() {
    let s = assign_cycles(&simulate(77, false), &reference(), &CycleOptions::default()).unwrap();
    let f = fit_apsidal(&s, &options()).unwrap();
    let b = bootstrap_apsidal(&s, &f, &BootstrapOptions { resamples: 300, seed: 5 }, &|_| {}).unwrap();
    let again = bootstrap_apsidal(&s, &f, &BootstrapOptions { resamples: 300, seed: 5 }, &|_| {}).unwrap();
    assert_eq!(b, again, "the same seed gives the same bootstrap");
    assert_eq!(b.failed, 0);
    for j in [2, 3, 4] {
        let ratio = b.parameter_sigma[j] / f.sigma(j);
        assert!((0.7..1.4).contains(&ratio), "parameter {j}: bootstrap/covariance = {ratio}");
    }
}

#[test]
fn the_analysis_prefers_apsidal_motion_and_tabulates_every_minimum() {
    let timings = simulate(21, false);
    let a = analyse_apsidal(&timings, &reference(), &options(), &|_| {}).unwrap();
    assert!(a.delta_bic_vs_linear < -100.0, "ΔBIC {}", a.delta_bic_vs_linear);
    assert!(a.reduced_chi2 < 1.5);
    let table = a.table().unwrap();
    assert_eq!(table.height(), timings.len());
    let json = serde_json::to_string(&a).unwrap();
    let back: skyclock::oc::apsidal::ApsidalAnalysis = serde_json::from_str(&json).unwrap();
    assert_eq!(back.derived.len(), a.derived.len());
    for (x, y) in back.derived.iter().zip(&a.derived) {
        assert_eq!(x.name, y.name);
        assert!((x.value - y.value).abs() <= 1e-12 * y.value.abs(), "{}", x.name);
    }
}

#[test]
fn maxima_and_missing_secondaries_are_refused_with_the_row() {
    let mut timings = simulate(1, false);
    timings[4].kind = EventKind::Maximum;
    let err = analyse_apsidal(&timings, &reference(), &options(), &|_| {}).unwrap_err();
    assert!(matches!(&err, OcError::Invalid(m) if m.contains("row 5")), "{err}");
    let primaries: Vec<Timing> = simulate(1, false).into_iter().filter(|t| t.kind == EventKind::Primary).collect();
    let err = analyse_apsidal(&primaries, &reference(), &options(), &|_| {}).unwrap_err();
    assert!(err.to_string().contains("secondary"), "{err}");
    let bad = ApsidalOptions { inclination_deg: f64::NAN, ..options() };
    assert!(analyse_apsidal(&simulate(1, false), &reference(), &bad, &|_| {}).is_err());
}
