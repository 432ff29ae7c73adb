//! The search commands run as a user runs them, on invented light curves (invented stars,
//! seeded noise): recovery of known periods and frequencies, and clear errors naming file,
//! row and column for bad input. Source of the expected values: the invented signals.

use std::path::{Path, PathBuf};
use std::process::Command;

use skyclock::fit::SeededRng;

fn dir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("skyclock_cli_search_{name}_{}", std::process::id()));
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

/// Invented star: nightly runs over 40 nights, sum of sinusoids, seeded noise.
fn light_curve(seed: u64, freqs: &[(f64, f64)], noise: f64) -> Vec<(f64, f64, f64)> {
    let mut rng = SeededRng::new(seed);
    let mut rows = Vec::new();
    for night in 0..40 {
        for k in 0..12 {
            let t = 2460100.3 + night as f64 + 0.025 * k as f64 + 0.004 * rng.uniform();
            let x = t - 2460100.0;
            let y: f64 = freqs.iter().map(|(f, a)| a * (std::f64::consts::TAU * f * x).sin()).sum::<f64>()
                + noise * rng.normal()
                + 12.0;
            rows.push((t, y, noise));
        }
    }
    rows
}

fn write_csv(path: &Path, rows: &[(f64, f64, f64)]) {
    let mut s = String::from("bjd,mag,mag_err\n");
    for (t, y, e) in rows {
        s.push_str(&format!("{t:.8},{y:.6},{e}\n"));
    }
    std::fs::write(path, s).expect("write csv");
}

#[test]
fn find_periods_recovers_an_invented_pulsator() {
    let d = dir("find");
    let input = d.join("vx_invented.csv");
    write_csv(&input, &light_curve(11, &[(3.71, 0.1)], 0.02));
    let spectrum = d.join("spectrum.csv");
    let peaks = d.join("peaks.json");
    let (code, out, err) = run(&[
        "find-periods",
        "--input",
        input.to_str().unwrap(),
        "--time-column",
        "bjd",
        "--value-column",
        "mag",
        "--error-column",
        "mag_err",
        "--max-freq-per-day",
        "12",
        "--output",
        spectrum.to_str().unwrap(),
        "--summary",
        peaks.to_str().unwrap(),
        "--figure",
        d.join("p.svg").to_str().unwrap(),
        "--json",
    ]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).expect("json on stdout");
    let top = &v["result"]["peaks"][0];
    let f = top["freq_per_day"].as_f64().unwrap();
    assert!((f - 3.71).abs() < 3.0 * top["freq_err_per_day"].as_f64().unwrap().max(1e-4), "{f}");
    assert!(top["false_alarm_probability"].as_f64().unwrap() < 1e-10);
    // 40 nights from one site: the ±1 c/d aliases are among the next peaks and are marked.
    let notes: Vec<String> = v["result"]["peaks"]
        .as_array()
        .unwrap()
        .iter()
        .flat_map(|p| p["alias_notes"].as_array().unwrap().iter().map(|n| n.to_string()))
        .collect();
    assert!(notes.iter().any(|n| n.contains("sidereal day") || n.contains("window sidelobe")), "{notes:?}");
    let text = std::fs::read_to_string(&spectrum).unwrap();
    assert!(text.starts_with("freq_per_day,period_d,power,amplitude"));
    assert!(d.join("spectrum.csv.provenance.json").exists());
    assert!(std::fs::read_to_string(&peaks).unwrap().contains("\"provenance\""));
    let svg = std::fs::read_to_string(d.join("p.svg")).unwrap();
    assert!(svg.contains("frequency (cycles per day)"));
    // The figure marks the peaks and, as its own legend entry, the aliases of the top peak.
    assert!(
        svg.contains(skyclock::plot::search::PEAK_LAYER_LABEL)
            && svg.contains(skyclock::plot::search::ALIAS_LAYER_LABEL)
    );
}

#[test]
fn box_method_finds_an_invented_transit() {
    let d = dir("box");
    let input = d.join("transit_invented.csv");
    // Invented space-photometry-like sampling: every 0.01 d for 30 d, flux noise 0.001.
    let mut rng = SeededRng::new(5);
    let mut rows: Vec<(f64, f64, f64)> =
        (0..3000).map(|i| (2460100.0 + 0.01 * i as f64, 1.0 + 0.001 * rng.normal(), 0.001)).collect();
    let (p, dur, t0) = (2.345, 0.1, 2460101.0);
    for r in rows.iter_mut() {
        let ph = ((r.0 - t0) / p).rem_euclid(1.0);
        if ph < dur / p * 0.5 || ph > 1.0 - dur / p * 0.5 {
            r.1 -= 0.01;
        }
    }
    write_csv(&input, &rows);
    let (code, out, err) = run(&[
        "find-periods",
        "--input",
        input.to_str().unwrap(),
        "--time-column",
        "bjd",
        "--value-column",
        "mag",
        "--method",
        "box",
        "--brightness",
        "flux",
        "--durations-d",
        "0.05,0.1,0.15",
        "--max-freq-per-day",
        "2",
        "--json",
    ]);
    assert_eq!(code, 0, "{err}\n{out}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let b = &v["result"]["box"];
    assert!((b["period_d"].as_f64().unwrap() - p).abs() < 0.01, "{b}");
    assert!((b["depth"].as_f64().unwrap() - 0.01).abs() < 0.002, "{b}");
}

#[test]
fn fold_and_extract_frequencies() {
    let d = dir("fold");
    let input = d.join("dsct_invented.csv");
    write_csv(&input, &light_curve(3, &[(9.123, 0.05), (11.871, 0.02)], 0.003));
    let binned = d.join("binned.csv");
    let (code, out, err) = run(&[
        "fold-curve",
        "--input",
        input.to_str().unwrap(),
        "--time-column",
        "bjd",
        "--value-column",
        "mag",
        "--error-column",
        "mag_err",
        "--period-d",
        &format!("{}", 1.0 / 9.123),
        "--refine-harmonics",
        "1",
        "--bins",
        "20",
        "--binned-output",
        binned.to_str().unwrap(),
        "--figure",
        d.join("f.png").to_str().unwrap(),
        "--json",
    ]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert!((v["period_d"].as_f64().unwrap() - 1.0 / 9.123).abs() < 1e-5);
    assert_eq!(std::fs::read_to_string(&binned).unwrap().lines().count(), 21);
    assert!(std::fs::metadata(d.join("f.png")).unwrap().len() > 1000);
    // The SVG form of the same figure carries the residuals panel below the folded curve.
    let (code, _, err) = run(&[
        "fold-curve",
        "--input",
        input.to_str().unwrap(),
        "--time-column",
        "bjd",
        "--value-column",
        "mag",
        "--error-column",
        "mag_err",
        "--period-d",
        &format!("{}", 1.0 / 9.123),
        "--bins",
        "20",
        "--figure",
        d.join("f.svg").to_str().unwrap(),
        "--quiet",
    ]);
    assert_eq!(code, 0, "{err}");
    let svg = std::fs::read_to_string(d.join("f.svg")).unwrap();
    // A column named "mag" is read as magnitudes (no --brightness given); both panels share
    // the phase axis (its label drawn twice, and once per panel in the figure data).
    let drawn = |text: &str| {
        svg.split("<text")
            .skip(1)
            .filter(|chunk| {
                chunk.find('>').and_then(|o| chunk[o + 1..].split("</text>").next()).map(str::trim) == Some(text)
            })
            .count()
    };
    assert!(drawn("residual, mag (mag)") == 1 && drawn("phase (cycles)") == 2);
    let table = d.join("freqs.csv");
    let (code, out, err) = run(&[
        "extract-frequencies",
        "--input",
        input.to_str().unwrap(),
        "--time-column",
        "bjd",
        "--value-column",
        "mag",
        "--error-column",
        "mag_err",
        "--max-freq-per-day",
        "20",
        "--output",
        table.to_str().unwrap(),
        "--json",
    ]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let f: Vec<f64> =
        v["frequencies"].as_array().unwrap().iter().map(|x| x["freq_per_day"].as_f64().unwrap()).collect();
    assert!(f.len() >= 2, "{f:?}");
    assert!((f[0] - 9.123).abs() < 1e-3 && (f[1] - 11.871).abs() < 1e-3, "{f:?}");
}

/// Rows of an invented light curve: (time, value, error).
type Rows = Vec<(f64, f64, f64)>;

#[test]
fn bad_input_names_file_row_and_column() {
    let d = dir("bad");
    let good = light_curve(1, &[(2.0, 0.1)], 0.01);
    let case = |name: &str, edit: &dyn Fn(&mut Rows), extra: &[&str], expect: &[&str]| {
        let mut rows = good.clone();
        edit(&mut rows);
        let path = d.join(name);
        write_csv(&path, &rows);
        let mut args = vec![
            "find-periods",
            "--input",
            path.to_str().unwrap(),
            "--time-column",
            "bjd",
            "--value-column",
            "mag",
            "--error-column",
            "mag_err",
        ];
        args.extend_from_slice(extra);
        let (code, _, err) = run(&args);
        assert_eq!(code, 1, "{name}: {err}");
        assert!(!err.contains("panicked"), "{err}");
        for e in expect {
            assert!(err.contains(e), "{name}: expected '{e}' in: {err}");
        }
    };
    case("zero_err.csv", &|r| r[6].2 = 0.0, &[], &["zero_err.csv", "row 7", "column 'mag_err'"]);
    case("unsorted.csv", &|r| r.swap(9, 10), &[], &["row 11", "column 'bjd'", "sort"]);
    case("duplicate.csv", &|r| r[4].0 = r[3].0, &[], &["row 5", "repeats row 4"]);
    case("constant.csv", &|r| r.iter_mut().for_each(|x| x.1 = 5.0), &[], &["constant"]);
    case("few.csv", &|r| *r = vec![r[0], r[100], r[200]], &[], &["needs at least 4 usable points"]);
    case("range.csv", &|_| (), &["--min-freq-per-day", "0.001"], &["baseline"]);
    // a non-number cell
    let path = d.join("text.csv");
    std::fs::write(&path, "bjd,mag,mag_err\n2460000.1,1.0,0.1\n2460000.2,abc,0.1\n").unwrap();
    let (code, _, err) =
        run(&["find-periods", "--input", path.to_str().unwrap(), "--time-column", "bjd", "--value-column", "mag"]);
    assert_eq!(code, 1);
    assert!(err.contains("row 2, column 'mag'"), "{err}");
    // output over the input is refused
    let path = d.join("self.csv");
    write_csv(&path, &good);
    let (code, _, err) = run(&[
        "find-periods",
        "--input",
        path.to_str().unwrap(),
        "--time-column",
        "bjd",
        "--value-column",
        "mag",
        "--output",
        path.to_str().unwrap(),
    ]);
    assert_eq!(code, 1);
    assert!(err.contains("also an input"), "{err}");
}

#[test]
fn survey_batch_reports_bad_sources_and_goes_on() {
    let d = dir("batch");
    let input = d.join("field_invented.csv");
    let mut s = String::from("star,bjd,mag,mag_err\n");
    let periods = [0.7, 1.3, 2.9];
    for (k, p) in periods.iter().enumerate() {
        for (t, y, e) in light_curve(20 + k as u64, &[(1.0 / p, 0.1)], 0.01) {
            s.push_str(&format!("inv-{k},{t:.8},{y:.6},{e}\n"));
        }
    }
    for (t, _, e) in light_curve(99, &[], 0.01).iter().take(50) {
        s.push_str(&format!("flat-star,{t:.8},10.0,{e}\n"));
    }
    s.push_str("inv-0,2460200.1,12.0,0.01\n"); // not contiguous
    std::fs::write(&input, s).unwrap();
    let output = d.join("periods.csv");
    let (code, out, err) = run(&[
        "survey-batch",
        "--input",
        input.to_str().unwrap(),
        "--source-column",
        "star",
        "--time-column",
        "bjd",
        "--value-column",
        "mag",
        "--error-column",
        "mag_err",
        "--max-freq-per-day",
        "3",
        "--peaks",
        "2",
        "--refine-peaks",
        "--output",
        output.to_str().unwrap(),
        "--json",
    ]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["summary"]["sources"], 5);
    assert_eq!(v["summary"]["skipped"], 2);
    let text = std::fs::read_to_string(&output).unwrap();
    let lines: Vec<&str> = text.lines().collect();
    assert_eq!(lines.len(), 6);
    let header: Vec<&str> = lines[0].split(',').collect();
    let col = |name: &str| header.iter().position(|h| *h == name).unwrap();
    for (k, p) in periods.iter().enumerate() {
        let cells: Vec<&str> = lines[k + 1].split(',').collect();
        let got: f64 = cells[col("period_d_1")].parse().unwrap();
        assert!((got - p).abs() < 0.01 * p, "source {k}: {got}");
    }
    assert!(lines[4].contains("skipped") && lines[4].contains("constant"), "{}", lines[4]);
    assert!(lines[5].contains("not contiguous"), "{}", lines[5]);
}

#[test]
fn survey_batch_reads_parquet_by_slices() {
    // The same invented field as above, stored as Parquet (written through our own table
    // writer), must give the same periods through the Parquet streaming path.
    let d = dir("batch-parquet");
    let csv = d.join("field_invented.csv");
    let mut s = String::from("star,bjd,mag,mag_err\n");
    let periods = [0.7, 1.3, 2.9];
    for (k, p) in periods.iter().enumerate() {
        for (t, y, e) in light_curve(40 + k as u64, &[(1.0 / p, 0.1)], 0.01) {
            s.push_str(&format!("inv-{k},{t:.8},{y:.6},{e}\n"));
        }
    }
    for (t, _, e) in light_curve(98, &[], 0.01).iter().take(50) {
        s.push_str(&format!("flat-star,{t:.8},10.0,{e}\n"));
    }
    std::fs::write(&csv, s).unwrap();
    let mut df = skyclock::table::read_table(&csv, &["star", "bjd"]).unwrap();
    let parquet = d.join("field_invented.parquet");
    skyclock::table::write_table(&mut df, &parquet, &skyclock::table::Provenance::new("test"), &[csv.as_path()])
        .unwrap();
    let output = d.join("periods.csv");
    let (code, out, err) = run(&[
        "survey-batch",
        "--input",
        parquet.to_str().unwrap(),
        "--source-column",
        "star",
        "--time-column",
        "bjd",
        "--value-column",
        "mag",
        "--error-column",
        "mag_err",
        "--max-freq-per-day",
        "3",
        "--peaks",
        "1",
        "--output",
        output.to_str().unwrap(),
        "--json",
    ]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["summary"]["sources"], 4);
    assert_eq!(v["summary"]["skipped"], 1);
    let text = std::fs::read_to_string(&output).unwrap();
    let lines: Vec<&str> = text.lines().collect();
    let header: Vec<&str> = lines[0].split(',').collect();
    let col = |name: &str| header.iter().position(|h| *h == name).unwrap();
    for (k, p) in periods.iter().enumerate() {
        let cells: Vec<&str> = lines[k + 1].split(',').collect();
        let got: f64 = cells[col("period_d_1")].parse().unwrap();
        assert!((got - p).abs() < 0.01 * p, "source {k}: {got}");
    }
}

#[test]
fn survey_batch_carries_utc_times_with_source_positions() {
    // Invented field in JD UTC at an invented site: positions per source carry the times
    // to BJD_TDB; without the position columns the command refuses with a clear message.
    let d = dir("batch-utc");
    let csv = d.join("field_utc_invented.csv");
    let mut s = String::from("star,jd,mag,mag_err,ra_deg,dec_deg\n");
    for (k, (p, ra, dec)) in [(0.7, 45.0, 30.0), (1.3, 200.0, -40.0)].iter().enumerate() {
        for (t, y, e) in light_curve(70 + k as u64, &[(1.0 / p, 0.1)], 0.01) {
            s.push_str(&format!("inv-{k},{t:.8},{y:.6},{e},{ra},{dec}\n"));
        }
    }
    std::fs::write(&csv, s).unwrap();
    let output = d.join("periods.csv");
    let base = [
        "survey-batch",
        "--input",
        csv.to_str().unwrap(),
        "--source-column",
        "star",
        "--time-column",
        "jd",
        "--clock",
        "jd_utc",
        "--value-column",
        "mag",
        "--error-column",
        "mag_err",
        "--max-freq-per-day",
        "3",
        "--peaks",
        "1",
        "--output",
        output.to_str().unwrap(),
        "--json",
    ];
    let (code, _, err) = run(&base);
    assert_eq!(code, 1);
    assert!(err.contains("right-ascension and declination"), "{err}");
    let mut args = base.to_vec();
    args.extend(["--ra-column", "ra_deg", "--dec-column", "dec_deg", "--site-coordinates=-41.2345,-31.5432,1480"]);
    let (code, out, err) = run(&args);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["summary"]["searched"], 2);
    assert!(v["times"].as_str().unwrap().contains("carried from jd_utc"), "{}", v["times"]);
}
