//! The previous fast kernel (Press & Rybicki 1989 Lagrange extirpolation, FFT oversampling
//! 4 rounded up to a power of two, order 16, three sums in two FFTs, nested rayon joins),
//! kept verbatim from the library's history as the same-run reference of the survey-batch
//! benchmark. Not used by the library.

// A frozen copy of an earlier kernel, kept as it was for the benchmark comparison.
#![allow(clippy::too_many_arguments, clippy::needless_range_loop)]
#![allow(dead_code)]

use skyclock::periodogram::FrequencyGrid;
use skyclock::periodogram::sums::{TrigSums, exact_sums};

fn cis_cycles(x: f64) -> (f64, f64) {
    let r = x - x.round();
    let (s, c) = (std::f64::consts::TAU * r).sin_cos();
    (c, s)
}
use rustfft::{Fft, FftPlanner, num_complex::Complex64};

/// Tuning of the fast sums.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PreviousOptions {
    /// FFT length over the number of frequencies (rounded up to a power of two).
    pub fft_oversampling: usize,
    /// Number of grid points each datum is spread over (Lagrange order).
    pub order: usize,
}

impl Default for PreviousOptions {
    fn default() -> Self {
        PreviousOptions { fft_oversampling: 4, order: 16 }
    }
}

thread_local! {
    static SCRATCH: std::cell::RefCell<Vec<Complex64>> = const { std::cell::RefCell::new(Vec::new()) };
    static PLANNER: std::cell::RefCell<FftPlanner<f64>> = std::cell::RefCell::new(FftPlanner::new());
}

/// FFT length: a power of two ≥ oversampling × M (and ≥ 2 × order).
fn fft_len(m: usize, opt: &PreviousOptions) -> usize {
    (m * opt.fft_oversampling.max(2)).next_power_of_two().max(2 * opt.order.clamp(2, 16))
}

/// Raw extirpolated sums R_j = Σ_i h_i e^{iφ_i} exp(2πi j u_i), j = 0..nfft, where
/// u_i = frac((t_i − t0)·df) and φ_i = 2π f0 (t_i − t0); the full FFT output (negative
/// frequencies at nfft − j).
fn raw_sums(
    t: &[f64],
    t0: f64,
    h: &[Complex64],
    f0: f64,
    df: f64,
    opt: &PreviousOptions,
    fft: &dyn Fft<f64>,
) -> Vec<Complex64> {
    let n = t.len().min(h.len());
    let nfft = fft.len();
    let order = opt.order.clamp(2, 16).min(nfft);
    // Reuse this thread's last work array (avoids page-faulting a fresh allocation per call).
    let mut grid = SCRATCH.with(|c| c.take());
    grid.clear();
    grid.resize(nfft, Complex64::new(0.0, 0.0));
    // Lagrange denominators: Π_{m≠j}(j − m) = (−1)^{order−1−j} j! (order−1−j)!
    let fact = |k: usize| (1..=k).fold(1.0f64, |a, b| a * b as f64);
    let denom: Vec<f64> = (0..order)
        .map(|j| {
            let sign = if (order - 1 - j).is_multiple_of(2) { 1.0 } else { -1.0 };
            sign * fact(j) * fact(order - 1 - j)
        })
        .collect();
    for i in 0..n {
        let dt = t[i] - t0;
        let hv = if f0 == 0.0 {
            h[i]
        } else {
            let (c, s) = cis_cycles(f0 * dt);
            h[i] * Complex64::new(c, s)
        };
        let u = dt * df;
        let x = (u - u.floor()) * nfft as f64;
        let xi = x.floor();
        if x == xi {
            grid[(xi as usize) % nfft] += hv;
            continue;
        }
        let ilo = xi as i64 - (order as i64 - 1) / 2;
        let mut prod = 1.0;
        for j in 0..order {
            prod *= x - (ilo + j as i64) as f64;
        }
        for j in 0..order {
            let node = ilo + j as i64;
            let wgt = prod / ((x - node as f64) * denom[j]);
            grid[node.rem_euclid(nfft as i64) as usize] += hv * wgt;
        }
    }
    fft.process(&mut grid);
    grid
}

/// Σ_i h_i exp(2πi·(f0 + k·df)·t_i) for k = 0..m (complex), by extirpolation + FFT.
fn trig_sum(
    t: &[f64],
    h: &[Complex64],
    f0: f64,
    df: f64,
    m: usize,
    opt: &PreviousOptions,
    fft: &dyn Fft<f64>,
) -> Vec<Complex64> {
    let t0 = t.iter().cloned().fold(f64::INFINITY, f64::min);
    let raw = raw_sums(t, t0, h, f0, df, opt, fft);
    let mut out = Vec::with_capacity(m);
    let step = phase_step(df * t0);
    let mut rot = Complex64::new(1.0, 0.0);
    for k in 0..m {
        if k % RESEED == 0 {
            let (c, s) = cis_cycles((f0 + k as f64 * df) * t0);
            rot = Complex64::new(c, s);
        }
        out.push(raw[k] * rot);
        rot *= step;
    }
    SCRATCH.with(|c| c.replace(raw));
    out
}

/// Frequencies between exact re-seeds of the phase-factor recurrence (error ~RESEED·1e-16).
const RESEED: usize = 64;

fn phase_step(cycles: f64) -> Complex64 {
    let (c, s) = cis_cycles(cycles);
    Complex64::new(c, s)
}

/// Two real sums at once, when f0 = j0·df: with h = a + i·b (a, b real) and start 0,
/// Σ a e^{iθ} = (R_k + conj R_{−k})/2 and Σ b e^{iθ} = (R_k − conj R_{−k})/(2i).
/// Needs nfft > 2(m + j0) so that positive and negative frequencies do not overlap.
fn trig_sum_pair(
    t: &[f64],
    a: &[f64],
    b: &[f64],
    j0: usize,
    df: f64,
    m: usize,
    opt: &PreviousOptions,
    fft: &dyn Fft<f64>,
) -> (Vec<Complex64>, Vec<Complex64>) {
    let t0 = t.iter().cloned().fold(f64::INFINITY, f64::min);
    let h: Vec<Complex64> = a.iter().zip(b).map(|(&x, &y)| Complex64::new(x, y)).collect();
    let raw = raw_sums(t, t0, &h, 0.0, df, opt, fft);
    let nfft = raw.len();
    let mut out_a = Vec::with_capacity(m);
    let mut out_b = Vec::with_capacity(m);
    let step = phase_step(df * t0);
    let mut rot = Complex64::new(1.0, 0.0);
    for k in 0..m {
        let kk = j0 + k;
        if k % RESEED == 0 {
            rot = phase_step(kk as f64 * df * t0);
        }
        let p = raw[kk];
        let q = raw[(nfft - kk) % nfft].conj();
        out_a.push((p + q) * 0.5 * rot);
        out_b.push((p - q) * Complex64::new(0.0, -0.5) * rot);
        rot *= step;
    }
    SCRATCH.with(|c| c.replace(raw));
    (out_a, out_b)
}

/// Below this many points the exact kernel is both cheaper than three FFTs and immune to
/// the amplification of small sum errors in nearly degenerate few-point fits.
pub const SMALL_N: usize = 64;

/// Fast trigonometric sums on a uniform grid (see module doc). Same outputs as
/// [`super::sums::exact_sums`] within the stated accuracy.
pub fn fast_sums(t: &[f64], w: &[f64], h: &[f64], grid: &FrequencyGrid, opt: &PreviousOptions) -> TrigSums {
    let n = t.len().min(w.len()).min(h.len());
    if n < SMALL_N {
        return exact_sums(t, w, h, grid);
    }
    let m = grid.len;
    let wc: Vec<Complex64> = w[..n].iter().map(|&v| Complex64::new(v, 0.0)).collect();
    let hc: Vec<Complex64> = h[..n].iter().map(|&v| Complex64::new(v, 0.0)).collect();
    let (f0, df) = (grid.start_per_day, grid.step_per_day);
    let t = &t[..n];
    let nfft = fft_len(m, opt);
    // One planner per thread: plans (twiddle tables) are reused across calls of the same
    // size, which matters when many light curves are searched on one grid.
    let fft = PLANNER.with(|p| p.borrow_mut().plan_fft_inverse(nfft));
    let fft = fft.as_ref();
    // Start frequency an integer multiple of the step (the usual grid from the baseline):
    // the weight and data sums share one FFT.
    let ratio = f0 / df;
    let j0 = ratio.round();
    let packed = (ratio - j0).abs() < 1e-9 && 2 * (m + j0 as usize) < nfft;
    let ((a, b), c) = rayon::join(
        || {
            if packed {
                trig_sum_pair(t, &w[..n], &h[..n], j0 as usize, df, m, opt, fft)
            } else {
                rayon::join(|| trig_sum(t, &wc, f0, df, m, opt, fft), || trig_sum(t, &hc, f0, df, m, opt, fft))
            }
        },
        || trig_sum(t, &wc, 2.0 * f0, 2.0 * df, m, opt, fft),
    );
    TrigSums {
        c: a.iter().map(|z| z.re).collect(),
        s: a.iter().map(|z| z.im).collect(),
        yc: b.iter().map(|z| z.re).collect(),
        ys: b.iter().map(|z| z.im).collect(),
        c2: c.iter().map(|z| z.re).collect(),
        s2: c.iter().map(|z| z.im).collect(),
    }
}
