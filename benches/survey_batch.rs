//! Survey-batch throughput: 1000 invented light curves × 1000 points, fast GLS on a
//! 10⁴-frequency grid, 3 peaks (grid values, no least-squares refinement: the batch default) with analytic FAPs. Reported as curves
//! per second and as ratios against references timed in the same run: (a) the same batch
//! with the exact kernel, (b) the same batch on one thread. Also the full streamed path
//! (CSV written to a temporary file, read back, grouped, searched). Target: ≥1000 curves/s.
//! The fast trigonometric sums alone are also timed against the previous fast kernel
//! (Lagrange extirpolation, kept in benches/reference/) on the same curve and grid.
//! Run: `cargo bench --bench survey_batch`.

#[path = "reference/previous_fast_kernel.rs"]
mod previous_fast_kernel;

use std::time::Instant;

use rayon::prelude::*;
use skyclock::arrival::table::ClockSpec;
use skyclock::fit::SeededRng;
use skyclock::periodogram::fast::{FastOptions, fast_sums};
use skyclock::periodogram::sums::{TrigSums, exact_sums};
use skyclock::periodogram::{Algorithm, Series, plan_grid};
use skyclock::survey::batch::{BatchColumns, BatchOptions, open_rows, run_batch};
use skyclock::survey::search::{SearchPlan, search_series};
use skyclock::time::LeapSecondTable;

const CURVES: usize = 1000;
const POINTS: usize = 1000;

fn curve(seed: u64) -> (Vec<f64>, Vec<f64>) {
    let mut rng = SeededRng::new(seed);
    let mut t: Vec<f64> = (0..POINTS).map(|_| rng.uniform() * 100.0).collect();
    t.sort_by(|a, b| a.total_cmp(b));
    let f = 0.5 + 5.0 * rng.uniform();
    let y = t.iter().map(|&x| 0.1 * (std::f64::consts::TAU * f * x).sin() + 0.05 * rng.normal()).collect();
    (t, y)
}

fn plan(algorithm: Algorithm, baseline_d: f64) -> SearchPlan {
    let mut p = SearchPlan::sinusoid_up_to(0.0);
    p.algorithm = algorithm;
    p.window_sidelobes = 0;
    p.peaks = 3;
    p.refine_peaks = false; // the batch default; see the refinement line below
    // 10⁴ frequencies: step 1/(5T), from 1/T.
    p.grid.max_freq_per_day = 1.0 / baseline_d + (10_000.0 - 1.0) / (5.0 * baseline_d);
    p
}

fn main() {
    println!(
        "survey-batch benchmark, {} rayon threads, {CURVES} curves x {POINTS} points",
        rayon::current_num_threads()
    );
    let series: Vec<Series> = (0..CURVES as u64)
        .map(|k| {
            let (t, y) = curve(k + 1);
            Series::from_arrays(&t, &y, None).expect("valid invented curve")
        })
        .collect();
    let run = |alg: Algorithm, n: usize| {
        let t0 = Instant::now();
        let found: usize = series[..n]
            .par_iter()
            .map(|s| search_series(s, &plan(alg, s.baseline_d())).map_or(0, |o| o.peaks.len()))
            .sum();
        (t0.elapsed().as_secs_f64(), found)
    };
    let m =
        search_series(&series[0], &plan(Algorithm::Fast, series[0].baseline_d())).expect("search").spectrum.grid.len;
    println!("grid: {m} frequencies");
    // Kernel only, one thread: the current fast sums against the previous kernel.
    {
        let one = rayon::ThreadPoolBuilder::new().num_threads(1).build().expect("pool");
        let s = &series[0];
        let grid = plan_grid(s.baseline_d(), &plan(Algorithm::Fast, s.baseline_d()).grid).expect("grid").grid;
        let w: Vec<f64> = s.weight().iter().map(|x| x / s.weight().iter().sum::<f64>()).collect();
        let h: Vec<f64> = s.value().iter().zip(&w).map(|(y, w)| y * w).collect();
        let reps = 200;
        let (t_new, t_old) = one.install(|| {
            let t0 = Instant::now();
            for _ in 0..reps {
                std::hint::black_box(fast_sums(s.time_d(), &w, &h, &grid, &FastOptions::default()));
            }
            let t_new = t0.elapsed().as_secs_f64();
            let t0 = Instant::now();
            for _ in 0..reps {
                std::hint::black_box(previous_fast_kernel::fast_sums(
                    s.time_d(),
                    &w,
                    &h,
                    &grid,
                    &previous_fast_kernel::PreviousOptions::default(),
                ));
            }
            (t_new, t0.elapsed().as_secs_f64())
        });
        let a = fast_sums(s.time_d(), &w, &h, &grid, &FastOptions::default());
        let b = previous_fast_kernel::fast_sums(
            s.time_d(),
            &w,
            &h,
            &grid,
            &previous_fast_kernel::PreviousOptions::default(),
        );
        let e = exact_sums(s.time_d(), &w, &h, &grid);
        let worst = |x: &TrigSums| {
            (0..grid.len)
                .map(|k| (x.c[k] - e.c[k]).abs().max((x.yc[k] - e.yc[k]).abs()).max((x.s2[k] - e.s2[k]).abs()))
                .fold(0.0f64, f64::max)
        };
        println!(
            "sums only, one thread, {POINTS} points x {} frequencies: current {:.3} ms, previous kernel {:.3} ms -> {:.2}x faster; max |error| vs exact: current {:.1e}, previous {:.1e}",
            grid.len,
            1e3 * t_new / reps as f64,
            1e3 * t_old / reps as f64,
            t_old / t_new,
            worst(&a),
            worst(&b)
        );
    }
    let (t_fast, n) = run(Algorithm::Fast, CURVES);
    let rate = CURVES as f64 / t_fast;
    println!(
        "fast kernel, in memory: {t_fast:.3} s -> {rate:.0} curves/s ({n} peaks) [target >= 1000/s: {}]",
        if rate >= 1000.0 { "met" } else { "missed" }
    );
    let sub = 100;
    let (t_exact, _) = run(Algorithm::Exact, sub);
    let exact_rate = sub as f64 / t_exact;
    println!(
        "reference exact kernel (first {sub} curves): {exact_rate:.0} curves/s -> fast is {:.1}x",
        rate / exact_rate
    );
    let pool = rayon::ThreadPoolBuilder::new().num_threads(1).build().expect("pool");
    let (t_one, _) = pool.install(|| run(Algorithm::Fast, sub));
    let one_rate = sub as f64 / t_one;
    println!(
        "reference one thread (first {sub} curves): {one_rate:.0} curves/s -> parallel speed-up {:.2}x",
        rate / one_rate
    );

    let t0 = Instant::now();
    let k = 20;
    for s in &series[..k] {
        let mut p = plan(Algorithm::Fast, s.baseline_d());
        p.refine_peaks = true;
        let _ = search_series(s, &p);
    }
    let refine_rate = k as f64 / t0.elapsed().as_secs_f64();
    println!("with least-squares refinement of 3 peaks (first {k} curves, one thread): {refine_rate:.1} curves/s");

    // Streamed path: write a CSV, read it back through the batch reader.
    let path = std::env::temp_dir().join(format!("skyclock_bench_batch_{}.csv", std::process::id()));
    let mut text = String::from("source,bjd,mag\n");
    for (k, s) in series.iter().enumerate() {
        for (t, y) in s.time_d().iter().zip(s.value()) {
            text.push_str(&format!("s{k},{:.8},{y:.6}\n", 2460000.0 + t));
        }
    }
    std::fs::write(&path, text).expect("write temporary CSV");
    let columns = BatchColumns {
        source: "source".into(),
        time: "bjd".into(),
        value: "mag".into(),
        error: None,
        band: None,
        ra_deg: None,
        dec_deg: None,
    };
    let options = BatchOptions { clock: ClockSpec::parse_label("bjd_tdb").expect("label"), batch_points: 200_000 };
    let p = plan(Algorithm::Fast, 100.0);
    let leap = LeapSecondTable::builtin();
    let t0 = Instant::now();
    let mut rows = open_rows(&path, &columns, 250_000).expect("open");
    let mut count = 0usize;
    let summary = run_batch(
        rows.as_mut(),
        "bench.csv",
        &columns,
        &options,
        &p,
        &leap,
        &mut |r| {
            count += r.len();
            Ok(())
        },
        &|_, _| {},
    )
    .expect("batch");
    let t_stream = t0.elapsed().as_secs_f64();
    let _ = std::fs::remove_file(&path);
    println!(
        "streamed from CSV ({} rows): {t_stream:.3} s -> {:.0} curves/s ({} searched, {} skipped); reading+grouping overhead vs in-memory {:.2}x",
        summary.rows,
        count as f64 / t_stream,
        summary.searched,
        summary.skipped,
        t_stream / t_fast
    );
}
