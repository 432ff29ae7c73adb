//! The light-time method: timings of a periodic source that were never corrected to the
//! barycentre measure the light time per au.
//!
//! References: tests/reference/light_time/uncorrected_timings.csv — geocentric UTC times of
//! an invented, strictly periodic binary, made by inverting astropy 8.0.2's barycentric
//! correction with JPL DE440 (generator and README beside the file). Expected value:
//! au/c = 149 597 870 700 m / 299 792 458 m/s = 499.0047838 s (IAU 2012 Resolution B2; SI
//! definition of c; "499.004784 s per au" is common practice).

use std::path::PathBuf;
use std::process::Command;

#[path = "common/json.rs"]
mod json;

use skyclock::fit::SeededRng;
use skyclock::oc::light_time_method::{LIGHT_TIME_PER_AU_S, LightTimeOptions, UncorrectedTiming, measure_light_time};
use skyclock::oc::{EventKind, ReferenceEphemeris};
use skyclock::time::{Instant, TimeScale};

const REFERENCE: &str = "tests/reference/light_time/uncorrected_timings.csv";
const EPOCH_JD1: f64 = 2_459_000.0;
const EPOCH_JD2: f64 = 0.312_345_6;
const PERIOD_D: f64 = 0.876_543_21;

struct Row {
    bjd: Instant,
    ltt_s: f64,
}

fn reference_rows() -> Vec<Row> {
    let text = std::fs::read_to_string(REFERENCE).expect("reference table");
    text.lines()
        .skip(1)
        .map(|l| {
            let f: Vec<&str> = l.split(',').collect();
            Row {
                bjd: Instant::from_jd_two_part(TimeScale::Tdb, f[3].parse().unwrap(), f[4].parse().unwrap()),
                ltt_s: f[5].parse().unwrap(),
            }
        })
        .collect()
}

fn dir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("skyclock_light_time_{name}_{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).expect("temp dir");
    d
}

fn run(args: &[&str]) -> (i32, String, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_skyclock")).args(args).output().expect("run skyclock");
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// The command on astropy's noise-free geocentric UTC times returns au/c: the only
/// differences are the UTC text rounding (~1e-11 d) and the Shapiro terms that astropy's
/// light travel time leaves out and skyclock applies (≲ 20 µs, common practice), both far
/// below 1 ms per au.
#[test]
fn the_command_measures_the_light_time_per_au_from_astropy_timings() {
    let d = dir("astropy");
    let out = d.join("residuals.csv");
    let out_s = out.to_str().unwrap();
    let (code, stdout, stderr) = run(&[
        "measure-light-time",
        "--input",
        REFERENCE,
        "--time-column",
        "utc_jd",
        "--clock",
        "jd_utc",
        "--error-column",
        "error_d",
        "--ra",
        "131.25",
        "--dec",
        "17.5",
        "--epoch-jd",
        "2459000.3144752",
        "--period-d",
        "0.87654321",
        "--output",
        out_s,
        "--json",
    ]);
    assert_eq!(code, 0, "{stderr}");
    // The --json output is exactly Summary<LightTimeMeasurement>.
    let typed = json::assert_summary_round_trip::<skyclock::oc::light_time_method::LightTimeMeasurement>(&stdout);
    assert!((typed.result.defined_light_time_per_au_s - LIGHT_TIME_PER_AU_S).abs() < 1e-9);
    let v: serde_json::Value = serde_json::from_str(&stdout).expect("json");
    let a = v["light_time_per_au_s"].as_f64().unwrap();
    let c = v["speed_of_light_m_per_s"].as_f64().unwrap();
    eprintln!("measured light time per au {a:.7} s, c = {c:.1} m/s");
    assert!((a - LIGHT_TIME_PER_AU_S).abs() < 1e-3, "light time per au {a} s vs {LIGHT_TIME_PER_AU_S}");
    assert!((c - 299_792_458.0).abs() < 1_000.0, "c = {c} m/s");
    let period = v["period_d"].as_f64().unwrap();
    assert!((period - PERIOD_D).abs() < 1e-9, "period {period}");
    // The residuals are at the level of the rounding, far below the stated 1e-4 d.
    assert!(v["reduced_chi2"].as_f64().unwrap() < 1e-6, "{}", v["reduced_chi2"]);
    assert!(std::fs::read_to_string(&out).unwrap().lines().count() == 241);
}

/// Interval calibration: seeded Gaussian noise on the astropy times, 200 trials; the 1σ
/// interval of the light time per au holds the defined value in 68 ± 7 % of them
/// (the target of issue 4). Projections r·n from astropy's Rømer term (ltt · c / au).
#[test]
fn light_time_intervals_are_calibrated_over_seeded_trials() {
    let rows = reference_rows();
    let epoch = Instant::from_jd_two_part(TimeScale::Tdb, EPOCH_JD1, EPOCH_JD2);
    let reference = ReferenceEphemeris { epoch, period_d: PERIOD_D, period_sigma_d: 0.0 };
    let sigma_d = 3e-4; // ~26 s, typical of small-telescope minima (common practice)
    let trials = 200;
    let mut inside = 0;
    let mut pulls = Vec::new();
    for trial in 0..trials {
        let mut rng = SeededRng::for_stream(4_990, trial);
        let timings: Vec<UncorrectedTiming> = rows
            .iter()
            .enumerate()
            .map(|(i, r)| UncorrectedTiming {
                observer_tdb: r.bjd.add_seconds(-r.ltt_s + sigma_d * 86_400.0 * rng.normal()),
                projection_au: r.ltt_s / LIGHT_TIME_PER_AU_S,
                error_d: sigma_d,
                kind: EventKind::Primary,
                row: i + 1,
            })
            .collect();
        let m = measure_light_time(&timings, &reference, &LightTimeOptions::default()).expect("fit");
        let pull = (m.light_time_per_au_s - LIGHT_TIME_PER_AU_S) / m.light_time_per_au_sigma_s;
        pulls.push(pull);
        if pull.abs() <= 1.0 {
            inside += 1;
        }
    }
    let fraction = inside as f64 / trials as f64;
    let mean_pull = pulls.iter().sum::<f64>() / trials as f64;
    assert!((0.61..=0.75).contains(&fraction), "{:.1} % inside 1σ", 100.0 * fraction);
    assert!(mean_pull.abs() < 0.25, "mean pull {mean_pull}");
}

/// Bad input: barycentric times are refused (they no longer hold the term), a zero error
/// is named with file, row and column.
#[test]
fn the_command_refuses_corrected_times_and_zero_errors() {
    let d = dir("bad");
    let out = d.join("r.csv");
    let (code, _, stderr) = run(&[
        "measure-light-time",
        "--input",
        REFERENCE,
        "--time-column",
        "utc_jd",
        "--clock",
        "bjd_tdb",
        "--error-column",
        "error_d",
        "--ra",
        "131.25",
        "--dec",
        "17.5",
        "--epoch-jd",
        "2459000.3144752",
        "--period-d",
        "0.87654321",
        "--output",
        out.to_str().unwrap(),
    ]);
    assert_eq!(code, 1);
    assert!(stderr.contains("as seen by the observer"), "{stderr}");

    let input = d.join("zero_error.csv");
    let mut text = std::fs::read_to_string(REFERENCE).unwrap();
    text = text.replacen(",1.0e-4", ",0", 3); // rows 1–3 get a zero error
    std::fs::write(&input, text).unwrap();
    let (code, _, stderr) = run(&[
        "measure-light-time",
        "--input",
        input.to_str().unwrap(),
        "--time-column",
        "utc_jd",
        "--clock",
        "jd_utc",
        "--error-column",
        "error_d",
        "--ra",
        "131.25",
        "--dec",
        "17.5",
        "--epoch-jd",
        "2459000.3144752",
        "--period-d",
        "0.87654321",
        "--output",
        out.to_str().unwrap(),
    ]);
    assert_eq!(code, 1);
    assert!(stderr.contains("row 1") && stderr.contains("'error_d'") && stderr.contains("zero_error.csv"), "{stderr}");
}
