//! Speed of the search stage, as ratios against reference kernels timed in the same run.
//! Run: `cargo bench --bench search_speed` (release profile). Invented random data.
//! Where a reference would take minutes it is timed on a slice of the frequency grid and
//! scaled linearly (its cost is exactly proportional to the number of frequencies).

use skyclock::fit::SeededRng;
use skyclock::periodogram::bls::{BoxOptions, box_search, box_search_direct};
use skyclock::periodogram::fast::{FastOptions, fast_sums};
use skyclock::periodogram::sums::{exact_sums, naive_sums};
use skyclock::periodogram::*;
use std::time::Instant;

fn series(n: usize, span_d: f64, seed: u64) -> Series {
    let mut rng = SeededRng::new(seed);
    let mut t: Vec<f64> = (0..n).map(|_| rng.uniform() * span_d).collect();
    t.sort_by(|a, b| a.total_cmp(b));
    t.dedup();
    let y: Vec<f64> = t.iter().map(|&x| (x * 3.1).sin() + rng.normal()).collect();
    let e = vec![1.0; t.len()];
    Series::from_arrays(&t, &y, Some(&e)).expect("valid invented series")
}

fn time<T>(f: impl FnOnce() -> T) -> (f64, T) {
    let t0 = Instant::now();
    let r = f();
    (t0.elapsed().as_secs_f64(), r)
}

fn weights(s: &Series) -> (Vec<f64>, Vec<f64>) {
    let sw: f64 = s.weight().iter().sum();
    let w: Vec<f64> = s.weight().iter().map(|v| v / sw).collect();
    let h: Vec<f64> = w.iter().zip(s.value()).map(|(a, b)| a * b).collect();
    (w, h)
}

fn main() {
    let threads = rayon::current_num_threads();
    println!("search-stage benchmark, {threads} rayon threads");

    // 1. fast GLS, N = 1e5, M = 1e6
    let s = series(100_000, 1000.0, 1);
    let grid = FrequencyGrid::new(0.001, 1e-4, 1_000_000).expect("grid");
    let (t_fast, spec) =
        time(|| GeneralisedLombScargle { algorithm: Algorithm::Fast }.evaluate(&s, &grid).expect("fast GLS"));
    let (w, h) = weights(&s);
    let sub = FrequencyGrid::new(0.001, 1e-4, 200).expect("grid");
    let (t_naive_sub, _) = time(|| naive_sums(s.time_d(), &w, &h, &sub));
    let t_naive = t_naive_sub * grid.len as f64 / sub.len as f64;
    let (t_exact_sub, _) =
        time(|| exact_sums(s.time_d(), &w, &h, &FrequencyGrid::new(0.001, 1e-4, 2048).expect("grid")));
    let t_exact_big = t_exact_sub * grid.len as f64 / 2048.0;
    println!("fast GLS    N=1e5 M=1e6: {t_fast:.3} s (peak power {:.4})", spec.argmax().map_or(0.0, |x| x.1));
    println!(
        "  reference naive sin/cos loop (scaled from 200 freqs): {t_naive:.1} s  -> ratio {:.0}x",
        t_naive / t_fast
    );
    println!(
        "  reference exact recurrence kernel (scaled from 2048 freqs): {t_exact_big:.1} s  -> ratio {:.0}x",
        t_exact_big / t_fast
    );
    let (t_sums_only, _) = time(|| fast_sums(s.time_d(), &w, &h, &grid, &FastOptions::default()));
    println!("  of which trigonometric sums: {t_sums_only:.3} s");

    // 2. exact GLS, N = 1e3, M = 1e5
    let s = series(1000, 100.0, 2);
    let grid = FrequencyGrid::new(0.01, 1e-3, 100_000).expect("grid");
    let (t_exact, _) =
        time(|| GeneralisedLombScargle { algorithm: Algorithm::Exact }.evaluate(&s, &grid).expect("exact GLS"));
    let (w, h) = weights(&s);
    let (t_naive, _) = time(|| naive_sums(s.time_d(), &w, &h, &grid));
    let one = rayon::ThreadPoolBuilder::new().num_threads(1).build().expect("pool");
    let (t_exact_1, _) = time(|| {
        one.install(|| GeneralisedLombScargle { algorithm: Algorithm::Exact }.evaluate(&s, &grid).expect("exact GLS"))
    });
    println!("exact GLS   N=1e3 M=1e5: {t_exact:.3} s ({t_exact_1:.3} s on 1 thread)");
    println!(
        "  reference naive sin/cos loop (full): {t_naive:.2} s  -> ratio {:.1}x ({:.1}x single-threaded)",
        t_naive / t_exact,
        t_naive / t_exact_1
    );

    // 2b. many small light curves (survey batch shape): 1000 curves x 1000 points, 1e4 freqs
    let curves: Vec<Series> = (0..1000).map(|i| series(1000, 100.0, 100 + i)).collect();
    let grid = FrequencyGrid::new(0.01, 1e-3, 10_000).expect("grid");
    let (t_batch, _) = time(|| {
        use rayon::prelude::*;
        curves
            .par_iter()
            .map(|s| GeneralisedLombScargle::default().evaluate(s, &grid).map(|p| p.argmax()))
            .collect::<Vec<_>>()
    });
    let (t_batch_exact, _) = time(|| {
        use rayon::prelude::*;
        curves[..100]
            .par_iter()
            .map(|s| GeneralisedLombScargle { algorithm: Algorithm::Exact }.evaluate(s, &grid).map(|p| p.argmax()))
            .collect::<Vec<_>>()
    });
    println!(
        "batch GLS   1000 curves x N=1e3, M=1e4 (automatic kernel): {t_batch:.3} s = {:.0} curves/s",
        1000.0 / t_batch
    );
    println!(
        "  reference exact kernel (100 curves, scaled): {:.3} s -> ratio {:.1}x",
        t_batch_exact * 10.0,
        t_batch_exact * 10.0 / t_batch
    );

    // 3. box least squares, N = 1e4, 2e4 periods x 3 durations
    let s = series(10_000, 200.0, 3);
    let grid = FrequencyGrid::new(1.0 / 20.0, (1.0 / 0.5 - 1.0 / 20.0) / 20_000.0, 20_000).expect("grid");
    // 10 phase bins per shortest duration: the same box-edge resolution as astropy's default
    let opts = BoxOptions { durations_d: vec![0.05, 0.1, 0.2], bins_per_duration: 10, values_are_magnitudes: false };
    let (t_bls, _) = time(|| box_search(&s, &grid, &opts).expect("box search"));
    let sub = FrequencyGrid::new(grid.start_per_day, grid.step_per_day * 1000.0, 20).expect("grid");
    let (t_direct_sub, _) = time(|| box_search_direct(&s, &sub, &opts).expect("direct box search"));
    // the direct cost grows with the number of bins ∝ period: scale by mean 1/f over the grid
    let mean_p_grid: f64 = (0..grid.len).map(|k| 1.0 / grid.freq_per_day(k)).sum::<f64>() / grid.len as f64;
    let mean_p_sub: f64 = (0..sub.len).map(|k| 1.0 / sub.freq_per_day(k)).sum::<f64>() / sub.len as f64;
    let t_direct = t_direct_sub * (grid.len as f64 / sub.len as f64) * (mean_p_grid / mean_p_sub);
    println!("box search  N=1e4 2e4 periods x 3 durations: {t_bls:.3} s");
    println!(
        "  reference direct sums per trial box (scaled from 20 periods): {t_direct:.0} s  -> ratio {:.0}x",
        t_direct / t_bls
    );
}
