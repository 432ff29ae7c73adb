//! Transit timing variations end to end on seeded synthetic sets (invented planet): light
//! curves → `time_transits` → cycles → `fit_sinusoidal_ttv`. The true TTV amplitude must
//! lie inside the fitted 1σ in 68 ± 7 % of ≥ 200 trials (issue 16); without a TTV the
//! Baluev (2008) false-alarm probability of the O–C periodogram must not claim detections
//! more often than it promises.

use skyclock::fit::random::SeededRng;
use skyclock::oc::{CycleOptions, EventKind, ReferenceEphemeris, Timing, assign_cycles};
use skyclock::time::{Instant, TimeScale};
use skyclock::transit::{
    QuadraticLimbDarkening, TransitCurve, TransitShape, TransitTimingOptions, TransitTimingRequest, TtvSearchOptions,
    fit_sinusoidal_ttv, oc_periodogram, time_transits,
};
use std::f64::consts::TAU;

const PERIOD_D: f64 = 4.05;
const AMPLITUDE_D: f64 = 120.0 / 86_400.0;
const TTV_PERIOD_CYCLES: f64 = 9.3;

fn shape() -> TransitShape {
    TransitShape {
        radius_ratio: 0.09,
        scaled_semi_major_axis: 11.0,
        impact_parameter: 0.25,
        limb_darkening: QuadraticLimbDarkening { u1: 0.45, u2: 0.2 },
        eccentricity: 0.0,
        periastron_argument_rad: 0.0,
    }
}

#[test]
fn ttv_amplitude_falls_inside_one_sigma_in_68_percent_of_trials() {
    let trials = 200;
    let reference = Instant::from_jd_two_part(TimeScale::Tdb, 2_460_500.5, 0.1);
    let (mut inside, mut inside_period, mut weak) = (0, 0, 0);
    let mut snr = 0.0;
    for trial in 0..trials {
        let mut rng = SeededRng::new(90_000 + trial);
        let phase = TAU * rng.uniform();
        let (mut t, mut f, mut err) = (vec![], vec![], vec![]);
        for e in 0..24 {
            let mid = e as f64 * PERIOD_D + AMPLITUDE_D * (TAU * e as f64 / TTV_PERIOD_CYCLES + phase).sin();
            for i in 0..110 {
                let time = e as f64 * PERIOD_D - 0.15 + i as f64 * 2.5 / 1440.0;
                t.push(time);
                f.push(shape().flux(PERIOD_D, time - mid, &[0.0]) + 1.0e-3 * rng.normal());
                err.push(1.0e-3);
            }
        }
        let rows: Vec<usize> = (1..=t.len()).collect();
        let ephemeris = ReferenceEphemeris { epoch: reference, period_d: PERIOD_D, period_sigma_d: 0.0 };
        let report = time_transits(&TransitTimingRequest {
            curve: TransitCurve { reference, time_d: &t, flux: &f, error: Some(&err), input_rows: &rows },
            ephemeris,
            start: shape(),
            options: TransitTimingOptions::default(),
        })
        .unwrap();
        let timings = report.timings().unwrap();
        let series = assign_cycles(&timings, &ephemeris, &CycleOptions::default()).unwrap();
        let ttv = fit_sinusoidal_ttv(&series, &TtvSearchOptions::default()).unwrap();
        let a = ttv.amplitude_d;
        let sigma = a.sigma.unwrap();
        inside += usize::from((a.value - AMPLITUDE_D).abs() < sigma);
        let p = ttv.ttv_period_cycles;
        inside_period += usize::from((p.value - TTV_PERIOD_CYCLES).abs() < p.sigma.unwrap());
        snr += a.value / sigma;
        weak += usize::from(ttv.periodogram.log10_false_alarm_probability > -2.0);
        if trial == 0 {
            println!(
                "trial 0: median mid-time σ {:.1} s, A = {:.1} ± {:.1} s",
                report.median_error_d * 86_400.0,
                a.value * 86_400.0,
                sigma * 86_400.0
            );
        }
    }
    let fa = inside as f64 / trials as f64;
    let fp = inside_period as f64 / trials as f64;
    println!(
        "TTV amplitude inside 1σ in {:.1} % of {trials} trials (TTV period {:.1} %); mean A/σ_A {:.1}",
        100.0 * fa,
        100.0 * fp,
        snr / trials as f64
    );
    println!("O–C periodogram FAP above 1 %: {weak} of {trials}");
    assert!(weak <= trials as usize / 20, "{weak} weak detections");
    assert!((0.61..=0.75).contains(&fa), "amplitude coverage {fa}");
    assert!((0.61..=0.75).contains(&fp), "TTV period coverage {fp}");
}

#[test]
fn without_a_ttv_the_false_alarm_probability_is_honest() {
    // White timing noise only: the fraction of sets whose O–C periodogram peak has
    // FAP < 5 % must be ≤ 5 % (+ binomial scatter); Baluev's FAP is an upper bound.
    let epoch = Instant::from_jd_two_part(TimeScale::Tdb, 2_460_500.5, 0.1);
    let trials = 1000;
    let mut detections = 0;
    for trial in 0..trials {
        let mut rng = SeededRng::new(7_000 + trial);
        let timings: Vec<Timing> = (0..30)
            .map(|e| Timing {
                bjd_tdb: epoch.add_seconds((e as f64 * PERIOD_D + 3e-4 * rng.normal()) * 86_400.0),
                error_d: 3e-4,
                kind: EventKind::Primary,
                source: None,
                row: e + 1,
            })
            .collect();
        let reference = ReferenceEphemeris { epoch, period_d: PERIOD_D, period_sigma_d: 0.0 };
        let series = assign_cycles(&timings, &reference, &CycleOptions::default()).unwrap();
        let p = oc_periodogram(&series, &TtvSearchOptions::default()).unwrap();
        detections += usize::from(p.log10_false_alarm_probability < 0.05f64.log10());
    }
    let rate = detections as f64 / trials as f64;
    println!("false detections at FAP < 5 %: {:.1} % of {trials}", 100.0 * rate);
    assert!(rate <= 0.05 + 2.0 * (0.05 * 0.95 / trials as f64).sqrt(), "rate {rate}");
}
