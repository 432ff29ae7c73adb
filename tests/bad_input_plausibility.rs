//! Plausibility of the times read (`table::plausibility`), end to end: day numbers in the
//! other convention than their clock label are refused with the row, the column, both
//! readings as calendar years and the label to use; day numbers far from 1900–2200 with no
//! better reading are read with a warning; a floating-point JD column (Parquet) coarser
//! than 1 µs is read with one warning giving the fix. Tables: the invented demo data sets
//! and invented light curves. The years are from the proleptic Gregorian calendar (MJD 0 =
//! 1858-11-17, common practice); the f64 spacing 2⁻³¹ d = 40.2 µs at JD 2.46e6 is IEEE 754
//! binary64 arithmetic.

#[path = "common/catalogue.rs"]
mod catalogue;
#[path = "common/cli.rs"]
mod cli;

use catalogue::{dataset, folder, owned, snapshot};
use polars::prelude::*;

/// Runs `args` in `dir`: (exit 0?, stdout, stderr); fails on a panic.
fn run(dir: &std::path::Path, args: &[String]) -> (bool, String, String) {
    let out = cli::skyclock().current_dir(dir).args(args).output().unwrap();
    let err = String::from_utf8_lossy(&out.stderr).into_owned();
    assert!(!err.contains("panicked"), "{err}");
    (out.status.success(), String::from_utf8_lossy(&out.stdout).into_owned(), err)
}

/// The demo radio arrival times with every time shifted by `shift` days.
fn shifted_toas(shift: f64) -> String {
    let text = dataset("veyra_beacon_radio_toas.csv");
    let mut lines = text.lines();
    let mut out = vec![lines.next().unwrap().to_string()];
    for l in lines {
        let (t, rest) = l.split_once(',').unwrap();
        out.push(format!("{:.11},{rest}", t.parse::<f64>().unwrap() + shift));
    }
    out.join("\n") + "\n"
}

fn fit_args(input: &str, clock: &str) -> Vec<String> {
    owned(&[
        "fit-timing",
        "--input",
        input,
        "--clock",
        clock,
        "--sites-file",
        "pulsar.toml",
        "--site",
        "Harrow Moss Radio Array",
        "--source-file",
        "pulsar.toml",
        "--model",
        "model.toml",
        "--output",
        "o.csv",
        "--model-output",
        "om.toml",
    ])
}

#[test]
fn jds_under_an_mjd_label_are_refused_with_the_label_to_use() {
    let d = folder(
        "plaus_jd_as_mjd",
        &[
            ("toas.csv", shifted_toas(2_400_000.5)),
            ("pulsar.toml", dataset("veyra_beacon.toml")),
            ("model.toml", dataset("veyra_beacon_start_model.toml")),
        ],
    );
    let before = snapshot(&d);
    let (ok, _, err) = run(&d, &fit_args("toas.csv", "mjd_utc"));
    assert!(!ok, "{err}");
    // MJD 2460152 is in the year 8594; JD 2460152.95 is 2023-07-31.
    for f in ["toas.csv", "row 1", "column 'time'", "read as mjd_utc is in the year 8594", "in 2023", "'jd_utc'"] {
        assert!(err.contains(f), "stderr lacks '{f}':\n{err}");
    }
    assert_eq!(before, snapshot(&d));
    // The same times under the label the message names are read.
    let (ok, out, err) = run(&d, &fit_args("toas.csv", "jd_utc"));
    assert!(ok && out.contains("fitted 6 parameters to 110 arrival times"), "{err}");
}

fn fold_args(input: &str, clock: &str, extra: &[&str]) -> Vec<String> {
    let mut v = owned(&[
        "fold-curve",
        "--input",
        input,
        "--time-column",
        "time",
        "--value-column",
        "mag",
        "--clock",
        clock,
        "--period-d",
        "0.37",
        "--output",
        "o.csv",
    ]);
    v.extend(owned(extra));
    v
}

/// An invented light curve: 60 points of a 0.37 d sinusoid, times `t0 + 0.0731 i` written
/// with `decimals` decimals.
fn light_curve(t0: f64) -> String {
    let mut s = String::from("time,mag\n");
    for i in 0..60 {
        let t = t0 + i as f64 * 0.0731;
        s.push_str(&format!("{t:.6},{:.5}\n", 12.0 + 0.1 * (std::f64::consts::TAU * t / 0.37).sin()));
    }
    s
}

#[test]
fn mjds_under_a_jd_label_and_a_row_in_the_wrong_convention_are_refused() {
    let d = folder("plaus_mjd_as_jd", &[("lc.csv", light_curve(60100.0))]);
    let (ok, _, err) = run(&d, &fold_args("lc.csv", "bjd_tdb", &[]));
    assert!(!ok, "{err}");
    for f in ["lc.csv", "row 1", "column 'time'", "read as bjd_tdb is in the year -4548", "in 2023", "'bmjd_tdb'"] {
        assert!(err.contains(f), "stderr lacks '{f}':\n{err}");
    }
    // One row of a timing table with its own clock label, given a JD under an MJD label.
    let minima = dataset("kx_inventa_minima.csv");
    let mut lines: Vec<String> = minima.lines().take(31).map(str::to_string).collect();
    lines[20] = "Kestrel Downs,C. Tansyworth,mjd_tt,primary,2452001.62718,0.0015".into();
    let d = folder(
        "plaus_one_row",
        &[("minima.csv", lines.join("\n") + "\n"), ("sites.toml", dataset("kx_inventa_sites.toml"))],
    );
    let args = owned(&[
        "timing-residuals",
        "--input",
        "minima.csv",
        "--time-column",
        "time",
        "--clock-column",
        "clock",
        "--sites-file",
        "sites.toml",
        "--site-column",
        "site",
        "--source-file",
        "sites.toml",
        "--error-column",
        "error_d",
        "--kind-column",
        "kind",
        "--epoch-bjd-tdb",
        "2459000.3456789",
        "--period-d",
        "0.83712345",
        "--output",
        "o.csv",
    ]);
    let (ok, _, err) = run(&d, &args);
    assert!(!ok, "{err}");
    for f in ["minima.csv", "row 20", "column 'time'", "read as mjd_tt", "'jd_tt'"] {
        assert!(err.contains(f), "stderr lacks '{f}':\n{err}");
    }
}

#[test]
fn far_times_without_a_better_reading_are_read_with_a_warning() {
    // BMJD 900000 (the year 4322) needs no ephemeris: read, with a warning (also under
    // --quiet, which keeps warnings).
    let d = folder("plaus_far", &[("lc.csv", light_curve(900_000.0))]);
    for quiet in [false, true] {
        let extra: &[&str] = if quiet { &["--quiet"] } else { &[] };
        let (ok, out, err) = run(&d, &fold_args("lc.csv", "bmjd_tdb", extra));
        assert!(ok, "{err}");
        assert_eq!(quiet, out.is_empty(), "{out}");
        for f in [
            "warning: lc.csv, column 'time'",
            "read as bmjd_tdb lie in the years 4322 … 4323",
            "1900 … 2200",
            "clock label",
        ] {
            assert!(err.contains(f), "stderr lacks '{f}':\n{err}");
        }
        assert_eq!(err.matches("warning:").count(), 1, "{err}");
    }
    // Modern times give no warning.
    let d = folder("plaus_modern", &[("lc.csv", light_curve(60_100.0))]);
    let (ok, _, err) = run(&d, &fold_args("lc.csv", "bmjd_tdb", &[]));
    assert!(ok && !err.contains("warning"), "{err}");
}

fn write_parquet(path: &std::path::Path, time: Vec<f64>) {
    let mag: Vec<f64> = time.iter().map(|t| 12.0 + 0.1 * (std::f64::consts::TAU * t / 0.37).sin()).collect();
    let mut df = df!("time" => time, "mag" => mag).unwrap();
    ParquetWriter::new(std::fs::File::create(path).unwrap()).finish(&mut df).unwrap();
}

#[test]
fn a_float64_jd_column_is_read_with_one_resolution_warning() {
    let d = folder("plaus_parquet", &[]);
    write_parquet(&d.join("jd.parquet"), (0..60).map(|i| 2_460_100.0 + i as f64 * 0.0731).collect());
    write_parquet(&d.join("mjd.parquet"), (0..60).map(|i| 60_100.0 + i as f64 * 0.0731).collect());
    let (ok, _, err) = run(&d, &fold_args("jd.parquet", "bjd_tdb", &[]));
    assert!(ok, "{err}");
    for f in
        ["warning: jd.parquet, column 'time'", "64-bit floating point", "resolves only 40.2 µs", "two columns", "MJD"]
    {
        assert!(err.contains(f), "stderr lacks '{f}':\n{err}");
    }
    assert_eq!(err.matches("warning:").count(), 1, "{err}");
    // An MJD stored as float64 resolves 0.9 µs at 60 100 d: no warning.
    let (ok, _, err) = run(&d, &fold_args("mjd.parquet", "bmjd_tdb", &[]));
    assert!(ok && !err.contains("warning"), "{err}");
}

#[test]
fn survey_batch_skips_a_source_whose_times_are_in_the_other_convention() {
    // Two invented sources in BJD_TDB; the second was written as MJDs.
    let mut s = String::from("source,bjd_tdb,mag\n");
    for (name, offset) in [("Alder-1", 0.0), ("Birch-2", -2_400_000.5)] {
        for i in 0..80 {
            let t = 2_460_100.0 + i as f64 * 0.173;
            s.push_str(&format!(
                "{name},{:.6},{:.5}\n",
                t + offset,
                12.0 + 0.2 * (std::f64::consts::TAU * t / 0.61).sin()
            ));
        }
    }
    let d = folder("plaus_survey", &[("survey.csv", s)]);
    let args = owned(&[
        "survey-batch",
        "--input",
        "survey.csv",
        "--time-column",
        "bjd_tdb",
        "--value-column",
        "mag",
        "--max-freq-per-day",
        "5",
        "--output",
        "o.csv",
    ]);
    let (ok, out, err) = run(&d, &args);
    assert!(ok, "{err}");
    let table = std::fs::read_to_string(d.join("o.csv")).unwrap();
    assert!(out.contains("2 sources (1 searched, 1 skipped)"), "{out}");
    for f in ["survey.csv, row 81, column 'bjd_tdb'", "read as bjd_tdb is in the year -4548", "'bmjd_tdb'"] {
        assert!(table.contains(f) || out.contains(f), "neither output nor stdout holds '{f}':\n{out}\n{table}");
    }
}

#[test]
fn survey_batch_warns_once_for_the_field_about_far_times_and_a_coarse_float_column() {
    // Two invented sources. As BMJD 900000 on (the year 4322): read, one warning for the
    // whole field naming the years. As float64 JDs in Parquet (40.2 µs at JD 2.46e6): one
    // warning with the fix. As modern text BJDs: no warning.
    let field = |offset: f64| {
        let mut source = Vec::new();
        let mut time = Vec::new();
        let mut mag = Vec::new();
        for name in ["Alder-1", "Birch-2"] {
            for i in 0..80 {
                let t = i as f64 * 0.173;
                source.push(name.to_string());
                time.push(offset + t);
                mag.push(12.0 + 0.2 * (std::f64::consts::TAU * t / 0.61).sin());
            }
        }
        (source, time, mag)
    };
    let csv = |offset: f64| {
        let (source, time, mag) = field(offset);
        let mut s = String::from("source,time,mag\n");
        for ((n, t), m) in source.iter().zip(&time).zip(&mag) {
            s.push_str(&format!("{n},{t:.6},{m:.5}\n"));
        }
        s
    };
    let d = folder("plaus_survey_field", &[("far.csv", csv(900_000.0)), ("modern.csv", csv(60_100.0))]);
    let (source, time, mag) = field(2_460_100.0);
    let mut df = df!("source" => source, "time" => time, "mag" => mag).unwrap();
    ParquetWriter::new(std::fs::File::create(d.join("jd.parquet")).unwrap()).finish(&mut df).unwrap();
    let args = |input: &str, clock: &str| {
        owned(&[
            "survey-batch",
            "--input",
            input,
            "--time-column",
            "time",
            "--clock",
            clock,
            "--value-column",
            "mag",
            "--max-freq-per-day",
            "5",
            "--output",
            "o.csv",
        ])
    };
    let (ok, out, err) = run(&d, &args("far.csv", "bmjd_tdb"));
    assert!(ok, "{err}");
    assert!(out.contains("2 sources (2 searched, 0 skipped)"), "{out}");
    for f in ["warning: far.csv, column 'time'", "read as bmjd_tdb lie in the years 4322 … 4323", "clock label"] {
        assert!(err.contains(f), "stderr lacks '{f}':\n{err}");
    }
    assert_eq!(err.matches("warning:").count(), 1, "{err}");
    let (ok, _, err) = run(&d, &args("jd.parquet", "bjd_tdb"));
    assert!(ok, "{err}");
    for f in ["warning: jd.parquet, column 'time'", "resolves only 40.2 µs", "two columns"] {
        assert!(err.contains(f), "stderr lacks '{f}':\n{err}");
    }
    assert_eq!(err.matches("warning:").count(), 1, "{err}");
    let (ok, _, err) = run(&d, &args("modern.csv", "bmjd_tdb"));
    assert!(ok && !err.contains("warning"), "{err}");
}
