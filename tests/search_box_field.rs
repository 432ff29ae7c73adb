//! Synthetic recovery of invented transits and eclipses by the box search of
//! `search_series` (fixed seeds, invented data only): a space-like field, one long
//! short-cadence light curve, eclipsing binaries whose box peak falls at half the period,
//! and the honesty of the period σ (pulls against the injected truth). The truth is the
//! injected signal; the criteria are stated beside each check.

use skyclock::fit::SeededRng;
use skyclock::periodogram::bls::BoxDurations;
use skyclock::periodogram::{Algorithm, GridRequest, Series};
use skyclock::survey::search::{SearchMethod, SearchPlan, search_series};

/// The default box search (durations 0.5–15 % of the trial period) on a grid with edge
/// drift ≤ shortest duration / 3 over the baseline.
fn box_plan(max_freq_per_day: f64) -> SearchPlan {
    SearchPlan {
        method: SearchMethod::Box { durations: BoxDurations::default_duty_cycles(), values_are_magnitudes: false },
        algorithm: Algorithm::Auto,
        grid: GridRequest { oversampling: 3.0, ..GridRequest::up_to(max_freq_per_day) },
        peaks: 1,
        refine_peaks: true,
        window_sidelobes: 0,
        bootstrap: None,
    }
}

fn frac(x: f64) -> f64 {
    x - x.floor()
}

/// Box-shaped dips of `depth` and `duration_d` every `period_d` from `t0` (flux, level 1).
fn transit_flux(
    t: &[f64],
    period_d: f64,
    t0: f64,
    duration_d: f64,
    depth: f64,
    noise: f64,
    rng: &mut SeededRng,
) -> Vec<f64> {
    t.iter()
        .map(|&x| {
            let ph = frac((x - t0) / period_d);
            let inside = ph.min(1.0 - ph) * period_d < 0.5 * duration_d;
            1.0 - if inside { depth } else { 0.0 } + noise * rng.normal()
        })
        .collect()
}

/// A space-like field: 27 days at 10-minute cadence (3888 points), 40 transits with
/// periods 1–9 d (log-uniform), durations 0.04–0.16 d, depths 0.2–1.5 %, noise 0.1 % per
/// point. Targets (issue): ≥ 90 % at the true period (relative 1e-3). Measured depth within
/// 3σ of the truth and odd/even depths within 3σ of each other in ≥ 90 % of the found
/// transits; the period within 3σ (σ from the Δχ² profile) in ≥ 85 %.
#[test]
fn space_field_transits_are_found_at_their_period() {
    let t: Vec<f64> = (0..3888).map(|k| k as f64 / 144.0).collect();
    let (mut found, mut depth_ok, mut odd_even_ok, mut pull_ok) = (0, 0, 0, 0);
    let mut pulls = Vec::new();
    const N: usize = 40;
    for trial in 0..N {
        let mut rng = SeededRng::for_stream(1401, trial as u64);
        let p_true = (9f64.ln() * rng.uniform()).exp();
        let duration = 0.04 + 0.12 * rng.uniform();
        let depth = 0.002 + 0.013 * rng.uniform();
        let t0 = p_true * rng.uniform();
        let y = transit_flux(&t, p_true, t0, duration, depth, 0.001, &mut rng);
        let e = vec![0.001; t.len()];
        let s = Series::from_arrays(&t, &y, Some(&e)).unwrap();
        let out = search_series(&s, &box_plan(1.1)).unwrap();
        let det = out.box_detection.expect("a box detection");
        if (det.period_d / p_true - 1.0).abs() < 1e-3 {
            found += 1;
            depth_ok += usize::from((det.depth - depth).abs() <= 3.0 * det.depth_err);
            odd_even_ok += usize::from(det.measurement.odd_even_sigma.is_nan() || det.measurement.odd_even_sigma < 3.0);
            let pull = (det.period_d - p_true) / det.period_err_d;
            pulls.push(pull);
            pull_ok += usize::from(pull.abs() <= 3.0);
        } else {
            eprintln!(
                "missed: P {p_true:.4} d, duration {duration:.3} d, depth {depth:.4}: found {:.5} d",
                det.period_d
            );
        }
    }
    eprintln!(
        "space field: {found}/{N} at the true period; depth within 3σ {depth_ok}, odd/even < 3σ {odd_even_ok}, period within 3σ {pull_ok}; pulls {pulls:.2?}"
    );
    assert!(found >= 36, "transits at the true period: {found}/{N}");
    assert!(depth_ok * 10 >= 9 * found, "depth within 3σ in {depth_ok}/{found}");
    assert!(odd_even_ok * 10 >= 9 * found, "odd/even depths agree in {odd_even_ok}/{found}");
    assert!(pull_ok * 100 >= 85 * found, "period within 3σ in {pull_ok}/{found}");
}

/// One 27-day light curve at 2-minute cadence (19 440 points), a 0.5 % transit of 0.12 d
/// every 3.71 d, noise 0.2 %: the default box grid gives the period to 1e-4 relative and
/// within 3σ; every reported quantity is finite.
#[test]
fn long_short_cadence_curve_gives_the_period_to_1e4() {
    let t: Vec<f64> = (0..19_440).map(|k| k as f64 / 720.0).collect();
    let mut rng = SeededRng::new(1402);
    let (p_true, t0) = (3.71, 1.234);
    let y = transit_flux(&t, p_true, t0, 0.12, 0.005, 0.002, &mut rng);
    let s = Series::from_arrays(&t, &y, None).unwrap();
    let out = search_series(&s, &box_plan(1.0)).unwrap();
    let det = out.box_detection.unwrap();
    eprintln!("{det:?}");
    assert!((det.period_d / p_true - 1.0).abs() < 1e-4, "period {}", det.period_d);
    assert!((det.period_d - p_true).abs() < 3.0 * det.period_err_d, "σ {}", det.period_err_d);
    assert!(det.period_err_d > 0.0 && det.period_err_d < 1e-3 * p_true);
    assert!((det.depth - 0.005).abs() < 3.0 * det.depth_err);
    assert!((det.duration_d - 0.12).abs() < 0.02, "duration {}", det.duration_d);
    let de = (frac((det.epoch_d - t0) / p_true + 0.5) - 0.5) * p_true;
    assert!(de.abs() < 0.01, "mid-event off by {de} d");
    assert!(det.snr > 10.0 && det.sde > 5.0);
    // a transit has no secondary: the depth at phase 0.5 is zero within 3σ
    let m = det.measurement;
    assert!(m.secondary_depth.abs() < 3.0 * m.secondary_depth_err, "{m:?}");
    assert!(m.odd_even_sigma < 3.0);
    assert_eq!(out.peaks[0].peak.period_d, det.period_d);
    assert!(out.peaks[0].peak.period_err_d.is_finite());
}

/// Detached eclipsing binaries (flux) with unequal box-shaped minima: primary 5–30 %,
/// secondary 35–85 % of it (so the box peak usually falls at P/2, where both fold
/// together), eclipse duration 6–10 % of the period, periods 0.8–6 d, 27 days at 30-minute
/// cadence, noise 0.5 %. Target: ≥ 90 % at the true period (relative 1e-3) after the odd/even
/// test; every doubling says so in the note.
#[test]
fn eclipsing_binaries_are_reported_at_their_true_period() {
    let t: Vec<f64> = (0..1296).map(|k| k as f64 / 48.0).collect();
    const N: usize = 30;
    let (mut found, mut doubled) = (0, 0);
    for trial in 0..N {
        let mut rng = SeededRng::for_stream(1403, trial as u64);
        let p_true = 0.8 + 5.2 * rng.uniform();
        let d1 = 0.05 + 0.25 * rng.uniform();
        let d2 = d1 * (0.35 + 0.5 * rng.uniform());
        let q = 0.06 + 0.04 * rng.uniform();
        let t0 = p_true * rng.uniform();
        let y: Vec<f64> = t
            .iter()
            .map(|&x| {
                let ph = frac((x - t0) / p_true);
                let dip = if ph.min(1.0 - ph) < 0.5 * q {
                    d1
                } else if (ph - 0.5).abs() < 0.5 * q {
                    d2
                } else {
                    0.0
                };
                1.0 - dip + 0.005 * rng.normal()
            })
            .collect();
        let s = Series::from_arrays(&t, &y, None).unwrap();
        let out = search_series(&s, &box_plan(2.6)).unwrap();
        let det = out.box_detection.unwrap();
        let note = out.period_note.clone().unwrap_or_default();
        if note.starts_with("period doubled") {
            doubled += 1;
        }
        if (det.period_d / p_true - 1.0).abs() < 1e-3 {
            found += 1;
        } else {
            eprintln!("EB P {p_true:.4} d (d2/d1 {:.2}): reported {:.5} d — {note}", d2 / d1, det.period_d);
        }
    }
    eprintln!("eclipsing binaries: {found}/{N} at the true period, {doubled} doubled from the box peak");
    assert!(found * 10 >= 9 * N, "eclipsing binaries at the true period: {found}/{N}");
    assert!(doubled > 0, "the odd/even test never doubled a period");
}
