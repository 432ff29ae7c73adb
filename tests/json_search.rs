//! Every search-stage command's `--json` output is the serialisation of its library result
//! type: it deserialises into `Summary<T>` and serialises back to the same JSON.
//! Data: the invented demo scenario in `datasets/`.

#[path = "common/cli.rs"]
mod cli;
#[path = "common/json.rs"]
mod json;

use cli::{run_ok, workdir};

use std::path::PathBuf;

use skyclock::survey::report::PeriodSearchReport;

#[test]
fn find_periods_json_is_the_period_search_report() {
    let d = workdir("json_search", "find");
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

/// An invented δ Scuti-like star: two sinusoids (9.123 and 11.871 c/d), 30 nights.
fn invented_star() -> PathBuf {
    let d = std::env::temp_dir().join(format!("skyclock_json_search_star_{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    let mut rng = skyclock::fit::SeededRng::new(5);
    let mut s = String::from("bjd,mag,mag_err\n");
    for night in 0..30 {
        for k in 0..12 {
            let t = 2460100.3 + night as f64 + 0.025 * k as f64 + 0.004 * rng.uniform();
            let x = t - 2460100.0;
            let tau = std::f64::consts::TAU;
            let y = 12.0 + 0.05 * (tau * 9.123 * x).sin() + 0.02 * (tau * 11.871 * x).sin() + 0.003 * rng.normal();
            s.push_str(&format!("{t:.8},{y:.6},0.003\n"));
        }
    }
    let p = d.join("dsct_invented.csv");
    std::fs::write(&p, s).unwrap();
    p
}

#[test]
fn search_commands_print_their_typed_results() {
    let input = invented_star();
    let input = input.to_str().unwrap();
    let common = ["--input", input, "--time-column", "bjd", "--value-column", "mag", "--error-column", "mag_err"];

    let mut args = vec!["find-periods"];
    args.extend(common);
    args.extend(["--max-freq-per-day", "20", "--peaks", "3", "--json"]);
    let s = json::assert_summary_round_trip::<PeriodSearchReport>(&run_ok(&args));
    assert!((s.result.result.peaks[0].freq_per_day - 9.123).abs() < 2e-3, "{:?}", s.result.result.peaks[0]);
    assert_eq!(s.inputs, vec![input.to_string()]);

    let period = format!("{}", 1.0 / 9.123);
    let mut args = vec!["fold-curve"];
    args.extend(common);
    args.extend(["--period-d", &period, "--bins", "20", "--json"]);
    let s = json::assert_summary_round_trip::<skyclock::fold::FoldReport>(&run_ok(&args));
    assert_eq!(s.result.bins, 20);
    assert_eq!(s.result.points, 360);

    let mut args = vec!["extract-frequencies"];
    args.extend(common);
    args.extend(["--max-freq-per-day", "20", "--json"]);
    let s =
        json::assert_summary_round_trip::<skyclock::frequencies::summary::FrequencyExtractionResult>(&run_ok(&args));
    assert!((s.result.frequencies[0].freq_per_day - 9.123).abs() < 2e-3);

    // A batch of two invented stars (the same curve under two ids, the second shifted by
    // 100 days so the rows of each source are contiguous).
    let text = std::fs::read_to_string(input).unwrap();
    let mut batch = String::from("star,bjd,mag,mag_err\n");
    for (id, shift) in [("inv-a", 0.0), ("inv-b", 100.0)] {
        for line in text.lines().skip(1) {
            let mut f = line.split(',');
            let t: f64 = f.next().unwrap().parse().unwrap();
            let rest: Vec<&str> = f.collect();
            batch.push_str(&format!("{id},{:.8},{}\n", t + shift, rest.join(",")));
        }
    }
    let dir = std::path::Path::new(input).parent().unwrap();
    let batch_in = dir.join("field_invented.csv");
    std::fs::write(&batch_in, batch).unwrap();
    let batch_out = dir.join("periods.csv");
    let s = json::assert_summary_round_trip::<skyclock::survey::batch::BatchResult>(&run_ok(&[
        "survey-batch",
        "--input",
        batch_in.to_str().unwrap(),
        "--source-column",
        "star",
        "--time-column",
        "bjd",
        "--value-column",
        "mag",
        "--error-column",
        "mag_err",
        "--max-freq-per-day",
        "20",
        "--output",
        batch_out.to_str().unwrap(),
        "--json",
    ]));
    assert_eq!((s.result.summary.sources, s.result.summary.searched), (2, 2));
}
