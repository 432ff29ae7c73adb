//! Recovery of invented pulsars from simulated arrival times (seeded): every fitted
//! parameter should lie within its 1-σ uncertainty in 68.3 % of trials (Gaussian
//! coverage, common practice); accepted band 68 ± 7 % over ≥ 200 trials.

use rayon::prelude::*;
use skyclock::fit::SeededRng;
use skyclock::pulsar::model::{ArrivalTime, JULIAN_YEAR_S, ObserverGeometry, Orbit, TimingModel};
use skyclock::pulsar::timing_fit::fit_timing_model;

/// Invented geometry: an observer on a circular orbit of 1 au in the ecliptic (obliquity
/// 23.44°, common practice) plus a 6371 km daily circle, and an invented source at
/// RA 243.7°, Dec +41.4° (ecliptic latitude ≈ +61°: both coordinates well measured).
fn invented_observer(t_s: f64) -> ObserverGeometry {
    let year = std::f64::consts::TAU * (t_s / JULIAN_YEAR_S + 0.23);
    let day = std::f64::consts::TAU * t_s / 86_164.1;
    let eps = 23.44_f64.to_radians();
    let au_lt_s = 499.004_784;
    let earth_lt_s = 6371.0 / 299_792.458;
    let (ra, dec) = (243.7_f64.to_radians(), 41.4_f64.to_radians());
    ObserverGeometry {
        position_lt_s: [
            au_lt_s * year.cos() + earth_lt_s * day.cos(),
            au_lt_s * year.sin() * eps.cos() + earth_lt_s * day.sin(),
            au_lt_s * year.sin() * eps.sin(),
        ],
        source_unit: [dec.cos() * ra.cos(), dec.cos() * ra.sin(), dec.sin()],
    }
}

/// Arrival times at which `truth` has integer phase, plus Gaussian noise σ.
fn simulate(truth: &TimingModel, seed: u64, n: usize, span_s: f64, sigma_s: f64) -> Vec<ArrivalTime> {
    let mut rng = SeededRng::for_stream(seed, 77);
    let mut out = vec![];
    for i in 0..n {
        let freq = if i % 2 == 0 { Some(1400.0) } else { Some(820.0) };
        let t_s = (i as f64 / (n - 1) as f64 - 0.5) * span_s + rng.uniform() * 3000.0;
        let observer = truth_needs_observer(truth).then(|| invented_observer(t_s));
        let mut a = ArrivalTime { t_s, error_s: sigma_s, freq_mhz: freq, instrument: "receiver_a".into(), observer };
        for _ in 0..4 {
            let ph = truth.phase_cycles(&a);
            a.t_s -= (ph - ph.round()) / truth.freq_hz;
        }
        a.t_s += sigma_s * rng.normal();
        out.push(a);
    }
    out
}

fn truth_needs_observer(truth: &TimingModel) -> bool {
    truth.refines_position()
}

fn coverage(truth: &TimingModel, trials: u64, n: usize, span_s: f64, sigma_s: f64) -> (f64, usize) {
    let per = coverage_per_parameter(truth, trials, n, span_s, sigma_s);
    let (a, b) = per.iter().fold((0, 0), |x, (_, h, t)| (x.0 + h, x.1 + t));
    (a as f64 / b as f64, b)
}

/// Per fitted parameter (phase offset excluded): name, trials within 1σ, trials.
fn coverage_per_parameter(
    truth: &TimingModel,
    trials: u64,
    n: usize,
    span_s: f64,
    sigma_s: f64,
) -> Vec<(String, usize, usize)> {
    let hits: Vec<Vec<(String, bool)>> = (0..trials)
        .into_par_iter()
        .map(|s| {
            let toas = simulate(truth, s, n, span_s, sigma_s);
            let mut start = truth.clone();
            // start slightly off, as a real starting model would be (the position at the
            // direction used for barycentring: no offset, no proper motion)
            start.freq_hz += 3e-10;
            for p in skyclock::pulsar::model::POSITION_PARAMETERS {
                start.set(p, 0.0).unwrap();
            }
            let fit = fit_timing_model(&start, &toas, 20).expect("fit converges");
            fit.parameters
                .iter()
                .enumerate()
                .filter(|(_, name)| name.to_string() != "phase_offset_cycles")
                .map(|(j, name)| {
                    let t = truth.get(name).unwrap();
                    (name.to_string(), (fit.values[j] - t).abs() <= fit.uncertainties[j])
                })
                .collect()
        })
        .collect();
    let mut out: Vec<(String, usize, usize)> = vec![];
    for trial in hits {
        for (name, inside) in trial {
            match out.iter_mut().find(|e| e.0 == name) {
                Some(e) => {
                    e.1 += usize::from(inside);
                    e.2 += 1;
                }
                None => out.push((name, usize::from(inside), 1)),
            }
        }
    }
    out
}

#[test]
fn isolated_pulsar_parameters_within_one_sigma_68_percent() {
    let truth = TimingModel::from_toml(
        "epoch_mjd_day_tdb = 60100\nfreq_hz = 17.43\nfreq_deriv_hz_per_s = -2.6e-13\ndispersion_measure_pc_per_cm3 = 31.9\nfit = [\"freq_hz\", \"freq_deriv_hz_per_s\", \"dispersion_measure_pc_per_cm3\"]\n",
        "invented isolated pulsar",
    ).unwrap();
    let (frac, n) = coverage(&truth, 240, 40, 3.0e7, 50e-6);
    eprintln!("coverage {frac:.3} over {n} parameter estimates");
    assert!((0.61..=0.75).contains(&frac), "coverage {frac} over {n} parameter estimates");
}

#[test]
fn binary_pulsar_parameters_within_one_sigma_68_percent() {
    let mut truth = TimingModel::from_toml(
        "epoch_mjd_day_tdb = 60100\nfreq_hz = 217.3\nfreq_deriv_hz_per_s = -4e-16\n",
        "invented binary",
    )
    .unwrap();
    truth.orbit = Some(Orbit {
        orbital_period_d: 2.31,
        projected_semi_major_axis_lt_s: 3.7,
        eccentricity: 0.12,
        periastron_longitude_deg: 40.0,
        periastron_time_s: 5000.0,
        einstein_amplitude_s: 0.0,
        shapiro_range_s: 0.0,
        shapiro_shape: 0.0,
    });
    truth.fit = [
        "freq_hz",
        "freq_deriv_hz_per_s",
        "orbital_period_d",
        "projected_semi_major_axis_lt_s",
        "eccentricity",
        "periastron_longitude_deg",
        "periastron_time_s",
    ]
    .iter()
    .map(|s| s.parse().unwrap())
    .collect();
    let (frac, n) = coverage(&truth, 240, 60, 2.0e6, 5e-6);
    eprintln!("coverage {frac:.3} over {n} parameter estimates");
    assert!((0.61..=0.75).contains(&frac), "coverage {frac} over {n} parameter estimates");
}

#[test]
fn lost_phase_connection_is_reported() {
    let truth =
        TimingModel::from_toml("epoch_mjd_day_tdb = 60100\nfreq_hz = 17.43\nfit = [\"freq_hz\"]\n", "t").unwrap();
    let toas = simulate(&truth, 1, 30, 3.0e7, 50e-6);
    let mut start = truth.clone();
    start.freq_hz += 2e-7; // 3 cycles of drift over the span
    let e = fit_timing_model(&start, &toas, 20).unwrap_err().to_string();
    assert!(e.contains("phase connection lost"), "{e}");
}

#[test]
fn position_and_proper_motion_recovered_within_one_sigma_68_percent() {
    // Invented pulsar 200 mas east and 150 mas south of the position used to barycentre,
    // moving 30 mas/yr east and 20 mas/yr south; 60 arrival times over 2.5 years, σ = 2 µs.
    let truth = TimingModel::from_toml(
        "epoch_mjd_day_tdb = 60400\nfreq_hz = 17.43\nfreq_deriv_hz_per_s = -2.6e-14\ndispersion_measure_pc_per_cm3 = 31.9\n\
         position_offset_ra_mas = 200.0\nposition_offset_dec_mas = -150.0\nproper_motion_ra_mas_per_yr = 30.0\nproper_motion_dec_mas_per_yr = -20.0\n\
         fit = [\"freq_hz\", \"freq_deriv_hz_per_s\", \"position_offset_ra_mas\", \"position_offset_dec_mas\", \"proper_motion_ra_mas_per_yr\", \"proper_motion_dec_mas_per_yr\"]\n",
        "invented moving pulsar",
    )
    .unwrap();
    let span_s = 2.5 * JULIAN_YEAR_S;
    // one trial in detail: every position parameter within 3σ, and σ small against the signal
    let toas = simulate(&truth, 11, 60, span_s, 2e-6);
    let mut start = truth.clone();
    for p in skyclock::pulsar::model::POSITION_PARAMETERS {
        start.set(p, 0.0).unwrap();
    }
    let fit = fit_timing_model(&start, &toas, 20).expect("fit converges");
    for p in skyclock::pulsar::model::POSITION_PARAMETERS {
        let j = fit.parameters.iter().position(|n| *n == p).unwrap();
        let (v, s, t) = (fit.values[j], fit.uncertainties[j], truth.get(p).unwrap());
        eprintln!("{p}: fitted {v:.3} ± {s:.3}, true {t}");
        assert!((v - t).abs() <= 3.0 * s && s < 2.0, "{p}: fitted {v} ± {s}, true {t}");
    }
    assert!(fit.chi2 / (fit.dof as f64) < 2.0, "χ²/dof = {}", fit.chi2 / fit.dof as f64);
    let per = coverage_per_parameter(&truth, 240, 60, span_s, 2e-6);
    let (mut hits, mut total) = (0, 0);
    for (name, h, t) in &per {
        eprintln!("{name}: {h} of {t} within 1σ");
        if skyclock::pulsar::model::POSITION_PARAMETERS.iter().any(|p| p.to_string() == *name) {
            hits += h;
            total += t;
        }
    }
    let frac = hits as f64 / total as f64;
    eprintln!("position and proper motion: coverage {frac:.3} over {total} estimates");
    assert_eq!(total, 960);
    assert!((0.61..=0.75).contains(&frac), "coverage {frac} over {total} position and proper-motion estimates");
}

#[test]
fn position_needs_arrival_times_at_an_observer() {
    let model = TimingModel::from_toml(
        "epoch_mjd_day_tdb = 60100\nfreq_hz = 17.43\nfit = [\"freq_hz\", \"position_offset_ra_mas\"]\n",
        "t",
    )
    .unwrap();
    let toas: Vec<ArrivalTime> = (0..10)
        .map(|i| ArrivalTime {
            t_s: i as f64 * 1e6,
            error_s: 1e-5,
            freq_mhz: None,
            instrument: "x".into(),
            observer: None,
        })
        .collect();
    let e = fit_timing_model(&model, &toas, 20).unwrap_err().to_string();
    assert!(
        e.contains("observer's barycentric position") && e.contains("arrival time 1") && e.contains("bjd_tdb"),
        "{e}"
    );
}
