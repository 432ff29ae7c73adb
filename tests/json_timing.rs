//! Every timing-stage command's `--json` output is the serialisation of its library result
//! type: the output deserialises into `Summary<T>` and serialises back to the same JSON.
//! Data: the invented demo scenario in `datasets/`.

#[path = "common/json.rs"]
mod json;

use std::path::PathBuf;
use std::process::Command;

use skyclock::oc::{ModelKind, OcAnalysis};

fn workdir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("skyclock_json_timing_{name}_{}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    d
}

fn run_ok(args: &[&str]) -> String {
    let out = Command::new(env!("CARGO_BIN_EXE_skyclock")).args(args).output().unwrap();
    assert!(out.status.success(), "skyclock {args:?} failed:\n{}", String::from_utf8_lossy(&out.stderr));
    String::from_utf8(out.stdout).unwrap()
}

#[test]
fn timing_residuals_json_is_the_oc_analysis() {
    let d = workdir("residuals");
    let output = d.join("oc.csv");
    let summary = d.join("oc.json");
    let stdout = run_ok(&[
        "timing-residuals",
        "--input",
        "datasets/kx_inventa_minima.csv",
        "--time-column",
        "time",
        "--clock-column",
        "clock",
        "--error-column",
        "error_d",
        "--kind-column",
        "kind",
        "--origin-column",
        "observer",
        "--sites-file",
        "datasets/kx_inventa_sites.toml",
        "--site-column",
        "site",
        "--source-file",
        "datasets/kx_inventa_sites.toml",
        "--epoch-bjd-tdb",
        "2459000.34567890",
        "--period-d",
        "0.83712345",
        "--period-sigma-d",
        "2e-7",
        "--models",
        "linear,quadratic",
        "--bootstrap",
        "20",
        "--binary-mass-msun",
        "2.3",
        "--output",
        output.to_str().unwrap(),
        "--summary",
        summary.to_str().unwrap(),
        "--json",
        "--quiet",
    ]);
    let typed = json::assert_summary_round_trip::<OcAnalysis>(&stdout);
    // The summary file holds the same text as --json.
    assert_eq!(std::fs::read_to_string(&summary).unwrap().trim(), stdout.trim());
    let analysis = typed.result;
    assert_eq!(analysis.models.len(), 2);
    assert_eq!(analysis.comparisons.len(), 1);
    assert_eq!(analysis.verdicts.len(), 1);
    let (period, sigma) = analysis.quantity(ModelKind::Linear, "period_d").expect("linear period");
    // The scenario's period (datasets/README.md) within a generous band: this test is about
    // the JSON, the recovery tests are in tests/timing_recovery.rs.
    assert!((period - 0.837_123_45).abs() < 1e-5 && sigma > 0.0, "{period} ± {sigma}");
    assert!(analysis.models.iter().all(|m| m.bootstrap.as_ref().is_some_and(|b| b.resamples == 20)));
    assert!(typed.inputs.iter().any(|i| i.ends_with("kx_inventa_minima.csv")));
}
