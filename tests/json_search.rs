//! Every search-stage command's `--json` output is the serialisation of its library result
//! type: it deserialises into `Summary<T>` and serialises back to the same JSON.
//! Data: the invented demo scenario in `datasets/`.

#[path = "common/json.rs"]
mod json;

use std::path::PathBuf;
use std::process::Command;

use skyclock::survey::report::PeriodSearchReport;

fn workdir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("skyclock_json_search_{name}_{}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    d
}

fn run_ok(args: &[&str]) -> String {
    let out = Command::new(env!("CARGO_BIN_EXE_skyclock")).args(args).output().unwrap();
    assert!(out.status.success(), "skyclock {args:?} failed:\n{}", String::from_utf8_lossy(&out.stderr));
    String::from_utf8(out.stdout).unwrap()
}

#[test]
fn find_periods_json_is_the_period_search_report() {
    let d = workdir("find");
    let summary = d.join("peaks.json");
    let stdout = run_ok(&[
        "find-periods",
        "--input",
        "datasets/kx_inventa_photometry.csv",
        "--time-column",
        "time",
        "--value-column",
        "mag",
        "--error-column",
        "mag_err",
        "--clock",
        "jd_utc",
        "--sites-file",
        "datasets/kx_inventa_sites.toml",
        "--site",
        "Ridge Hollow Observatory",
        "--source-file",
        "datasets/kx_inventa_sites.toml",
        "--method",
        "harmonics",
        "--harmonics",
        "4",
        "--max-freq-per-day",
        "4",
        "--peaks",
        "3",
        "--summary",
        summary.to_str().unwrap(),
        "--json",
        "--quiet",
    ]);
    let typed = json::assert_summary_round_trip::<PeriodSearchReport>(&stdout);
    assert_eq!(std::fs::read_to_string(&summary).unwrap().trim(), stdout.trim());
    let report = typed.result;
    assert_eq!(report.result.peaks.len(), 3);
    assert_eq!(report.result.peaks[0].rank, 1);
    assert!(report.result.points > 100 && report.result.grid.frequencies > 100);
    assert!(report.method.contains("harmonic"), "{}", report.method);
}
