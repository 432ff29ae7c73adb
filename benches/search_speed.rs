//! Speed of the search stage, as ratios against reference kernels timed in the same run.
//! Run: `cargo bench --bench search_speed` (release profile). Invented random data.
//! Where a reference would take minutes it is timed on a slice of the frequency grid and
//! scaled linearly (its cost is exactly proportional to the number of frequencies).

use skyclock::fit::SeededRng;
use skyclock::periodogram::bls::{BoxDurations, BoxOptions, box_search, box_search_direct, plan_box_grid_for};
use skyclock::periodogram::fast::{FastOptions, fast_sums};
use skyclock::periodogram::sums::{exact_sums, naive_sums};
use skyclock::periodogram::*;
use skyclock::survey::cascade::{CASCADE_DUTY_CYCLES, CascadeOptions, classify_series};
use std::fmt::Write as _;
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
    // `cargo bench --bench search_speed -- against-astropy` runs sections 4 and 5 only,
    // `-- box-against-astropy` section 4 only
    let args: Vec<String> = std::env::args().collect();
    if args.iter().any(|a| a == "against-astropy" || a == "box-against-astropy") {
        against_astropy(args.iter().any(|a| a == "box-against-astropy"));
        return;
    }

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
    // the library's one default edge resolution (DEFAULT_BINS_PER_DURATION = 10 bins per
    // shortest duration), the same as astropy's default oversample = 10
    let opts = BoxOptions::flux(vec![0.05, 0.1, 0.2]);
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
    // 4. and 5. against astropy in this same run, one core each
    against_astropy(false);
}

/// A transit-like light curve (flux) of `n` points over `span_d` days.
fn flux_curve(n: usize, span_d: f64, seed: u64) -> (Vec<f64>, Vec<f64>, Vec<f64>) {
    let mut rng = SeededRng::new(seed);
    let t: Vec<f64> = (0..n).map(|k| span_d * k as f64 / n as f64).collect();
    let y = t
        .iter()
        .map(|&x| {
            let ph = (x / 3.3).fract();
            1.0 - if ph < 0.02 { 0.005 } else { 0.0 } + 0.001 * rng.normal()
        })
        .collect();
    (t, y, vec![0.001; n])
}

/// Box search on one core against astropy's BoxLeastSquares on the same grid and
/// durations; the cascade on one core against the same cascade written with astropy calls.
/// The astropy side runs as `python3 benches/astropy_box_cascade.py` in this same run; when
/// python3 or astropy is missing the benchmark says so and fails (install: pip install astropy).
/// `box_only`: section 4 alone.
fn against_astropy(box_only: bool) {
    let dir = std::env::temp_dir().join(format!("skyclock_bench_astropy_{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    let one = rayon::ThreadPoolBuilder::new().num_threads(1).build().expect("one-thread pool");
    // 4. one curve: 27 d at 2-minute cadence, durations 0.04-0.16 d, periods 0.5-13.5 d
    let (t, y, e) = flux_curve(19_440, 27.0, 41);
    let s = Series::from_arrays(&t, &y, Some(&e)).expect("curve");
    let durations = vec![0.04, 0.08, 0.12, 0.16];
    let plan = plan_box_grid_for(27.0, 1.0 / 13.5, 2.0, &BoxDurations::Fixed(durations.clone()), 2.0, 1 << 31)
        .expect("box grid");
    let opts = BoxOptions::flux(durations.clone());
    let (t_box, _) = one.install(|| time(|| box_search(&s, &plan.grid, &opts).expect("box search")));
    let mut text = String::new();
    for i in 0..t.len() {
        writeln!(text, "{},{},{}", t[i], y[i], e[i]).unwrap();
    }
    std::fs::write(dir.join("box_curve.csv"), &text).unwrap();
    let freqs: Vec<String> = plan.grid.frequencies().iter().map(|f| format!("{f:.12}")).collect();
    std::fs::write(dir.join("box_freqs.csv"), freqs.join("\n")).unwrap();
    let ds: Vec<String> = durations.iter().map(|d| d.to_string()).collect();
    std::fs::write(dir.join("box_durations.csv"), ds.join("\n")).unwrap();
    println!("box search, one core, N = 19 440, {} frequencies x 4 durations: {t_box:.3} s", plan.grid.len);
    if box_only {
        let a_box = astropy_reference(&dir).0;
        println!(
            "  astropy BoxLeastSquares (fast, oversample 10), same grid: {a_box:.3} s -> ratio {:.1}x (target >= 5x)",
            a_box / t_box
        );
        let _ = std::fs::remove_dir_all(&dir);
        return;
    }

    // 5. a field of 20 curves: one season, 8 points a night, noise, some transits
    let mut field = String::new();
    let mut curves = Vec::new();
    for k in 0..20u64 {
        let mut rng = SeededRng::new(500 + k);
        let mut tt = Vec::new();
        for night in 0..100 {
            if rng.uniform() < 0.25 {
                continue;
            }
            for j in 0..8 {
                tt.push(night as f64 + 0.0375 * j as f64 + 0.01 * rng.uniform());
            }
        }
        let p = 1.0 + 4.0 * rng.uniform();
        let yy: Vec<f64> = tt
            .iter()
            .map(|&x| 13.0 + if (x / p).fract() < 0.03 && k % 2 == 0 { 0.02 } else { 0.0 } + 0.005 * rng.normal())
            .collect();
        for i in 0..tt.len() {
            writeln!(field, "{k},{},{},0.005", tt[i], yy[i]).unwrap();
        }
        curves.push(Series::from_arrays(&tt, &yy, Some(&vec![0.005; tt.len()])).expect("curve"));
    }
    std::fs::write(dir.join("field.csv"), &field).unwrap();
    let options = CascadeOptions::new(true);
    let t_base = curves[0].baseline_d();
    let gls = plan_grid(t_base, &GridRequest::up_to(10.0)).expect("grid").grid;
    let box_grid = plan_box_grid_for(
        t_base,
        1.0 / t_base,
        options.box_max_freq_per_day,
        &options.box_options.durations,
        options.box_oversampling,
        1 << 31,
    )
    .expect("box grid")
    .grid;
    let f: Vec<String> = gls.frequencies().iter().map(|f| format!("{f:.12}")).collect();
    std::fs::write(dir.join("field_gls_freqs.csv"), f.join("\n")).unwrap();
    let f: Vec<String> = box_grid.frequencies().iter().map(|f| format!("{f:.12}")).collect();
    std::fs::write(dir.join("field_box_freqs.csv"), f.join("\n")).unwrap();
    std::fs::write(dir.join("field_harmonics.txt"), options.harmonics.to_string()).unwrap();
    let (q0, q1, nq) = CASCADE_DUTY_CYCLES;
    let duty: Vec<String> = (0..nq).map(|j| (q0 * (q1 / q0).powf(j as f64 / (nq - 1) as f64)).to_string()).collect();
    std::fs::write(dir.join("field_duty.csv"), duty.join("\n")).unwrap();
    let (t_cascade, _) = one.install(|| {
        time(|| {
            curves
                .iter()
                .map(|c| {
                    let g = plan_grid(c.baseline_d(), &GridRequest::up_to(10.0)).expect("grid").grid;
                    classify_series(c, &g, Algorithm::Auto, 1 << 31, &options).expect("cascade")
                })
                .count()
        })
    });
    println!("cascade, one core, 20 curves x ~600 points: {t_cascade:.3} s");
    let (a_box, a_cascade, version) = astropy_reference(&dir);
    println!(
        "  astropy {version} BoxLeastSquares (fast, oversample 10), same grid: {a_box:.3} s -> ratio {:.1}x (target >= 5x)",
        a_box / t_box
    );
    println!(
        "  astropy {version} cascade (Lomb-Scargle, K-term Lomb-Scargle at the peaks, BoxLeastSquares), same grids: {a_cascade:.3} s -> ratio {:.1}x (target >= 5x)",
        a_cascade / t_cascade
    );
    let _ = std::fs::remove_dir_all(&dir);
}

/// Runs `benches/astropy_box_cascade.py` on the files in `dir`: (box search s, cascade s
/// or NaN when the field was not written, astropy version).
fn astropy_reference(dir: &std::path::Path) -> (f64, f64, String) {
    let python = std::env::var("SKYCLOCK_BENCH_PYTHON").unwrap_or_else(|_| "python3".into());
    let out = std::process::Command::new(&python)
        .arg("benches/astropy_box_cascade.py")
        .arg(dir)
        .env("OMP_NUM_THREADS", "1")
        .output();
    let out = match out {
        Ok(o) if o.status.success() => String::from_utf8_lossy(&o.stdout).to_string(),
        Ok(o) => panic!("the astropy reference failed (pip install astropy): {}", String::from_utf8_lossy(&o.stderr)),
        Err(e) => panic!("{python} not found for the astropy reference: {e}"),
    };
    let value = |key: &str| -> f64 {
        out.lines()
            .find_map(|l| l.strip_prefix(&format!("{key}=")))
            .and_then(|v| v.trim().parse().ok())
            .unwrap_or(f64::NAN)
    };
    let version = out.lines().find_map(|l| l.strip_prefix("astropy_version=")).unwrap_or("?").to_string();
    (value("astropy_box_s"), value("astropy_cascade_s"), version)
}
