//! `timing-residuals --models apsidal` as a user runs it, on invented minima of an invented
//! eccentric eclipsing binary (seeded noise): the injected apsidal period is recovered within
//! 3σ, `--json` deserialises into the library's `ApsidalAnalysis`, the figure is written,
//! and bad input gets a message naming file, row and column. Expected values: the invented
//! signal.

use std::f64::consts::TAU;
use std::path::{Path, PathBuf};
use std::process::Command;

#[path = "common/json.rs"]
mod json;

use skyclock::fit::SeededRng;
use skyclock::oc::EventKind;
use skyclock::oc::apsidal::ApsidalAnalysis;
use skyclock::oc::eclipse_times::{MinimumTimeMethod, minimum_offset_rad};

const EPOCH_JD: f64 = 2_444_000.412_3;
const PS_D: f64 = 3.104_577;
const E: f64 = 0.09;
const OMEGA0: f64 = 2.2;
const U_YR: f64 = 45.0;

fn dir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("skyclock_apsidal_cli_{name}_{}", std::process::id()));
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

/// Invented minima over 40 seasons, BJD_TDB, i = 90°.
fn write_minima(path: &Path, maximum_at: Option<usize>) {
    let mut rng = SeededRng::new(20_261_203);
    let rate = TAU * PS_D / (U_YR * 365.25);
    let pa = PS_D / (1.0 - rate / TAU);
    let mut s = String::from("time,error_d,kind\n");
    let mut used = std::collections::HashSet::new();
    let mut n = 0;
    for season in 0..40 {
        for _ in 0..4 {
            let day = season as f64 * 365.25 + 150.0 * rng.uniform();
            let kind = if rng.uniform() < 0.45 { EventKind::Secondary } else { EventKind::Primary };
            let cycle = (day / PS_D).round() + kind.cycle_offset();
            if !used.insert((2.0 * cycle) as i64) {
                continue;
            }
            let phi = minimum_offset_rad(kind, E, OMEGA0 + rate * cycle, TAU / 4.0, MinimumTimeMethod::Exact).unwrap();
            let sigma = 0.0008;
            let t = EPOCH_JD + cycle * PS_D + pa / TAU * phi + sigma * rng.normal();
            n += 1;
            let label = if maximum_at == Some(n) { "maximum" } else { kind.name() };
            s.push_str(&format!("{t:.6},{sigma},{label}\n"));
        }
    }
    std::fs::write(path, s).unwrap();
}

fn base_args<'a>(input: &'a str, output: &'a str) -> Vec<&'a str> {
    vec![
        "timing-residuals",
        "--input",
        input,
        "--time-column",
        "time",
        "--clock",
        "bjd_tdb",
        "--error-column",
        "error_d",
        "--kind-column",
        "kind",
        "--epoch-bjd-tdb",
        "2444000.4123",
        "--period-d",
        "3.10458",
        "--models",
        "apsidal",
        "--output",
        output,
    ]
}

#[test]
fn apsidal_model_recovers_the_invented_apsidal_period_and_json_is_the_library_type() {
    let d = dir("recover");
    let input = d.join("minima.csv");
    write_minima(&input, None);
    let (input, output, figure) = (
        input.display().to_string(),
        d.join("oc.csv").display().to_string(),
        d.join("apsidal.svg").display().to_string(),
    );
    let mut args = base_args(&input, &output);
    args.extend(["--figure", &figure, "--bootstrap", "50", "--json", "--quiet"]);
    let (code, stdout, stderr) = run(&args);
    assert_eq!(code, 0, "{stderr}");
    // The --json output is exactly Summary<ApsidalAnalysis>, nothing lost on a round trip.
    let analysis = json::assert_summary_round_trip::<ApsidalAnalysis>(&stdout).result;
    let u = analysis.derived.iter().find(|d| d.name == "apsidal_period_yr").unwrap();
    let sigma = u.sigma_covariance.unwrap();
    assert!((u.value - U_YR).abs() < 3.0 * sigma, "U = {} ± {sigma}", u.value);
    assert!(u.sigma_bootstrap.is_some());
    assert!(std::fs::read_to_string(&figure).unwrap().contains("<svg"));
    let table = std::fs::read_to_string(&output).unwrap();
    assert!(table.lines().next().unwrap().contains("model_apsidal_d"));
    // The same numbers from the series method (a model choice of its own).
    let mut args = base_args(&input, &output);
    args.extend(["--minimum-time-method", "series", "--json", "--quiet"]);
    let (code, stdout, stderr) = run(&args);
    assert_eq!(code, 0, "{stderr}");
    let summary: serde_json::Value = serde_json::from_str(&stdout).expect("JSON");
    assert_eq!(summary["method"], "series");
}

#[test]
fn a_maximum_among_the_minima_is_refused_with_file_row_and_column() {
    let d = dir("maximum");
    let input = d.join("minima.csv");
    write_minima(&input, Some(7));
    let (input, output) = (input.display().to_string(), d.join("oc.csv").display().to_string());
    let (code, _, stderr) = run(&base_args(&input, &output));
    assert_ne!(code, 0);
    assert!(stderr.contains("minima.csv") && stderr.contains("row 7") && stderr.contains("'kind'"), "{stderr}");
    assert!(!Path::new(&output).exists());
}

#[test]
fn apsidal_model_must_stand_alone_and_needs_the_kind_column() {
    let d = dir("alone");
    let input = d.join("minima.csv");
    write_minima(&input, None);
    let (input, output) = (input.display().to_string(), d.join("oc.csv").display().to_string());
    let mut args = base_args(&input, &output);
    let models = args.iter().position(|a| *a == "apsidal").unwrap();
    args[models] = "linear,apsidal";
    let (code, _, stderr) = run(&args);
    assert_ne!(code, 0);
    assert!(stderr.contains("on its own"), "{stderr}");
    let mut args = base_args(&input, &output);
    let kind = args.iter().position(|a| *a == "--kind-column").unwrap();
    args.drain(kind..kind + 2);
    let (code, _, stderr) = run(&args);
    assert_ne!(code, 0);
    assert!(stderr.contains("--kind-column"), "{stderr}");
    // Writing over the input is refused.
    let args = base_args(&input, &input);
    let (code, _, _) = run(&args);
    assert_ne!(code, 0);
    assert!(std::fs::read_to_string(&input).unwrap().starts_with("time,error_d,kind"));
}
