//! `time-transits` as a user runs it, on an invented planet (seeded noise): its `--json`
//! deserialises into `Summary<TransitTimingReport>`, the table it writes is read by
//! `timing-residuals` as it is, and bad input is refused with file, row and column.

#[path = "common/cli.rs"]
mod cli;
#[path = "common/json.rs"]
mod json;

use cli::{run_ok, skyclock, workdir};
use skyclock::fit::SeededRng;
use skyclock::transit::{QuadraticLimbDarkening, TransitShape, TransitTimingReport};

const EPOCH: f64 = 2_460_301.418_7;
const PERIOD_D: f64 = 3.217_185_4;

/// Six transits of an invented planet, 2-minute cadence, σ = 1e-3, with a 1-minute shift of
/// cycle 3 (invented).
fn write_light_curve(path: &std::path::Path, bad_row: Option<usize>) {
    let shape = TransitShape {
        radius_ratio: 0.11,
        scaled_semi_major_axis: 9.5,
        impact_parameter: 0.35,
        limb_darkening: QuadraticLimbDarkening { u1: 0.42, u2: 0.22 },
        eccentricity: 0.0,
        periastron_argument_rad: 0.0,
    };
    let mut rng = SeededRng::new(11);
    let mut s = String::from("bjd,flux,flux_err\n");
    let mut row = 0;
    for e in [0, 1, 2, 3, 5, 6] {
        let mid = e as f64 * PERIOD_D + if e == 3 { 60.0 / 86_400.0 } else { 0.0 };
        for i in 0..160 {
            let dt = -0.16 + i as f64 * 2.0 / 1440.0;
            let t = e as f64 * PERIOD_D + dt;
            let f = shape.flux(PERIOD_D, t - mid, &[0.0]) + 1e-3 * rng.normal();
            row += 1;
            if Some(row) == bad_row {
                s.push_str(&format!("{:.10},-{f:.6},0.001\n", EPOCH + t));
            } else {
                s.push_str(&format!("{:.10},{f:.6},0.001\n", EPOCH + t));
            }
        }
    }
    std::fs::write(path, s).unwrap();
}

fn args<'a>(input: &'a str, output: &'a str) -> Vec<&'a str> {
    vec![
        "time-transits",
        "--input",
        input,
        "--time-column",
        "bjd",
        "--value-column",
        "flux",
        "--error-column",
        "flux_err",
        "--epoch-bjd-tdb",
        "2460301.4187",
        "--period-d",
        "3.2171854",
        "--radius-ratio",
        "0.1",
        "--semi-major-axis-stellar-radii",
        "9",
        "--impact-parameter",
        "0.3",
        "--output",
        output,
    ]
}

#[test]
fn json_round_trips_and_the_table_feeds_timing_residuals() {
    let d = workdir("transit_cli", "round_trip");
    let input = d.join("planet.csv");
    write_light_curve(&input, None);
    let (i, o) = (input.to_str().unwrap().to_string(), d.join("transits.csv").to_str().unwrap().to_string());
    let mut a = args(&i, &o);
    a.push("--json");
    let text = run_ok(&a);
    let summary = json::assert_summary_round_trip::<TransitTimingReport>(&text);
    let report = summary.result;
    assert_eq!(report.transits.len(), 6);
    let shifted = report.transits.iter().find(|t| t.cycle == 3).unwrap();
    assert!((shifted.offset_from_prediction_d * 86_400.0 - 60.0).abs() < 4.0 * shifted.error_d * 86_400.0);
    assert!((report.shape.radius_ratio.value - 0.11).abs() < 0.01);
    // The table goes to timing-residuals unchanged.
    let oc = d.join("oc.csv");
    let out = run_ok(&[
        "timing-residuals",
        "--input",
        &o,
        "--time-column",
        "time",
        "--clock",
        "bjd_tdb",
        "--error-column",
        "error_d",
        "--kind-column",
        "kind",
        "--epoch-bjd-tdb",
        "2460301.4187",
        "--period-d",
        "3.2171854",
        "--output",
        oc.to_str().unwrap(),
        "--json",
    ]);
    assert!(out.contains("\"stage\": \"timing-residuals\""), "{out}");
    let table = std::fs::read_to_string(&oc).unwrap();
    assert_eq!(table.lines().count(), 7, "{table}");
}

#[test]
fn bad_flux_names_file_row_and_column_and_inputs_are_never_overwritten() {
    let d = workdir("transit_cli", "bad");
    let input = d.join("planet_bad.csv");
    write_light_curve(&input, Some(37));
    let i = input.to_str().unwrap().to_string();
    let o = d.join("t.csv").to_str().unwrap().to_string();
    let out = skyclock().args(args(&i, &o)).output().unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(1), "{err}");
    assert!(err.contains("planet_bad.csv") && err.contains("row 37") && err.contains("'flux'"), "{err}");
    let out = skyclock().args(args(&i, &i)).output().unwrap();
    assert_ne!(out.status.code(), Some(0));
    assert!(std::fs::read_to_string(&input).unwrap().starts_with("bjd,flux"));
    // A period that is not a number of days, and a shape that misses the star.
    let mut a = args(&i, &o);
    a.extend(["--impact-parameter", "1.5"]);
    let a: Vec<&str> = a.iter().enumerate().filter(|(k, _)| *k != 17 && *k != 18).map(|(_, s)| *s).collect();
    let out = skyclock().args(&a).output().unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(1), "{err}");
    assert!(err.contains("misses the star"), "{err}");
}
