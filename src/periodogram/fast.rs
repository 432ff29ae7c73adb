//! Fast trigonometric sums by Gaussian gridding and one FFT (a type-1 non-uniform FFT):
//! each weighted point is spread onto a regular grid with a truncated Gaussian, one FFT
//! gives the sums at all frequencies of a uniform grid, and dividing by the Gaussian's
//! Fourier transform undoes the spreading. Times are wrapped modulo 1/Δf (exact, because
//! every grid frequency is an integer multiple of Δf after removing the start frequency).
//! The modes are centred on the FFT grid, so the FFT need only be ~1.6× longer than the
//! number of frequencies. O(N·w + M log M) with w ≈ 20 grid points per datum.
//! Source: Greengard & Lee (2004), SIAM Review 46, 443 ("Accelerating the nonuniform fast
//! Fourier transform"), §2: Gaussian width τ = M_sp R / (4π (R − ½)) in grid units for
//! oversampling R and M_sp points each side; error ~exp(−π M_sp (R − ½)/R).
//! This replaces the Lagrange extirpolation of Press & Rybicki (1989, ApJ 338, 277), which
//! needed ~6.5× oversampling (two 4× longer FFTs) for the same accuracy.
//! Accuracy with the defaults (tolerance 1e-9): ~1e-9 of Σ|w| on the sums (measured in the
//! unit tests below); in normalised power the contract, tested, is 1e-4.

use super::grid::FrequencyGrid;
use super::sums::{TrigSums, cis_cycles};
use rustfft::{FftPlanner, num_complex::Complex64};

/// Tuning of the fast sums.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FastOptions {
    /// Least ratio of FFT length to the number of modes computed (≥ 1.2; the FFT length is
    /// the next 2ᵃ·3ᵇ (b ≤ 3) above, and the Gaussian width adapts to the ratio reached).
    pub min_oversampling: f64,
    /// Target error of the gridding relative to Σ|weights| (sets the spreading width).
    pub tolerance: f64,
}

impl Default for FastOptions {
    fn default() -> Self {
        FastOptions { min_oversampling: 1.6, tolerance: 1e-9 }
    }
}

/// A cached deconvolution table: (FFT length, τ bits, largest |k'|) and its values.
type DeconvolutionTable = ((usize, u64, usize), std::sync::Arc<Vec<f64>>);

/// Per-thread work arrays: reused across calls, so a batch of light curves on one grid
/// allocates once per worker thread.
struct Workspace {
    grid: Vec<Complex64>,
    fft_scratch: Vec<Complex64>,
    u: Vec<f64>,
    h: Vec<Complex64>,
    /// Deconvolution tables of recent transform shapes ((nfft, τ bits, max |k'|), table).
    deconv: Vec<DeconvolutionTable>,
}

thread_local! {
    static WORK: std::cell::RefCell<Workspace> = const {
        std::cell::RefCell::new(Workspace {
            grid: Vec::new(),
            fft_scratch: Vec::new(),
            u: Vec::new(),
            h: Vec::new(),
            deconv: Vec::new(),
        })
    };
}

/// A plan cell per FFT length, filled once.
type PlanCell = std::sync::Arc<std::sync::OnceLock<std::sync::Arc<dyn rustfft::Fft<f64>>>>;

/// FFT plans shared by every thread: planning a transform of 2²² points (twiddle factors,
/// AVX kernels) costs several times the transform itself, so the two threads that transform
/// the weight and data sums of one periodogram at the same time, and every worker of a batch,
/// use one plan per length. The map's lock is held only to find a length's cell; the plan is
/// made in the cell, so a thread asking for a length being planned waits for it instead of
/// planning it again, while plans of two different lengths (the sums at f and at 2f) are
/// made at the same time on two threads.
static PLANS: std::sync::LazyLock<std::sync::Mutex<std::collections::HashMap<usize, PlanCell>>> =
    std::sync::LazyLock::new(Default::default);

/// The inverse FFT of length `nfft`, from the shared plans.
fn inverse_plan(nfft: usize) -> std::sync::Arc<dyn rustfft::Fft<f64>> {
    let cell = {
        let mut plans = PLANS.lock().unwrap_or_else(|poisoned| poisoned.into_inner());
        plans.entry(nfft).or_default().clone()
    };
    cell.get_or_init(|| FftPlanner::new().plan_fft_inverse(nfft)).clone()
}

/// The least FFT length ≥ `at_least` (and ≥ 64) of the form 2ᵃ·3ᵇ with b ≤ 3: lengths
/// the FFT library transforms with its AVX kernels at about the cost per point of a power
/// of two, at most 4/3 above the request where the next power of two can be 2× above
/// (fewer points to transform, less memory, fewer twiddle factors to plan). Higher powers
/// of 3 took longer to plan than larger lengths of this form (measured with rustfft 6.4
/// on the development machine, 2026-12-04: 2⁸·3⁸ 30 ms, 3³·2¹⁶ 21 ms).
fn transform_length(at_least: usize) -> usize {
    let at_least = at_least.max(64);
    [1usize, 3, 9, 27]
        .iter()
        .map(|&three| three * at_least.div_ceil(three).next_power_of_two())
        .min()
        .unwrap_or(at_least.next_power_of_two())
}

/// Gridding parameters for `modes` output modes with options `opt`:
/// (FFT length, points each side M_sp, Gaussian τ in grid units²).
fn gridding_plan(modes: usize, opt: &FastOptions) -> (usize, usize, f64) {
    let r_min = opt.min_oversampling.max(1.2);
    let tol = opt.tolerance.clamp(1e-15, 1e-2);
    let mut nfft = transform_length((modes as f64 * r_min).ceil() as usize);
    let mut msp;
    loop {
        let r = nfft as f64 / modes as f64;
        msp = ((1.0 / tol).ln() * r / (std::f64::consts::PI * (r - 0.5))).ceil() as usize;
        msp = msp.clamp(2, 24);
        if nfft >= 4 * msp {
            break;
        }
        nfft = transform_length(2 * nfft);
    }
    let r = nfft as f64 / modes as f64;
    let tau = msp as f64 * r / (4.0 * std::f64::consts::PI * (r - 0.5));
    (nfft, msp, tau)
}

/// Where the type-1 sums of [`nonuniform_sums`] lie in the transformed work grid.
struct Transformed {
    /// Centre mode (subtracted before gridding).
    kc: i64,
    /// FFT length.
    nfft: usize,
    /// 1 / (the Gaussian's transform) at |k − kc| = 0, 1, 2, …
    deconv: std::sync::Arc<Vec<f64>>,
}

impl Transformed {
    /// R_k from the transformed grid.
    #[inline]
    fn at(&self, grid: &[Complex64], k: i64) -> Complex64 {
        let kp = k - self.kc;
        // |k − kc| < nfft/2: a negative index wraps once
        let index = if kp < 0 { kp + self.nfft as i64 } else { kp };
        grid[index as usize] * self.deconv[kp.unsigned_abs() as usize]
    }
}

/// Type-1 non-uniform sums R_k = Σ_i h_i exp(2πi k u_i) for the integer modes
/// k = kmin..=kmax, for positions u_i ∈ [0, 1) held in the workspace (`u`, `h`; h is
/// modified). The result stays in `ws.grid`; read mode k with [`Transformed::at`].
fn nonuniform_sums(ws: &mut Workspace, kmin: i64, kmax: i64, opt: &FastOptions) -> Transformed {
    let modes = (kmax - kmin + 1) as usize;
    let kc = kmin + (modes as i64) / 2;
    let (nfft, msp, tau) = gridding_plan(modes, opt);
    let Workspace { grid, fft_scratch, u, h, .. } = &mut *ws;
    grid.clear();
    grid.resize(nfft, Complex64::new(0.0, 0.0));
    // exp(−q²/(4τ)) for q = −M_sp+1 ..= M_sp (index q + M_sp − 1).
    let e3: Vec<f64> = (1 - msp as i64..=msp as i64).map(|q| (-((q * q) as f64) / (4.0 * tau)).exp()).collect();
    let nf = nfft as f64;
    let width = e3.len();
    for (&ui, hi) in u.iter().zip(h.iter_mut()) {
        // Centre the modes: Σ h e^{2πi k u} = Σ (h e^{2πi kc u}) e^{2πi (k − kc) u}.
        if kc != 0 {
            let (c, s) = cis_cycles(kc as f64 * ui);
            *hi *= Complex64::new(c, s);
        }
        let x = ui * nf;
        let c0 = x.floor();
        let d = x - c0;
        // G(q − d) = e3[q]·exp(−d²/(4τ))·e2^q with e2 = exp(d/(2τ)), from q = −M_sp + 1.
        let e2 = (d / (2.0 * tau)).exp();
        let mut v = (-d * d / (4.0 * tau) - (msp as f64 - 1.0) * d / (2.0 * tau)).exp();
        let base = (c0 as i64 - msp as i64 + 1).rem_euclid(nfft as i64) as usize;
        let hv = *hi;
        if base + width <= nfft {
            for (cell, &g3) in grid[base..base + width].iter_mut().zip(&e3) {
                *cell += hv * (g3 * v);
                v *= e2;
            }
        } else {
            for (j, &g3) in e3.iter().enumerate() {
                let cell = base + j;
                grid[if cell >= nfft { cell - nfft } else { cell }] += hv * (g3 * v);
                v *= e2;
            }
        }
    }
    let fft = inverse_plan(nfft);
    let need = fft.get_inplace_scratch_len();
    if fft_scratch.len() < need {
        fft_scratch.resize(need, Complex64::new(0.0, 0.0));
    }
    fft.process_with_scratch(grid, &mut fft_scratch[..need]);
    // Undo the spreading: divide by sqrt(4πτ)·exp(−τω²), ω = 2π k'/nfft, i.e. multiply by
    // exp(τc k'²)/sqrt(4πτ) with c = (2π/nfft)²: a product recurrence in |k'| (no divisions),
    // re-seeded every 256 modes; kept per thread for the last few transform shapes.
    let kmax_abs = (kmin - kc).abs().max((kmax - kc).abs()) as usize;
    let key = (nfft, tau.to_bits(), kmax_abs);
    let deconv = match ws.deconv.iter().find(|(k, _)| *k == key) {
        Some((_, table)) => table.clone(),
        None => {
            let c = (std::f64::consts::TAU / nf).powi(2);
            let mut table = Vec::with_capacity(kmax_abs + 1);
            let norm = 1.0 / (4.0 * std::f64::consts::PI * tau).sqrt();
            let (mut a, mut b, step) = (norm, (tau * c).exp(), (2.0 * tau * c).exp());
            for k in 0..=kmax_abs {
                if k % 256 == 0 {
                    a = norm * (tau * c * (k * k) as f64).exp();
                    b = (tau * c * (2 * k + 1) as f64).exp();
                }
                table.push(a);
                a *= b;
                b *= step;
            }
            let table = std::sync::Arc::new(table);
            if ws.deconv.len() >= 4 {
                ws.deconv.remove(0);
            }
            ws.deconv.push((key, table.clone()));
            table
        }
    };
    Transformed { kc, nfft, deconv }
}

/// Fills the workspace positions u_i = frac((t_i − t0)·df) and values h_i·e^{2πi f0 (t_i − t0)}.
fn load(ws: &mut Workspace, t: &[f64], t0: f64, h: impl Iterator<Item = Complex64>, f0: f64, df: f64) {
    ws.u.clear();
    ws.h.clear();
    for (&ti, hi) in t.iter().zip(h) {
        let dt = ti - t0;
        let u = dt * df;
        let mut u = u - u.floor();
        if u >= 1.0 {
            u = 0.0;
        }
        ws.u.push(u);
        ws.h.push(if f0 == 0.0 {
            hi
        } else {
            let (c, s) = cis_cycles(f0 * dt);
            hi * Complex64::new(c, s)
        });
    }
}

/// Σ_i h_i exp(2πi·(f0 + k·df)·t_i) for k = 0..m, by gridding + FFT; (real parts,
/// imaginary parts).
fn trig_sum(
    t: &[f64],
    h: impl Iterator<Item = Complex64>,
    f0: f64,
    df: f64,
    m: usize,
    opt: &FastOptions,
) -> (Vec<f64>, Vec<f64>) {
    let t0 = t.iter().cloned().fold(f64::INFINITY, f64::min);
    WORK.with(|w| {
        let ws = &mut *w.borrow_mut();
        load(ws, t, t0, h, f0, df);
        let tr = nonuniform_sums(ws, 0, m as i64 - 1, opt);
        let (mut re, mut im) = (Vec::with_capacity(m), Vec::with_capacity(m));
        let step = phase_step(df * t0);
        let mut rot = Complex64::new(1.0, 0.0);
        for k in 0..m {
            if k % RESEED == 0 {
                rot = phase_step((f0 + k as f64 * df) * t0);
            }
            let z = tr.at(&ws.grid, k as i64) * rot;
            re.push(z.re);
            im.push(z.im);
            rot *= step;
        }
        (re, im)
    })
}

/// Frequencies between exact re-seeds of the phase-factor recurrence (error ~RESEED·1e-16).
const RESEED: usize = 64;

fn phase_step(cycles: f64) -> Complex64 {
    let (c, s) = cis_cycles(cycles);
    Complex64::new(c, s)
}

/// Two real sums at once, when f0 = j0·df: with h = a + i·b (a, b real) and start 0,
/// Σ a e^{iθ} = (R_k + conj R_{−k})/2 and Σ b e^{iθ} = (R_k − conj R_{−k})/(2i), from one
/// transform over the modes −(j0+m−1) ..= j0+m−1. Returns (Σa cos, Σa sin, Σb cos, Σb sin).
fn trig_sum_pair(t: &[f64], a: &[f64], b: &[f64], j0: usize, df: f64, m: usize, opt: &FastOptions) -> [Vec<f64>; 4] {
    let t0 = t.iter().cloned().fold(f64::INFINITY, f64::min);
    let top = (j0 + m - 1) as i64;
    WORK.with(|w| {
        let ws = &mut *w.borrow_mut();
        load(ws, t, t0, a.iter().zip(b).map(|(&x, &y)| Complex64::new(x, y)), 0.0, df);
        let tr = nonuniform_sums(ws, -top, top, opt);
        let mut out: [Vec<f64>; 4] = std::array::from_fn(|_| Vec::with_capacity(m));
        let step = phase_step(df * t0);
        let mut rot = Complex64::new(1.0, 0.0);
        for k in 0..m {
            let kk = (j0 + k) as i64;
            if k % RESEED == 0 {
                rot = phase_step(kk as f64 * df * t0);
            }
            let p = tr.at(&ws.grid, kk);
            let q = tr.at(&ws.grid, -kk).conj();
            let sa = (p + q) * 0.5 * rot;
            let sb = (p - q) * Complex64::new(0.0, -0.5) * rot;
            out[0].push(sa.re);
            out[1].push(sa.im);
            out[2].push(sb.re);
            out[3].push(sb.im);
            rot *= step;
        }
        out
    })
}

fn real(v: &[f64]) -> impl Iterator<Item = Complex64> + '_ {
    v.iter().map(|&x| Complex64::new(x, 0.0))
}

/// Below this many points the exact kernel is both cheaper than the FFTs and immune to
/// the amplification of small sum errors in nearly degenerate few-point fits.
pub const SMALL_N: usize = 64;

/// FFT length from which the weight and data sums are computed on two threads (rayon
/// join); below it, one curve stays on one thread (a batch is parallel across curves).
const PARALLEL_FFT_LEN: usize = 1 << 17;

/// Fast trigonometric sums on a uniform grid (see module doc). Same outputs as
/// [`super::sums::exact_sums`] within the stated accuracy.
pub fn fast_sums(t: &[f64], w: &[f64], h: &[f64], grid: &FrequencyGrid, opt: &FastOptions) -> TrigSums {
    let n = t.len().min(w.len()).min(h.len());
    if n < SMALL_N {
        return super::sums::exact_sums(t, w, h, grid);
    }
    let m = grid.len;
    let (f0, df) = (grid.start_per_day, grid.step_per_day);
    let (t, w, h) = (&t[..n], &w[..n], &h[..n]);
    // Start frequency an integer multiple of the step (the usual grid from the baseline,
    // starting near 0): the weight and data sums share one transform.
    let ratio = f0 / df;
    let j0 = ratio.round();
    let packed = (ratio - j0).abs() < 1e-9 && j0 <= m as f64;
    if gridding_plan(m, opt).0 >= PARALLEL_FFT_LEN {
        // A large grid: three transforms of one length (the weights at f, the data at f,
        // the weights at 2f), shared out among the threads. They share one FFT plan, where
        // the packed form would need a second plan of twice the length (its twiddle
        // factors cost about as much as the transform).
        let ((c, s), (yc, ys)) =
            rayon::join(|| trig_sum(t, real(w), f0, df, m, opt), || trig_sum(t, real(h), f0, df, m, opt));
        let (c2, s2) = trig_sum(t, real(w), 2.0 * f0, 2.0 * df, m, opt);
        return TrigSums { c, s, yc, ys, c2, s2 };
    }
    let [c, s, yc, ys] = if packed {
        trig_sum_pair(t, w, h, j0 as usize, df, m, opt)
    } else {
        let ((c, s), (yc, ys)) = (trig_sum(t, real(w), f0, df, m, opt), trig_sum(t, real(h), f0, df, m, opt));
        [c, s, yc, ys]
    };
    let (c2, s2) = trig_sum(t, real(w), 2.0 * f0, 2.0 * df, m, opt);
    TrigSums { c, s, yc, ys, c2, s2 }
}

/// The weight sums alone, Σ_i w_i cos(2πf t_i) and Σ_i w_i sin(2πf t_i) on `grid`, by one
/// gridding + FFT over the grid's own modes (the spectral window needs nothing else: no
/// data sums, no sums at 2f). Same accuracy as [`fast_sums`]; the exact kernel below
/// [`SMALL_N`] points.
pub fn fast_weight_sums(t: &[f64], w: &[f64], grid: &FrequencyGrid, opt: &FastOptions) -> (Vec<f64>, Vec<f64>) {
    let n = t.len().min(w.len());
    if n < SMALL_N {
        let s = super::sums::exact_sums(&t[..n], &w[..n], &w[..n], grid);
        return (s.c, s.s);
    }
    trig_sum(&t[..n], real(&w[..n]), grid.start_per_day, grid.step_per_day, grid.len, opt)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::SeededRng;
    use crate::periodogram::{Algorithm, GeneralisedLombScargle, Periodogram, Series};

    /// The raw sums against the exact kernel, relative to Σ|w| (module doc: ~1e-9 with the
    /// default tolerance), on packed (start = j0·step) and unpacked grids.
    #[test]
    fn sums_match_exact_relative_to_weight_total() {
        let mut rng = SeededRng::new(41);
        for &(n, start_steps, m) in
            &[(100usize, 1.0, 500usize), (1000, 5.0, 10_000), (700, 3.3, 4000), (3000, 0.0, 2500)]
        {
            let mut t: Vec<f64> = (0..n).map(|_| 2460000.5 - 2451545.0 + rng.uniform() * 83.7).collect();
            t.sort_by(|a, b| a.total_cmp(b));
            let w: Vec<f64> = (0..n).map(|_| 0.2 + rng.uniform()).collect();
            let h: Vec<f64> = w.iter().map(|&x| x * rng.normal()).collect();
            let df = 0.2 / 83.7;
            let grid = FrequencyGrid::new(start_steps * df, df, m).unwrap();
            let a = crate::periodogram::sums::exact_sums(&t, &w, &h, &grid);
            let b = fast_sums(&t, &w, &h, &grid, &FastOptions::default());
            let scale: f64 = w.iter().map(|x| x.abs()).sum();
            let mut worst = 0.0f64;
            for k in 0..m {
                for (x, y) in
                    [(&a.c, &b.c), (&a.s, &b.s), (&a.yc, &b.yc), (&a.ys, &b.ys), (&a.c2, &b.c2), (&a.s2, &b.s2)]
                {
                    worst = worst.max((x[k] - y[k]).abs() / scale);
                }
            }
            eprintln!("fast sums, n {n}, start {start_steps} steps, m {m}: worst error / Σ|w| = {worst:.2e}");
            assert!(worst < 2e-8, "n {n}, start {start_steps} steps, m {m}: worst {worst:e}");
        }
    }

    /// Options change the Gaussian width: a coarser tolerance on the same grid and thread
    /// must use its own deconvolution table (cached per shape and width), and be less
    /// accurate but still within its tolerance scale.
    #[test]
    fn tolerance_option_is_honoured_after_caching() {
        let mut rng = SeededRng::new(5);
        let t: Vec<f64> = {
            let mut t: Vec<f64> = (0..500).map(|_| rng.uniform() * 40.0).collect();
            t.sort_by(|a, b| a.total_cmp(b));
            t
        };
        let w = vec![1.0 / 500.0; 500];
        let h: Vec<f64> = w.iter().map(|&x| x * rng.normal()).collect();
        let grid = FrequencyGrid::new(1.0 / 40.0, 0.2 / 40.0, 3000).unwrap();
        let e = crate::periodogram::sums::exact_sums(&t, &w, &h, &grid);
        let worst = |o: FastOptions| {
            let b = fast_sums(&t, &w, &h, &grid, &o);
            (0..grid.len)
                .map(|k| (b.c[k] - e.c[k]).abs().max((b.yc[k] - e.yc[k]).abs()).max((b.c2[k] - e.c2[k]).abs()))
                .fold(0.0f64, f64::max)
        };
        let fine = worst(FastOptions::default());
        let coarse = worst(FastOptions { tolerance: 1e-4, ..FastOptions::default() });
        let fine_again = worst(FastOptions::default());
        assert!(fine < 2e-8 && fine_again == fine, "{fine:e} {fine_again:e}");
        assert!(coarse > 10.0 * fine && coarse < 1e-3, "{coarse:e}");
    }

    /// FFT lengths: ≥ 1.6 × the modes, powers of two (m = 10⁴ frequencies from 5 steps:
    /// 2·10⁴ packed modes → 32768; the double-frequency sums, 10⁴ modes → 16384).
    #[test]
    fn gridding_plan_lengths() {
        let o = FastOptions::default();
        assert_eq!(gridding_plan(20_009, &o).0, 32_768);
        assert_eq!(gridding_plan(10_000, &o).0, 16_384);
        let (_, msp, tau) = gridding_plan(10_000, &o);
        assert!((8..=12).contains(&msp) && tau > 0.5 && tau < 2.0, "{msp} {tau}");
        // the 10⁶-frequency grid: 27·2¹⁶ instead of 2²¹
        assert_eq!(gridding_plan(999_943, &o).0, 1_769_472);
        for n in [64, 65, 97, 1000, 12_345, 1 << 20, (1 << 20) + 1] {
            let len = transform_length(n);
            let odd = len >> len.trailing_zeros();
            assert!(
                len >= n && [1, 3, 9, 27].contains(&odd) && (len as f64) < n as f64 * 4.0 / 3.0 + 1.0,
                "{n}: {len}"
            );
        }
    }

    /// Fast against exact GLS power on random irregular sampling, several sizes
    /// (the accuracy contract of this module: ≤ 1e-4 in normalised power).
    #[test]
    fn fast_power_matches_exact_on_random_data() {
        let mut rng = SeededRng::new(2026);
        let mut worst = 0.0f64;
        for &(n, fmax) in &[(5usize, 3.0), (40, 10.0), (300, 25.0), (2000, 50.0), (7000, 8.0)] {
            let mut t: Vec<f64> = (0..n).map(|_| rng.uniform() * 97.3).collect();
            t.sort_by(|a, b| a.total_cmp(b));
            t.dedup();
            let y: Vec<f64> = t.iter().map(|&ti| (ti * 1.7).sin() + 0.8 * rng.normal()).collect();
            let e: Vec<f64> = t.iter().map(|_| 0.5 + rng.uniform()).collect();
            let s = Series::from_arrays(&t, &y, Some(&e)).unwrap();
            let grid = FrequencyGrid::new(0.5 / 97.3, 0.2 / 97.3, (fmax * 97.3 / 0.2) as usize).unwrap();
            let a = GeneralisedLombScargle { algorithm: Algorithm::Exact }.evaluate(&s, &grid).unwrap();
            let b = GeneralisedLombScargle { algorithm: Algorithm::Fast }.evaluate(&s, &grid).unwrap();
            for k in 0..grid.len {
                worst = worst.max((a.power[k] - b.power[k]).abs());
            }
        }
        eprintln!("fast vs exact GLS power: worst difference {worst:.2e}");
        assert!(worst <= 1e-4, "worst power difference {worst}");
    }
}
