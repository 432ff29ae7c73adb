//! A catalogue of bad inputs, run through the program for each command: every case must end
//! with a non-zero exit, a message that names the file, row and column (or the option), no
//! panic, every input byte-identical afterwards and no file left behind (no partial output,
//! no output of a refused run). Cases are invented (synthetic tables); what a correct refusal
//! looks like is common practice for a command-line tool.

#[path = "common/cli.rs"]
mod cli;

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

/// Every file in `dir` with its bytes.
fn snapshot(dir: &Path) -> BTreeMap<PathBuf, Vec<u8>> {
    std::fs::read_dir(dir)
        .unwrap()
        .filter_map(|e| e.ok())
        .filter(|e| e.file_type().map(|t| t.is_file()).unwrap_or(false))
        .map(|e| (e.path(), std::fs::read(e.path()).unwrap()))
        .collect()
}

/// A working folder holding `files` (name, text) and nothing else.
fn folder(case: &str, files: &[(&str, String)]) -> PathBuf {
    let d = cli::workdir("catalogue", case);
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    for (name, text) in files {
        std::fs::write(d.join(name), text).unwrap();
    }
    d
}

/// Runs `args` in `dir` and checks the refusal: non-zero exit, no panic, every fragment of
/// `expect` in stderr, and the folder exactly as before (same files, same bytes).
fn refused(case: &str, dir: &Path, args: &[&str], expect: &[&str]) {
    let before = snapshot(dir);
    let out = cli::skyclock().current_dir(dir).args(args).output().expect("run skyclock");
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(!out.status.success(), "{case}: expected a refusal, got exit 0\n{err}");
    assert!(!err.contains("panicked"), "{case}: panic\n{err}");
    for e in expect {
        assert!(err.contains(e), "{case}: stderr lacks '{e}':\n{err}");
    }
    let after = snapshot(dir);
    assert_eq!(
        before.keys().collect::<Vec<_>>(),
        after.keys().collect::<Vec<_>>(),
        "{case}: files appeared or vanished\n{err}"
    );
    for (path, bytes) in &before {
        assert!(after[path] == *bytes, "{case}: {} changed", path.display());
    }
}

/// An invented light curve: a 0.37 d sinusoid, `n` rows of time (JD), mag, mag_err.
fn light_curve(n: usize) -> String {
    let mut s = String::from("time,mag,mag_err\n");
    for i in 0..n {
        let t = 2460100.0 + i as f64 * 0.0731;
        let m = 12.0 + 0.1 * (2.0 * std::f64::consts::PI * t / 0.37).sin();
        s.push_str(&format!("{t:.6},{m:.5},0.01\n"));
    }
    s
}

/// An invented event list: `n` times in seconds.
fn events(n: usize) -> String {
    let mut s = String::from("time\n");
    for i in 0..n {
        s.push_str(&format!("{}.25\n", i * 7));
    }
    s
}

const SITES: &str =
    "[[site]]\nname = \"Quillmoor Ridge\"\neast_longitude_deg = 23.5\nlatitude_deg = -31.2\nheight_m = 1200.0\n";

fn find_periods(input: &str, extra: &[&'static str]) -> Vec<String> {
    let mut v: Vec<String> =
        ["find-periods", "--input", input, "--time-column", "time", "--value-column", "mag", "--max-freq-per-day", "5"]
            .iter()
            .map(|s| s.to_string())
            .collect();
    v.extend(extra.iter().map(|s| s.to_string()));
    v
}

fn strs(v: &[String]) -> Vec<&str> {
    v.iter().map(String::as_str).collect()
}

#[test]
fn find_periods_refuses_bad_tables_with_file_row_and_column() {
    let good = light_curve(60);
    let text_in_number = good.replacen("12.", "twelve", 1);
    let nan_time = {
        let mut lines: Vec<String> = good.lines().map(str::to_string).collect();
        lines[5] = "nan,12.0,0.01".into();
        lines.join("\n") + "\n"
    };
    let cases: Vec<(&str, String, Vec<&str>)> = vec![
        ("empty", String::new(), vec!["lc.csv"]),
        ("header_only", "time,mag,mag_err\n".into(), vec!["lc.csv"]),
        ("missing_column", good.replace("mag,", "brightness,"), vec!["lc.csv", "mag"]),
        ("text_in_number", text_in_number, vec!["lc.csv", "mag"]),
        ("two_rows", light_curve(2), vec!["lc.csv"]),
    ];
    for (case, text, expect) in cases {
        let d = folder(&format!("fp_{case}"), &[("lc.csv", text)]);
        refused(case, &d, &strs(&find_periods("lc.csv", &["--output", "out.csv"])), &expect);
    }
    // A row with a NaN time is dropped and counted (the documented result), not refused.
    let d = folder("fp_nan_time", &[("lc.csv", nan_time)]);
    let out = cli::skyclock().current_dir(&d).args(find_periods("lc.csv", &["--output", "out.csv"])).output().unwrap();
    assert!(cli::stdout_of(&out).contains("(1 rows with NaN dropped)"));
}

#[test]
fn outputs_never_land_on_an_input_or_on_each_other() {
    let d = folder("guard", &[("lc.csv", light_curve(60)), ("sites.toml", SITES.into())]);
    std::os::unix::fs::symlink(d.join("lc.csv"), d.join("alias.csv")).unwrap();
    let cases: Vec<(&str, Vec<&'static str>, Vec<&str>)> = vec![
        ("output_is_input", vec!["--output", "lc.csv"], vec!["--output", "--input", "also an input"]),
        ("output_through_link", vec!["--output", "alias.csv"], vec!["--output", "--input"]),
        ("output_via_dots", vec!["--output", "./sub/../lc.csv"], vec!["--output", "--input"]),
        ("summary_is_input", vec!["--output", "o.csv", "--summary", "lc.csv"], vec!["--summary", "--input"]),
        ("two_outputs_one_path", vec!["--output", "o.csv", "--summary", "o.csv"], vec!["--output", "--summary"]),
        (
            "summary_on_sidecar",
            vec!["--output", "o.csv", "--summary", "o.csv.provenance.json"],
            vec!["sidecar", "--summary"],
        ),
        ("figure_on_output", vec!["--output", "o.csv", "--figure", "o.csv"], vec!["--figure"]),
    ];
    std::fs::create_dir_all(d.join("sub")).unwrap();
    for (case, extra, expect) in cases {
        refused(case, &d, &strs(&find_periods("lc.csv", &extra)), &expect);
    }
    // The TOML files given to any command are inputs too: a summary over --sites-file.
    refused(
        "summary_over_sites_file",
        &d,
        &[
            "observer-time",
            "--sites-file",
            "sites.toml",
            "--site",
            "Quillmoor Ridge",
            "--ra",
            "10",
            "--dec",
            "20",
            "--summary",
            "sites.toml",
            "2460100.5",
        ],
        &["--summary", "--sites-file", "sites.toml"],
    );
}

#[test]
fn barycentre_events_refuses_edge_values_without_crashing() {
    let base = events(200);
    let row = |k: usize, text: &str| {
        let mut lines: Vec<String> = base.lines().map(str::to_string).collect();
        lines[k] = text.to_string();
        lines.join("\n") + "\n"
    };
    let cases: Vec<(&str, String, &str, Vec<&str>)> = vec![
        ("huge_time", row(50, "1e300"), "o.csv", vec!["ev.csv", "row 50", "'time'", "range"]),
        ("far_event", row(60, "1e12"), "o.csv", vec!["ev.csv", "row 60", "'time'", "range"]),
        ("empty_cell", row(70, ""), "o.csv", vec!["ev.csv", "row 70", "empty"]),
        ("extra_field", row(80, "559.25,3"), "o.csv", vec!["ev.csv", "row 80", "fields"]),
        ("text_time", row(90, "soon"), "o.csv", vec!["ev.csv", "row 90", "'time'"]),
        ("inf_time", row(91, "inf"), "o.csv", vec!["ev.csv", "row 91", "'time'"]),
        ("parquet_output", base.clone(), "o.parquet", vec!["o.parquet", ".csv"]),
        ("missing_column", base.replace("time\n", "seconds\n"), "o.csv", vec!["ev.csv", "time"]),
        ("empty_file", String::new(), "o.csv", vec!["ev.csv", "empty"]),
    ];
    for (case, text, output, expect) in cases {
        let d = folder(&format!("be_{case}"), &[("ev.csv", text)]);
        let args = [
            "barycentre-events",
            "--input",
            "ev.csv",
            "--time-column",
            "time",
            "--time-zero",
            "2460420.5",
            "--ra",
            "10",
            "--dec",
            "20",
            "--output",
            output,
        ];
        refused(case, &d, &args, &expect);
    }
}

#[test]
fn a_lone_far_event_is_corrected_like_the_same_event_alone() {
    // Memory is bounded by the events, not their span: an event 9e8 s (28 years) after the
    // rest gets the same correction as in a list of its own (synthetic; the interpolation
    // is checked against the exact corrector in tests/arrival_events.rs).
    let d = folder("far", &[("ev.csv", events(50) + "900000000.5\n"), ("one.csv", "time\n900000000.5\n".into())]);
    for (input, output) in [("ev.csv", "o.csv"), ("one.csv", "o1.csv")] {
        let out = cli::skyclock()
            .current_dir(&d)
            .args([
                "barycentre-events",
                "--input",
                input,
                "--time-column",
                "time",
                "--time-zero",
                "2460420.5",
                "--ra",
                "10",
                "--dec",
                "20",
                "--output",
                output,
            ])
            .output()
            .unwrap();
        cli::stdout_of(&out);
    }
    let last = |f: &str| std::fs::read_to_string(d.join(f)).unwrap().lines().last().unwrap().to_string();
    assert_eq!(last("o.csv"), last("o1.csv"));
}

#[test]
fn times_outside_the_accepted_span_are_refused_with_the_range() {
    let d = folder("times", &[]);
    for (case, value, format) in [
        ("jd_1e300", "1e300", "jd"),
        ("jd_past_i64", "9300000000000000000", "jd"),
        ("jd_9e9", "9e9", "jd"),
        ("mjd_1e7", "1e7", "mjd"),
        ("negative_jd", "-5", "jd"),
    ] {
        refused(
            case,
            &d,
            &["convert-time", "--scale", "tt", "--format", format, "--", value],
            &[value, "outside", "9999"],
        );
    }
    refused("inf", &d, &["convert-time", "--scale", "tt", "inf"], &["inf", "finite"]);
    refused(
        "predict_epoch_1e300",
        &d,
        &[
            "predict-events",
            "--epoch-bjd-tdb",
            "1e300",
            "--period-d",
            "1",
            "--from",
            "2026-01-01",
            "--until",
            "2026-01-05",
            "--ra",
            "10",
            "--dec",
            "20",
            "--site-coordinates",
            "23.5,-31.2,1200",
        ],
        &["--epoch-bjd-tdb", "outside"],
    );
}

#[test]
fn angles_and_velocities_out_of_range_are_refused() {
    let d = folder("angles", &[("ev.csv", events(20))]);
    let base = [
        "barycentre-events",
        "--input",
        "ev.csv",
        "--time-column",
        "time",
        "--time-zero",
        "2460420.5",
        "--output",
        "o.csv",
    ];
    let cases: Vec<(&str, Vec<&str>, Vec<&str>)> = vec![
        ("ra_400", vec!["--ra", "400", "--dec", "20"], vec!["400"]),
        ("dec_95", vec!["--ra", "10", "--dec", "95"], vec!["95"]),
        ("lon_400", vec!["--ra", "10", "--dec", "20", "--site-coordinates", "400,10,0"], vec!["longitude", "400"]),
        (
            "rv_above_c",
            vec!["--ra", "10", "--dec", "20", "--radial-velocity-km-per-s", "400000"],
            vec!["--radial-velocity-km-per-s", "speed of light"],
        ),
        (
            "pm_1e12",
            vec!["--ra", "10", "--dec", "20", "--proper-motion-ra-mas-per-yr", "1e12"],
            vec!["--proper-motion-ra-mas-per-yr"],
        ),
    ];
    for (case, extra, expect) in cases {
        let mut args: Vec<&str> = base.to_vec();
        args.extend(extra);
        refused(case, &d, &args, &expect);
    }
    let toml = "[source]\nname = \"Tarnwick Lamp\"\nra = 10.0\ndec = 20.0\nradial_velocity_km_per_s = 1e6\n";
    std::fs::write(d.join("star.toml"), toml).unwrap();
    let mut args: Vec<&str> = base.to_vec();
    args.extend(["--source-file", "star.toml"]);
    refused("toml_rv_above_c", &d, &args, &["radial_velocity_km_per_s"]);
}

#[test]
fn search_pulsations_refuses_unsorted_events_and_weights_above_one() {
    let mut unsorted = String::from("time,w\n");
    let mut heavy = String::from("time,w\n");
    for i in 0..200 {
        let t = 60420.0 + i as f64 * 1e-4;
        let t_unsorted = if i == 120 { 60420.0 } else { t };
        unsorted.push_str(&format!("{t_unsorted:.9},0.5\n"));
        heavy.push_str(&format!("{t:.9},{}\n", if i == 33 { 1.5 } else { 0.5 }));
    }
    let d = folder("pulsations", &[("unsorted.csv", unsorted), ("heavy.csv", heavy)]);
    for (case, input, expect) in [
        ("unsorted", "unsorted.csv", vec!["unsorted.csv", "row 121", "'time'", "sort"]),
        ("weight_1_5", "heavy.csv", vec!["heavy.csv", "row 34", "'w'", "[0, 1]"]),
    ] {
        let args = [
            "search-pulsations",
            "--input",
            input,
            "--time-column",
            "time",
            "--clock",
            "mjd_tt",
            "--weight-column",
            "w",
            "--ra",
            "10",
            "--dec",
            "20",
            "--min-freq-hz",
            "1",
            "--max-freq-hz",
            "2",
            "--output",
            "z.csv",
        ];
        refused(case, &d, &args, &expect);
    }
}

#[test]
fn a_closed_stdout_ends_quietly_with_exit_zero() {
    use std::io::Read as _;
    use std::process::Stdio;
    let times: Vec<String> = (0..20000).map(|i| format!("{}.5", 2459000 + i % 3000)).collect();
    let mut child = cli::skyclock()
        .args(["convert-time", "--scale", "utc"])
        .args(&times)
        .stdout(Stdio::piped())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    let mut first = [0_u8; 16];
    child.stdout.as_mut().unwrap().read_exact(&mut first).unwrap();
    drop(child.stdout.take());
    // A panic would exit with 101; a quiet end on the closed pipe exits with 0.
    let status = child.wait().unwrap();
    assert!(status.success(), "exit {status:?}");
}
