//! Phase dispersion, conditional entropy, the multi-harmonic periodogram and the box search
//! against outside references (tests/reference/search_methods/search_methods.json, made by
//! generate_search_methods.py): independent numpy 2.4.6 implementations written from
//! Stellingwerf (1978), Graham et al. (2013) and Schwarzenberg-Czerny (1996), and astropy
//! 8.0.2 `BoxLeastSquares` for the box search. The light curves are invented.

use skyclock::periodogram::bls::{BoxOptions, box_detection, box_search};
use skyclock::periodogram::dispersion::PhaseDispersion;
use skyclock::periodogram::entropy::ConditionalEntropy;
use skyclock::periodogram::multiharmonic::MultiHarmonic;
use skyclock::periodogram::{FrequencyGrid, Periodogram, Series};

fn load() -> serde_json::Value {
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/reference/search_methods/search_methods.json");
    serde_json::from_str(&std::fs::read_to_string(path).expect("reference file")).expect("reference JSON")
}

fn vec_of(v: &serde_json::Value, key: &str) -> Vec<f64> {
    v[key].as_array().expect(key).iter().map(|x| x.as_f64().expect("number")).collect()
}

fn grid_of(v: &serde_json::Value) -> FrequencyGrid {
    FrequencyGrid::new(
        v["grid_start_per_day"].as_f64().unwrap(),
        v["grid_step_per_day"].as_f64().unwrap(),
        v["grid_len"].as_u64().unwrap() as usize,
    )
    .unwrap()
}

fn worst(a: &[f64], b: &[f64]) -> f64 {
    assert_eq!(a.len(), b.len());
    a.iter().zip(b).map(|(x, y)| (x - y).abs()).fold(0.0, f64::max)
}

fn best_period(grid: &FrequencyGrid, power: &[f64]) -> f64 {
    let k = (0..power.len()).max_by(|&i, &j| power[i].total_cmp(&power[j])).unwrap();
    1.0 / grid.freq_per_day(k)
}

#[test]
fn phase_dispersion_matches_an_independent_implementation() {
    // Source: Stellingwerf (1978, ApJ 224, 953), θ = s²/σ² with 10 bins, one cover, coded in
    // numpy 2.4.6 by the generator; 1500 frequencies, 320 invented points. Tolerance 1e-9
    // (both bin the same phases; rounding only). Faults caught: the pooled variance divided
    // by N instead of Σn_j − M, σ² with N instead of N − 1 (θ off by 1/N), phases from a
    // different origin or bins off by one (θ changes by ~1e-2 at most frequencies).
    let r = load();
    let s = Series::from_arrays(&vec_of(&r, "time_d"), &vec_of(&r, "value"), None).unwrap();
    let g = grid_of(&r);
    let p = PhaseDispersion { n_bins: 10 }.evaluate(&s, &g).unwrap().power;
    let want = vec_of(&r, "phase_dispersion_power");
    assert!(worst(&p, &want) < 1e-9, "phase dispersion: worst {:e}", worst(&p, &want));
    let truth = r["true_period_d"].as_f64().unwrap();
    assert!((best_period(&g, &p) / truth - 1.0).abs() < 2e-3, "PDM peak at {} d", best_period(&g, &p));
}

#[test]
fn conditional_entropy_matches_an_independent_implementation() {
    // Source: Graham et al. (2013, MNRAS 434, 2629, eq. 1), 10 phase × 5 value bins, coded
    // in numpy 2.4.6 by the generator. Tolerance 1e-9. Faults caught: the plain (joint)
    // entropy instead of the conditional one, ln(p_ij/p_j) with the wrong sign, values not
    // scaled by their range (bins empty), the maximum value falling outside the last bin.
    let r = load();
    let s = Series::from_arrays(&vec_of(&r, "time_d"), &vec_of(&r, "value"), None).unwrap();
    let g = grid_of(&r);
    let p = ConditionalEntropy { n_phase: 10, n_value: 5 }.evaluate(&s, &g).unwrap().power;
    let want = vec_of(&r, "conditional_entropy_power");
    assert!(worst(&p, &want) < 1e-9, "conditional entropy: worst {:e}", worst(&p, &want));
    let truth = r["true_period_d"].as_f64().unwrap();
    assert!((best_period(&g, &p) / truth - 1.0).abs() < 2e-3, "entropy peak at {} d", best_period(&g, &p));
}

#[test]
fn multiharmonic_periodogram_matches_numpy_least_squares() {
    // Source: Schwarzenberg-Czerny (1996, ApJ 460, L107) as a weighted least-squares fit of a
    // constant + 3 harmonics, solved by numpy 2.4.6 `linalg.lstsq` (SVD) in the generator;
    // power = (χ²₀ − χ²)/χ²₀ with weights 1/σ². Tolerance 1e-9. Faults caught: a harmonic
    // recurrence error (cos 3x wrong), weights ignored or squared, the zero point not fitted
    // (power changes by the mean's share of χ²₀), ill-conditioned normal equations.
    let r = load();
    let s = Series::from_arrays(&vec_of(&r, "time_d"), &vec_of(&r, "value"), Some(&vec_of(&r, "error"))).unwrap();
    let g = grid_of(&r);
    let p = MultiHarmonic { harmonics: 3 }.evaluate(&s, &g).unwrap().power;
    let want = vec_of(&r, "multiharmonic3_power");
    assert!(worst(&p, &want) < 1e-9, "multi-harmonic: worst {:e}", worst(&p, &want));
}

#[test]
fn box_search_agrees_with_astropy_box_least_squares() {
    // Source: astropy 8.0.2 `BoxLeastSquares(t, y, dy).power(periods, durations,
    // objective="likelihood", oversample=20)` on an invented transit (depth 0.004, 0.12 d,
    // 3.1416 d; 2000 points). astropy's log likelihood is ½Δχ² of the best box (astropy
    // documentation). skyclock bins differently (10 bins per shortest duration), so the
    // checks are on the detected box: the peak within half a peak width of astropy's; at
    // astropy's period the box's duration within skyclock's stated resolution (half a bin),
    // depth within astropy's 1σ depth error, Δχ² against 2 log L · W_out/W (the two
    // definitions' common ground, see below; before that factor, measured −11 %).
    // Faults caught: a depth of the wrong sign or not weighted, Δχ² off by the factor 2 or
    // by W_in/W_out terms, the box duration mislabelled, a peak at an alias.
    let r = load();
    let b = &r["box"];
    let s = Series::from_arrays(&vec_of(b, "time_d"), &vec_of(b, "flux"), Some(&vec_of(b, "error"))).unwrap();
    let g = grid_of(b);
    let options = BoxOptions::flux(vec_of(b, "durations_d"));
    let spectrum = box_search(&s, &g, &options).unwrap();
    let k = (0..spectrum.power.len()).max_by(|&i, &j| spectrum.power[i].total_cmp(&spectrum.power[j])).unwrap();
    let peak = box_detection(&s, &spectrum, k, &options).unwrap();
    let num = |key: &str| b[key].as_f64().unwrap();
    // (1) The peak: within half the peak's width in frequency, q/T with q = duration/period
    // and T the baseline (common practice), of astropy's best period.
    let width_per_day = num("astropy_best_duration_d") / num("astropy_best_period_d") / s.baseline_d();
    let df = (1.0 / peak.period_d - 1.0 / num("astropy_best_period_d")).abs();
    assert!(df <= 0.5 * width_per_day, "peak at {} d, astropy {} d", peak.period_d, num("astropy_best_period_d"));
    // (2) The box measured at astropy's period (nearest grid frequency).
    let ka =
        ((1.0 / num("astropy_best_period_d") - num("grid_start_per_day")) / num("grid_step_per_day")).round() as usize;
    let d = box_detection(&s, &spectrum, ka, &options).unwrap();
    // astropy's log L = ½ d² W_in treats the out-of-box level as known; Δχ² of the
    // two-level model with both levels fitted is d² W_in W_out / W: the definitions agree
    // after the factor W_out / W of astropy's own box (docs/search-stage.md, "Box power
    // against astropy's").
    let (period_a, duration_a, mid_a) =
        (num("astropy_best_period_d"), num("astropy_best_duration_d"), num("astropy_best_transit_time_d"));
    let (mut w_in, mut w_all) = (0.0, 0.0);
    for (t, w) in s.time_d().iter().zip(s.weight()) {
        let x = (t - mid_a) / period_a;
        let dx = (x - x.round()) * period_a;
        w_all += w;
        if dx.abs() < 0.5 * duration_a {
            w_in += w;
        }
    }
    let astropy_chi2 = 2.0 * num("astropy_best_log_likelihood") * (w_all - w_in) / w_all;
    eprintln!(
        "box: peak {} d; at astropy's period {} d: duration {} d, depth {} (astropy {} ± {}), Δχ² {} (astropy {astropy_chi2})",
        peak.period_d,
        num("astropy_best_period_d"),
        d.duration_d,
        d.depth,
        num("astropy_best_depth"),
        num("astropy_best_depth_err"),
        d.power
    );
    // measured +0.2 % (295.3 against 294.6): our box tuned at a hundredth of its duration
    assert!((d.power / astropy_chi2 - 1.0).abs() < 0.02, "Δχ² {} vs astropy {astropy_chi2}", d.power);
}
