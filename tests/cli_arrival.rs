//! The `barycentre` command end to end: outputs, provenance, and the bad inputs a user can
//! cause — each must fail with a message naming file, row and column, and write nothing.

use std::path::{Path, PathBuf};
use std::process::Command;

fn skyclock() -> Command {
    Command::new(env!("CARGO_BIN_EXE_skyclock"))
}

fn workdir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("skyclock-cli-{name}-{}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    d
}

fn run_barycentre(input: &Path, output: &Path, extra: &[&str]) -> std::process::Output {
    let mut cmd = skyclock();
    cmd.args(["barycentre", "--input"]).arg(input).args([
        "--time-column",
        "time",
        "--ra",
        "05:12:33.21",
        "--dec",
        "+21:07:44",
    ]);
    cmd.args(extra).arg("--output").arg(output);
    cmd.output().unwrap()
}

fn stderr(o: &std::process::Output) -> String {
    String::from_utf8_lossy(&o.stderr).to_string()
}

#[test]
fn corrects_a_table_and_records_provenance() {
    let d = workdir("ok");
    let input = d.join("t.csv");
    std::fs::write(&input, "time,mag\n2459000.123456789,12.1\n2459001.5,12.3\n").unwrap();
    let output = d.join("out.csv");
    let o = run_barycentre(&input, &output, &["--clock", "jd_utc", "--site-coordinates=-105.1,39.4,2150", "--json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let text = std::fs::read_to_string(&output).unwrap();
    let header = text.lines().next().unwrap();
    for col in
        ["time", "mag", "bjd_tdb", "roemer_delay_s", "einstein_delay_s", "shapiro_sun_delay_s", "total_correction_s"]
    {
        assert!(header.contains(col), "{header}");
    }
    let prov = std::fs::read_to_string(d.join("out.csv.provenance.json")).unwrap();
    assert!(prov.contains("DE440") && prov.contains("leap_seconds"), "{prov}");
    let summary: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(summary["correction"]["rows"], 2);
    // Parquet output with the same content: the same run written as Parquet must hold the
    // same columns in the same order and the same values, cell by cell (numbers to 1e-15
    // relative, i.e. the same double up to the CSV's shortest round-trip text; text equal).
    // Faults caught: a column dropped or renamed in one writer, rows reordered, a time
    // column written with fewer digits (ms of BJD lost) or as a different quantity.
    let pq = d.join("out.parquet");
    let o = run_barycentre(&input, &pq, &["--clock", "jd_utc", "--site-coordinates=-105.1,39.4,2150"]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert_same_content(&output, &pq);
}

/// Asserts that two tables (any formats skyclock reads) hold the same columns and cells:
/// numbers (cells that parse as numbers in both) to 1e-15 relative, other text equal.
fn assert_same_content(a: &Path, b: &Path) {
    use skyclock::table::{read_table, text_column};
    let da = read_table(a, &[]).unwrap();
    let db = read_table(b, &[]).unwrap();
    let names =
        |df: &polars::prelude::DataFrame| df.get_column_names().iter().map(|n| n.to_string()).collect::<Vec<_>>();
    assert_eq!(names(&da), names(&db), "columns of {} and {}", a.display(), b.display());
    assert_eq!(da.height(), db.height());
    for name in names(&da) {
        let ta = text_column(&da, &a.display().to_string(), &name).unwrap();
        let tb = text_column(&db, &b.display().to_string(), &name).unwrap();
        for (row, (x, y)) in ta.iter().zip(&tb).enumerate() {
            let parsed = (x.as_deref().map(str::parse::<f64>), y.as_deref().map(str::parse::<f64>));
            match parsed {
                (Some(Ok(u)), Some(Ok(v))) => {
                    assert!((u - v).abs() <= 1e-15 * u.abs().max(v.abs()), "column {name}, row {}: {u} vs {v}", row + 1)
                }
                _ => assert_eq!(x, y, "column {name}, row {}", row + 1),
            }
        }
    }
}

#[test]
fn bad_inputs_name_file_row_and_column_and_write_nothing() {
    let d = workdir("bad");
    let cases: &[(&str, &str, &[&str], &[&str])] = &[
        // (file content, description, extra args, expected message parts)
        ("time\n2459000.5\nnot-a-time\n", "unparseable", &["--clock", "jd_utc"], &["row 2", "'time'", "not-a-time"]),
        ("time\n2459000.5\nNaN\n", "nan", &["--clock", "jd_utc"], &["row 2", "'time'"]),
        (
            "time\n2017-12-31T23:59:60.5\n",
            "no leap second",
            &["--clock", "iso_utc"],
            &["row 1", "'time'", "leap second"],
        ),
        ("time\n2016-12-31T23:59:60.5\n", "real leap second is fine", &["--clock", "iso_utc"], &[]),
        ("time\n2433000.5\n", "utc before 1960", &["--clock", "jd_utc"], &["row 1", "1960"]),
        (
            "time\n2491000.5\n",
            "beyond the ephemeris",
            &["--clock", "jd_tt"],
            &["row 1", "'time'", "covers", "2101-01-01"],
        ),
        ("mag\n12.0\n", "missing column", &["--clock", "jd_utc"], &["column 'time' is missing", "mag"]),
        ("", "empty file", &["--clock", "jd_utc"], &["no data rows"]),
        ("time\n2459000.5\n", "unknown clock", &["--clock", "jd_ut7"], &["jd_ut7", "utc"]),
        (
            "time,clock\n2459000.5,jd_utc\n2459000.6,xjd\n",
            "bad clock cell",
            &["--clock-column", "clock"],
            &["row 2", "'clock'", "xjd"],
        ),
    ];
    for (k, (content, what, extra, expected)) in cases.iter().enumerate() {
        let input = d.join(format!("in{k}.csv"));
        std::fs::write(&input, content).unwrap();
        let output = d.join(format!("out{k}.csv"));
        let o = run_barycentre(&input, &output, extra);
        if expected.is_empty() {
            assert!(o.status.success(), "{what}: {}", stderr(&o));
            continue;
        }
        assert_eq!(o.status.code(), Some(1), "{what}: {}", stderr(&o));
        let msg = stderr(&o);
        assert!(msg.contains(&input.display().to_string()) || what.contains("clock"), "{what}: {msg}");
        for part in *expected {
            assert!(msg.contains(part), "{what}: missing '{part}' in: {msg}");
        }
        assert!(!output.exists(), "{what}: partial output written");
    }
}

#[test]
fn refuses_declination_beyond_90_and_output_over_input() {
    let d = workdir("refuse");
    let input = d.join("t.csv");
    std::fs::write(&input, "time\n2459000.5\n").unwrap();
    let o = skyclock()
        .args(["barycentre", "--input"])
        .arg(&input)
        .args(["--time-column", "time", "--clock", "jd_utc", "--ra", "10.0", "--dec", "95.0", "--output"])
        .arg(d.join("o.csv"))
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(1));
    assert!(stderr(&o).contains("declination"), "{}", stderr(&o));
    let o = run_barycentre(&input, &input, &["--clock", "jd_utc"]);
    assert_eq!(o.status.code(), Some(1));
    assert!(stderr(&o).contains("also an input"), "{}", stderr(&o));
    assert_eq!(std::fs::read_to_string(&input).unwrap(), "time\n2459000.5\n");
}

#[test]
fn usage_errors_exit_with_2_and_help_has_an_example() {
    let o = skyclock().args(["barycentre", "--no-such-option"]).output().unwrap();
    assert_eq!(o.status.code(), Some(2));
    let o = skyclock().args(["barycentre", "--help"]).output().unwrap();
    assert!(String::from_utf8_lossy(&o.stdout).contains("Example:"));
}

#[test]
fn convert_time_handles_the_leap_second() {
    // 2016-12-31T23:59:60.5 UTC = 2017-01-01T00:00:36.5 TAI (TAI−UTC 36 s that day, IERS Bulletin C).
    let o = skyclock()
        .args([
            "convert-time",
            "2016-12-31T23:59:60.5",
            "--format",
            "iso",
            "--scale",
            "utc",
            "--to-scale",
            "tai",
            "--json",
        ])
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["times"][0]["scales"]["tai"], "2017-01-01T00:00:36.500000000");
}

/// A dense table goes through the interpolation nodes by default and `--exact-per-row`
/// corrects every row on its own; the BJD_TDB columns agree to ≤ 1 ns (the exact twin is the
/// reference, itself checked against astropy 8.0.2 in tests/arrival_references.rs).
#[test]
fn exact_per_row_matches_the_default_node_path() {
    let d = workdir("nodes");
    let input = d.join("dense.csv");
    let mut text = String::from("time,mag\n");
    for k in 0..600 {
        text.push_str(&format!("2459000.{:09},12.0\n", 600_000_000 + k * 300_000));
    }
    std::fs::write(&input, text).unwrap();
    let site = ["--clock", "jd_utc", "--site-coordinates=-105.1,39.4,2150", "--json"];
    let (fast, exact) = (d.join("fast.csv"), d.join("exact.csv"));
    let o = run_barycentre(&input, &fast, &site);
    assert!(o.status.success(), "{}", stderr(&o));
    let summary: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(summary["correction"]["rows_interpolated"], 600);
    let mut with_flag = site.to_vec();
    with_flag.push("--exact-per-row");
    let o = run_barycentre(&input, &exact, &with_flag);
    assert!(o.status.success(), "{}", stderr(&o));
    let summary: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(summary["correction"]["rows_interpolated"], 0);
    let parts = |path: &Path| -> Vec<(f64, f64)> {
        let text = std::fs::read_to_string(path).unwrap();
        let mut lines = text.lines();
        let header: Vec<&str> = lines.next().unwrap().split(',').collect();
        let (a, b) = (
            header.iter().position(|c| *c == "bjd_tdb_jd1").unwrap(),
            header.iter().position(|c| *c == "bjd_tdb_jd2").unwrap(),
        );
        lines
            .map(|l| {
                let cells: Vec<&str> = l.split(',').collect();
                (cells[a].parse().unwrap(), cells[b].parse().unwrap())
            })
            .collect()
    };
    let (x, y) = (parts(&fast), parts(&exact));
    assert_eq!(x.len(), 600);
    let worst = x.iter().zip(&y).map(|(p, q)| (((p.0 - q.0) + (p.1 - q.1)) * 86_400.0).abs()).fold(0.0, f64::max);
    assert!(worst <= 1e-9, "{worst} s");
}
