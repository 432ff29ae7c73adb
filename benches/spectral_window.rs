//! Benchmark: the spectral window on the fast GLS benchmark's shape (N = 10⁵ points over
//! 1000 d, M = 10⁶ frequencies), against two references measured in the same run: the fast
//! generalised Lomb–Scargle periodogram on the same grid (what the window is an extra to in
//! `find-periods`), and the window computed from the periodogram's full set of sums (the
//! previous path: weight and data sums at f and weight sums at 2f). Median of 3 runs each.
//! Run: `cargo bench --bench spectral_window`.

use std::time::Instant as Clock;

use skyclock::fit::random::SeededRng;
use skyclock::periodogram::{
    Algorithm, FrequencyGrid, GeneralisedLombScargle, Periodogram, Series, SpectralWindow, compute_sums,
};

fn median_s(mut f: impl FnMut()) -> f64 {
    let mut times: Vec<f64> = (0..3)
        .map(|_| {
            let start = Clock::now();
            f();
            start.elapsed().as_secs_f64()
        })
        .collect();
    times.sort_by(f64::total_cmp);
    times[1]
}

fn main() {
    let mut rng = SeededRng::new(1);
    let mut t: Vec<f64> = (0..100_000).map(|_| rng.uniform() * 1000.0).collect();
    t.sort_by(f64::total_cmp);
    let y: Vec<f64> = t.iter().map(|x| (3.1 * x).sin() + rng.normal()).collect();
    let series = Series::from_arrays(&t, &y, None).unwrap();
    let grid = FrequencyGrid::new(1e-3, 1e-4, 1_000_000).unwrap();
    let window = SpectralWindow { algorithm: Algorithm::Fast };
    let gls = GeneralisedLombScargle { algorithm: Algorithm::Fast };
    let w: Vec<f64> = vec![1.0 / t.len() as f64; t.len()];
    let mut new = Vec::new();
    let mut previous = Vec::new();
    let window_s = median_s(|| new = window.evaluate(&series, &grid).unwrap().power);
    let previous_s = median_s(|| {
        let s = compute_sums(&t, &w, &w, &grid, Algorithm::Fast);
        previous = s.c.iter().zip(&s.s).map(|(c, s)| c * c + s * s).collect();
    });
    let gls_s = median_s(|| {
        gls.evaluate(&series, &grid).unwrap();
    });
    let worst = new.iter().zip(&previous).map(|(a, b)| (a - b).abs()).fold(0.0, f64::max);
    println!("spectral_window: N = 1e5, M = 1e6, {} rayon threads", rayon::current_num_threads());
    println!("  window (weight sums only): {window_s:.3} s");
    println!("  window from the full sums (previous path): {previous_s:.3} s → {:.2}× faster", previous_s / window_s);
    println!(
        "  fast GLS on the same grid: {gls_s:.3} s → window costs {:.0} % of the periodogram",
        100.0 * window_s / gls_s
    );
    println!("  largest |new − previous| window power: {worst:.2e}");
}
