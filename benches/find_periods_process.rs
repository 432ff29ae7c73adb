//! Benchmark: `skyclock find-periods` whole process (start, read the light curve, fast GLS,
//! window sidelobes, refine and rate the peaks, write the result) side by side in one run
//! with astropy (`benches/astropy_find_periods.py`: read the same file, `LombScargle.power`
//! with `method="fast"` on the same grid, the same number of peaks with Baluev false-alarm
//! probabilities, write the peaks). N = 10⁵ invented points over 1000 d, M ≈ 10⁶
//! frequencies (0.001–100 c/d at oversampling 10), 5 peaks; once with the peaks alone and
//! once also writing the whole spectrum as CSV. Median of 3 runs each, with CPU time and
//! peak memory from `/usr/bin/time` when present.
//!
//! Then the reading of 10⁶-row light curves (CSV and Parquet) in process: the library's
//! reader (`survey::load::read_light_curve`: values and uncertainties from the table's
//! numbers, times parsed in place) against the previous path measured in the same run
//! (every column copied out as text, then parsed: `table::text_column` + `survey::input::assemble`).
//!
//! Run: `SKYCLOCK_BENCH_PYTHON=/path/to/python cargo bench --bench find_periods_process`
//! (`SKYCLOCK_BENCH_PYTHON` defaults to `python3`, which needs numpy, astropy and, for
//! Parquet, pyarrow; `SKYCLOCK_BENCH_ASTROPY=0` leaves the reference out).

use std::io::Write;
use std::path::Path;
use std::process::Command;
use std::time::Instant as Clock;

use polars::prelude::*;
use skyclock::arrival::ReferenceData;
use skyclock::arrival::table::{ClockSpec, ObserverSpec};
use skyclock::fit::random::SeededRng;
use skyclock::survey::input::{LightCurveColumns, assemble, parse_barycentric_times};
use skyclock::survey::load::{LightCurveSource, TimeOrigin, read_light_curve};
use skyclock::table::{read_table, text_column};

struct Run {
    wall_s: f64,
    cpu_s: Option<f64>,
    peak_mb: Option<f64>,
    stdout: String,
}

fn timed(program: &str, args: &[&str], dir: &Path) -> Run {
    let time_tool = Path::new("/usr/bin/time");
    let report = dir.join("time_report.txt");
    let mut command = if time_tool.exists() {
        let mut c = Command::new(time_tool);
        c.arg("-f").arg("%U %S %M").arg("-o").arg(&report).arg(program);
        c
    } else {
        Command::new(program)
    };
    command.args(args);
    let start = Clock::now();
    let out = command.output().expect("the program starts");
    let wall_s = start.elapsed().as_secs_f64();
    assert!(out.status.success(), "{program} failed:\n{}", String::from_utf8_lossy(&out.stderr));
    let fields: Vec<f64> = std::fs::read_to_string(&report)
        .ok()
        .and_then(|t| t.lines().last().map(|l| l.split_whitespace().filter_map(|v| v.parse().ok()).collect()))
        .unwrap_or_default();
    let _ = std::fs::remove_file(&report);
    let (cpu_s, peak_mb) =
        if fields.len() == 3 { (Some(fields[0] + fields[1]), Some(fields[2] / 1024.0)) } else { (None, None) };
    Run { wall_s, cpu_s, peak_mb, stdout: String::from_utf8_lossy(&out.stdout).to_string() }
}

/// The median-wall run of three.
fn median_of_3(mut f: impl FnMut() -> Run) -> Run {
    let mut runs: Vec<Run> = (0..3).map(|_| f()).collect();
    runs.sort_by(|a, b| a.wall_s.total_cmp(&b.wall_s));
    runs.swap_remove(1)
}

fn describe(run: &Run) -> String {
    let cpu = run.cpu_s.map(|c| format!("{c:.3} s CPU")).unwrap_or_else(|| "CPU n/a".into());
    let peak = run.peak_mb.map(|m| format!("{m:.0} MB")).unwrap_or_else(|| "memory n/a".into());
    format!("{:.3} s wall, {cpu}, {peak}", run.wall_s)
}

/// An invented light curve: `n` points at random over `span_d` days from JD 2460000.5,
/// a 0.2 mag sinusoid at 0.4934 c/d in unit noise; time, value, error.
fn light_curve(n: usize, span_d: f64, seed: u64) -> (Vec<f64>, Vec<f64>, Vec<f64>) {
    let mut rng = SeededRng::new(seed);
    let mut t: Vec<f64> = (0..n).map(|_| rng.uniform() * span_d).collect();
    t.sort_by(f64::total_cmp);
    t.dedup();
    let y = t.iter().map(|&x| 0.2 * (3.1 * x).sin() + rng.normal()).collect();
    let e = vec![1.0; t.len()];
    (t, y, e)
}

fn write_csv(path: &Path, t: &[f64], y: &[f64], e: &[f64]) {
    let mut out = std::io::BufWriter::new(std::fs::File::create(path).unwrap());
    writeln!(out, "time,value,error").unwrap();
    for i in 0..t.len() {
        writeln!(out, "{:.9},{:.6},{}", 2_460_000.5 + t[i], y[i], e[i]).unwrap();
    }
    // on disk before it is timed (no writeback of the input during the first runs)
    out.into_inner().expect("input written").sync_all().expect("input flushed");
}

fn write_parquet(path: &Path, t: &[f64], y: &[f64], e: &[f64]) {
    let jd: Vec<f64> = t.iter().map(|x| 2_460_000.5 + x).collect();
    let mut df = DataFrame::new_infer_height(vec![
        Column::new("time".into(), jd),
        Column::new("value".into(), y.to_vec()),
        Column::new("error".into(), e.to_vec()),
    ])
    .unwrap();
    ParquetWriter::new(std::fs::File::create(path).unwrap()).finish(&mut df).unwrap();
}

fn columns() -> LightCurveColumns {
    LightCurveColumns { time: "time".into(), value: "value".into(), error: Some("error".into()), band: None }
}

/// The library's reader, in process, median of 3, s.
fn read_now(path: &Path, reference: &ReferenceData) -> (f64, usize) {
    let request = LightCurveSource {
        path,
        columns: columns(),
        times: TimeOrigin::Clock("bjd_tdb".into()),
        observer: ObserverSpec::Geocentre,
        source: None,
    };
    let mut times: Vec<(f64, usize)> = (0..3)
        .map(|_| {
            let start = Clock::now();
            let (lc, _) = read_light_curve(&request, reference).expect("read");
            (start.elapsed().as_secs_f64(), lc.time_d.len())
        })
        .collect();
    times.sort_by(|a, b| a.0.total_cmp(&b.0));
    times[1]
}

/// The previous path (every column copied out as text, then parsed), median of 3, s.
fn read_previous(path: &Path, reference: &ReferenceData) -> f64 {
    let file = path.display().to_string();
    let clock = ClockSpec::parse_label("bjd_tdb").unwrap();
    let leap = reference.converter.leap_seconds().clone();
    let mut times: Vec<f64> = (0..3)
        .map(|_| {
            let start = Clock::now();
            let df = read_table(path, &["time"]).unwrap();
            let texts = text_column(&df, &file, "time").unwrap();
            let instants = parse_barycentric_times(&texts, &clock, &file, "time", &leap).unwrap();
            let values = text_column(&df, &file, "value").unwrap();
            let errors = text_column(&df, &file, "error").unwrap();
            let lc = assemble(&file, &columns(), &instants, &values, Some(&errors), None, &|i| i + 1).unwrap();
            assert!(!lc.time_d.is_empty());
            start.elapsed().as_secs_f64()
        })
        .collect();
    times.sort_by(f64::total_cmp);
    times[1]
}

fn json_number(text: &str, key: &str) -> f64 {
    let v: serde_json::Value = serde_json::from_str(text).expect("summary JSON");
    v["result"]["grid"][key].as_f64().expect("grid field")
}

fn main() {
    let python = std::env::var("SKYCLOCK_BENCH_PYTHON").unwrap_or_else(|_| "python3".into());
    let with_astropy = std::env::var("SKYCLOCK_BENCH_ASTROPY").map(|v| v != "0").unwrap_or(true);
    let dir = std::env::temp_dir().join(format!("skyclock_find_periods_bench_{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let bin = env!("CARGO_BIN_EXE_skyclock");
    let script = concat!(env!("CARGO_MANIFEST_DIR"), "/benches/astropy_find_periods.py");
    println!("find_periods_process: whole process, {} rayon threads in-process", rayon::current_num_threads());

    let (t, y, e) = light_curve(100_000, 1000.0, 1);
    let input = dir.join("lc_1e5.csv");
    write_csv(&input, &t, &y, &e);
    let summary = dir.join("peaks.json");
    let spectrum = dir.join("spectrum.csv");
    let mut args = vec![
        "find-periods",
        "--input",
        input.to_str().unwrap(),
        "--error-column",
        "error",
        "--max-freq-per-day",
        "100",
        "--oversampling",
        "10",
        "--kernel",
        "fast",
        "--peaks",
        "5",
        "--summary",
        summary.to_str().unwrap(),
        "--quiet",
    ];
    let ours = median_of_3(|| timed(bin, &args, &dir));
    let text = std::fs::read_to_string(&summary).unwrap();
    let (start, step, count) =
        (json_number(&text, "start_per_day"), json_number(&text, "step_per_day"), json_number(&text, "frequencies"));
    let v: serde_json::Value = serde_json::from_str(&text).unwrap();
    let top_ours = v["result"]["peaks"][0]["freq_per_day"].as_f64().unwrap();
    args.extend(["--output", spectrum.to_str().unwrap()]);
    let ours_spectrum = median_of_3(|| timed(bin, &args, &dir));
    println!("fast GLS, N = 1e5, M = {count} ({start:.6}..+{step:.3e} c/d), 5 peaks:");
    println!("  skyclock find-periods, peaks only: {}", describe(&ours));
    println!("  skyclock find-periods, + spectrum CSV: {}", describe(&ours_spectrum));
    if with_astropy {
        let (s0, s1, s2) = (format!("{start:.17e}"), format!("{step:.17e}"), format!("{count}"));
        let out_json = dir.join("astropy_peaks.json");
        let astro_spectrum = dir.join("astropy_spectrum.csv");
        let base = [script, input.to_str().unwrap(), &s0, &s1, &s2, "5", out_json.to_str().unwrap()];
        let reference = median_of_3(|| timed(&python, &base, &dir));
        let mut with_spectrum = base.to_vec();
        with_spectrum.push(astro_spectrum.to_str().unwrap());
        let reference_spectrum = median_of_3(|| timed(&python, &with_spectrum, &dir));
        let top_astropy: f64 = reference
            .stdout
            .lines()
            .next()
            .and_then(|l| l.split_whitespace().nth(1))
            .and_then(|v| v.parse().ok())
            .unwrap_or(f64::NAN);
        println!("  astropy, peaks only: {}", describe(&reference));
        println!("  astropy, + spectrum CSV: {}", describe(&reference_spectrum));
        println!(
            "  ratio astropy/skyclock, wall: {:.1}x peaks only, {:.1}x with the spectrum (target >= 15x)",
            reference.wall_s / ours.wall_s,
            reference_spectrum.wall_s / ours_spectrum.wall_s
        );
        if let (Some(a), Some(o)) = (reference.cpu_s, ours.cpu_s) {
            println!("  ratio astropy/skyclock, CPU, peaks only: {:.1}x", a / o);
        }
        println!(
            "  top peak: skyclock {top_ours:.8} c/d (refined), astropy {top_astropy:.8} c/d (grid); |difference| = {:.2} grid steps",
            (top_ours - top_astropy).abs() / step
        );
    }

    // reading 10^6 rows
    let reference = ReferenceData::load(None, None, None).expect("built-in reference data");
    let (t, y, e) = light_curve(1_000_000, 1000.0, 2);
    let csv = dir.join("lc_1e6.csv");
    write_csv(&csv, &t, &y, &e);
    let parquet = dir.join("lc_1e6.parquet");
    write_parquet(&parquet, &t, &y, &e);
    for (name, path) in [("CSV", &csv), ("Parquet", &parquet)] {
        let (now, rows) = read_now(path, &reference);
        let previous = read_previous(path, &reference);
        println!(
            "read {rows} rows from {name}: {now:.3} s; previous path (columns copied as text, then parsed) {previous:.3} s -> {:.2}x",
            previous / now
        );
    }
    let _ = std::fs::remove_dir_all(&dir);
}
