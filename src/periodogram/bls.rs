//! Box least squares for eclipses and transits (Kovács, Zucker & Mazeh 2002, A&A 391,
//! 369): at each trial frequency the folded light curve is binned in phase (bins of
//! min(duration)/`bins_per_duration`) and a box of each trial duration slides over the
//! bins; the statistic is the χ² improvement of a two-level (in/out of box) model,
//! Δχ² = W·s²/(r(1−r)) with r, s the weight fraction and weighted centred sum inside the
//! box (KZM02 eqs. 4–5). Depth d = |s|/(r(1−r)). Signal detection efficiency
//! SDE = (peak − mean)/std of the spectrum (KZM02 §2).

use super::{FrequencyGrid, Periodogram, SearchError, Series, Spectrum};
use crate::light_curve::phase_of;
use rayon::prelude::*;

/// Options of the box search.
#[derive(Debug, Clone, PartialEq)]
pub struct BoxOptions {
    /// Trial box durations, days (each > 0).
    pub durations_d: Vec<f64>,
    /// Phase bins per shortest duration (resolution of the box edges).
    pub bins_per_duration: usize,
    /// Values are magnitudes (a dip is an increase) rather than fluxes (a dip is a decrease).
    pub values_are_magnitudes: bool,
}

impl BoxOptions {
    /// Flux data, 5 bins per shortest duration.
    pub fn flux(durations_d: Vec<f64>) -> Self {
        BoxOptions { durations_d, bins_per_duration: 5, values_are_magnitudes: false }
    }
}

/// The box-search spectrum: best box per trial frequency.
#[derive(Debug, Clone, PartialEq)]
pub struct BoxSpectrum {
    pub grid: FrequencyGrid,
    /// Δχ² of the best box (χ² units with uncertainties; value² × N without).
    pub power: Vec<f64>,
    /// Depth of the best box (units of the values, positive for a dip).
    pub depth: Vec<f64>,
    /// Duration of the best box, days.
    pub duration_d: Vec<f64>,
    /// Mid-box time of the first box after the first point, days (caller's reference).
    pub epoch_d: Vec<f64>,
}

/// Best box at one frequency, measured on the unbinned points.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BoxDetection {
    pub freq_per_day: f64,
    pub period_d: f64,
    pub power: f64,
    pub depth: f64,
    /// 1-σ depth error: √(1/W_in + 1/W_out), scaled by the residual scatter without σ.
    pub depth_err: f64,
    pub duration_d: f64,
    /// Half a bin width: the duration and epoch resolution of the search, days.
    pub duration_resolution_d: f64,
    pub epoch_d: f64,
    /// Signal detection efficiency of the peak in the spectrum.
    pub sde: f64,
    /// Points inside the box.
    pub n_in_box: usize,
}

fn check(options: &BoxOptions, grid: &FrequencyGrid) -> Result<f64, SearchError> {
    if options.durations_d.is_empty() {
        return Err(SearchError::InvalidParameter {
            name: "box durations",
            value: 0.0,
            expected: "at least one duration in days",
        });
    }
    for &d in &options.durations_d {
        if !(d.is_finite() && d > 0.0) {
            return Err(SearchError::InvalidParameter {
                name: "box duration (d)",
                value: d,
                expected: "a finite duration > 0",
            });
        }
        let pmin = 1.0 / grid.max_freq_per_day();
        if d >= 0.5 * pmin {
            return Err(SearchError::InvalidParameter {
                name: "box duration (d)",
                value: d,
                expected: "a duration shorter than half the shortest trial period",
            });
        }
    }
    if !(1..=100).contains(&options.bins_per_duration) {
        return Err(SearchError::InvalidParameter {
            name: "bins per duration",
            value: options.bins_per_duration as f64,
            expected: "1 to 100",
        });
    }
    if grid.start_per_day <= 0.0 {
        return Err(SearchError::InvalidParameter {
            name: "grid start (c/d)",
            value: grid.start_per_day,
            expected: "a frequency > 0 for a box search",
        });
    }
    Ok(options.durations_d.iter().cloned().fold(f64::INFINITY, f64::min))
}

/// Box search over a frequency grid (see module doc). Parallel over frequencies.
pub fn box_search(series: &Series, grid: &FrequencyGrid, options: &BoxOptions) -> Result<BoxSpectrum, SearchError> {
    let dmin = check(options, grid)?;
    if series.len() < 5 {
        return Err(SearchError::TooFewPoints {
            needed: 5,
            got: series.len(),
            dropped: series.n_dropped,
            reason: "a box search",
        });
    }
    let w_raw: f64 = series.weight.iter().sum();
    let w: Vec<f64> = series.weight.iter().map(|v| v / w_raw).collect();
    let y = series.band_centred_values();
    let wy: Vec<f64> = w.iter().zip(&y).map(|(a, b)| a * b).collect();
    let sign = if options.values_are_magnitudes { 1.0 } else { -1.0 };
    let t0 = series.time_d[0];
    let dt: Vec<f64> = series.time_d.iter().map(|t| t - t0).collect();
    let wpair: Vec<[f64; 2]> = w.iter().zip(&wy).map(|(&a, &b)| [a, b]).collect();
    let rows: Vec<(f64, f64, f64, f64)> = (0..grid.len)
        .into_par_iter()
        .map_init(
            || (Vec::<f64>::new(), Vec::<f64>::new(), Vec::<[f64; 2]>::new(), Vec::<u32>::new()),
            |(bw, bwy, hist, idx), k| {
                let f = grid.freq_per_day(k);
                let p = 1.0 / f;
                let nb = ((p * options.bins_per_duration as f64 / dmin).ceil() as usize).clamp(2, 1 << 20);
                bw.clear();
                bw.resize(2 * nb, 0.0);
                bwy.clear();
                bwy.resize(2 * nb, 0.0);
                // Two interleaved histograms (even and odd points, pairs of weight and
                // weighted value) break the store-to-load chains of consecutive points that
                // fall into the same bin; merged afterwards.
                hist.clear();
                hist.resize(2 * nb, [0.0; 2]);
                let (ha, hb) = hist.split_at_mut(nb);
                idx.resize(dt.len(), 0);
                phase_bins(&dt, f, nb, idx);
                let mut it = idx.chunks_exact(2).zip(wpair.chunks_exact(2));
                for (b2, p2) in &mut it {
                    let (b0, b1) = (b2[0] as usize, b2[1] as usize);
                    ha[b0][0] += p2[0][0];
                    ha[b0][1] += p2[0][1];
                    hb[b1][0] += p2[1][0];
                    hb[b1][1] += p2[1][1];
                }
                if dt.len() % 2 == 1 {
                    let i = dt.len() - 1;
                    let b = idx[i] as usize;
                    ha[b][0] += wpair[i][0];
                    ha[b][1] += wpair[i][1];
                }
                for b in 0..nb {
                    bw[b] = ha[b][0] + hb[b][0];
                    bwy[b] = ha[b][1] + hb[b][1];
                }
                // prefix sums over the doubled (wrapped) bins with a leading zero:
                // cw[b] = Σ_{j<b} w_bin[j mod nb], so a window [s, s+q) sums to cw[s+q] − cw[s]
                hist.clear();
                hist.resize(2 * nb + 1, [0.0; 2]);
                for b in 0..2 * nb {
                    let j = if b < nb { b } else { b - nb };
                    hist[b + 1] = [hist[b][0] + bw[j], hist[b][1] + bwy[j]];
                }
                let cum: &[[f64; 2]] = hist;
                // Best box by cross-multiplication (no division in the loop): keep the
                // numerator sy² and denominator r(1−r) of the best statistic.
                let (mut best_num, mut best_den) = (0.0f64, 1.0f64);
                let (mut best_s, mut best_q, mut best_sy, mut best_r) = (0usize, 0usize, 0.0, 0.0);
                for &d in &options.durations_d {
                    let q = ((d / p * nb as f64).round() as usize).clamp(1, nb - 1);
                    for (s, (lo, hi)) in cum[..nb].iter().zip(&cum[q..q + nb]).enumerate() {
                        let r = hi[0] - lo[0];
                        let sy = hi[1] - lo[1];
                        let den = r * (1.0 - r);
                        let num = sy * sy;
                        if sign * sy > 0.0 && r > 1e-12 && r < 1.0 - 1e-12 && num * best_den > best_num * den {
                            best_num = num;
                            best_den = den;
                            best_s = s;
                            best_q = q;
                            best_sy = sy;
                            best_r = r;
                        }
                    }
                }
                let best = if best_num > 0.0 {
                    let mid = (best_s as f64 + 0.5 * best_q as f64) / nb as f64;
                    let den = best_r * (1.0 - best_r);
                    (best_num / den, best_sy.abs() / den, best_q as f64 * p / nb as f64, t0 + (mid - mid.floor()) * p)
                } else {
                    (0.0, 0.0, 0.0, 0.0)
                };
                (best.0 * w_raw, best.1, best.2, best.3)
            },
        )
        .collect();
    Ok(BoxSpectrum {
        grid: *grid,
        power: rows.iter().map(|r| r.0).collect(),
        depth: rows.iter().map(|r| r.1).collect(),
        duration_d: rows.iter().map(|r| r.2).collect(),
        epoch_d: rows.iter().map(|r| r.3).collect(),
    })
}

/// Phase bin of each time offset `dt` (days ≥ 0) at frequency `f` with `nb` bins.
#[inline(always)]
fn phase_bins_body(dt: &[f64], f: f64, nb: usize, out: &mut [u32]) {
    let nbf = nb as f64;
    let last = (nb - 1) as f64;
    for (o, &d) in out.iter_mut().zip(dt) {
        // d ≥ 0 and f > 0: truncation is the floor (and needs no libm call)
        let x = d * f;
        let ph = x - x.trunc();
        *o = (ph * nbf).min(last) as u32;
    }
}

/// AVX twin of [`phase_bins_body`]: four offsets at a time with packed truncation and a
/// packed f64 → i32 conversion (exact here: 0 ≤ bin < nb ≤ 2²⁰).
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx")]
unsafe fn phase_bins_avx(dt: &[f64], f: f64, nb: usize, out: &mut [u32]) {
    use std::arch::x86_64::*;
    let n = dt.len().min(out.len());
    let n4 = n / 4 * 4;
    let vf = _mm256_set1_pd(f);
    let vnb = _mm256_set1_pd(nb as f64);
    let vlast = _mm256_set1_pd((nb - 1) as f64);
    let mut i = 0;
    while i < n4 {
        // SAFETY: i + 4 ≤ n4 ≤ the lengths of `dt` and `out`.
        unsafe {
            let x = _mm256_mul_pd(_mm256_loadu_pd(dt.as_ptr().add(i)), vf);
            let ph = _mm256_sub_pd(x, _mm256_round_pd::<{ _MM_FROUND_TO_ZERO | _MM_FROUND_NO_EXC }>(x));
            let b = _mm256_min_pd(_mm256_mul_pd(ph, vnb), vlast);
            _mm_storeu_si128(out.as_mut_ptr().add(i) as *mut __m128i, _mm256_cvttpd_epi32(b));
        }
        i += 4;
    }
    phase_bins_body(&dt[n4..n], f, nb, &mut out[n4..n]);
}

fn phase_bins(dt: &[f64], f: f64, nb: usize, out: &mut [u32]) {
    #[cfg(target_arch = "x86_64")]
    {
        if std::arch::is_x86_feature_detected!("avx") {
            // SAFETY: the CPU supports AVX (checked just above).
            return unsafe { phase_bins_avx(dt, f, nb, out) };
        }
    }
    phase_bins_body(dt, f, nb, out)
}

/// Measures the best box at grid index `k` on the unbinned points and its SDE.
pub fn box_detection(
    series: &Series,
    spectrum: &BoxSpectrum,
    k: usize,
    options: &BoxOptions,
) -> Result<BoxDetection, SearchError> {
    let m = spectrum.power.len();
    if k >= m {
        return Err(SearchError::InvalidParameter {
            name: "grid index",
            value: k as f64,
            expected: "an index inside the spectrum",
        });
    }
    let dmin = check(options, &spectrum.grid)?;
    let f = spectrum.grid.freq_per_day(k);
    let p = 1.0 / f;
    let (dur, epoch) = (spectrum.duration_d[k], spectrum.epoch_d[k]);
    let y = series.band_centred_values();
    let (mut win, mut wyin, mut wout, mut wyout, mut nin) = (0.0, 0.0, 0.0, 0.0, 0usize);
    let inside: Vec<bool> = series
        .time_d
        .iter()
        .map(|&t| {
            let ph = phase_of(t, p, epoch);
            ph.min(1.0 - ph) * p <= 0.5 * dur
        })
        .collect();
    for i in 0..series.len() {
        if inside[i] {
            win += series.weight[i];
            wyin += series.weight[i] * y[i];
            nin += 1;
        } else {
            wout += series.weight[i];
            wyout += series.weight[i] * y[i];
        }
    }
    if nin == 0 || win <= 0.0 || wout <= 0.0 {
        return Err(SearchError::TooFewPoints {
            needed: 1,
            got: 0,
            dropped: series.n_dropped,
            reason: "measuring a box (no points inside or outside it)",
        });
    }
    let (lin, lout) = (wyin / win, wyout / wout);
    let mut err = (1.0 / win + 1.0 / wout).sqrt();
    if !series.has_errors {
        let chi2: f64 = (0..series.len())
            .map(|i| {
                let m = if inside[i] { lin } else { lout };
                (y[i] - m) * (y[i] - m)
            })
            .sum();
        err *= (chi2 / (series.len() as f64 - 2.0).max(1.0)).sqrt();
    }
    let mean = spectrum.power.iter().sum::<f64>() / m as f64;
    let sd = (spectrum.power.iter().map(|v| (v - mean) * (v - mean)).sum::<f64>() / m.max(2) as f64).sqrt();
    let nb = (p * options.bins_per_duration as f64 / dmin).ceil().max(2.0);
    Ok(BoxDetection {
        freq_per_day: f,
        period_d: p,
        power: spectrum.power[k],
        depth: (lin - lout).abs(),
        depth_err: err,
        duration_d: dur,
        duration_resolution_d: 0.5 * p / nb,
        epoch_d: epoch,
        sde: if sd > 0.0 { (spectrum.power[k] - mean) / sd } else { 0.0 },
        n_in_box: nin,
    })
}

/// Box least squares as a [`Periodogram`] (power = Δχ² of the best box).
#[derive(Debug, Clone, PartialEq)]
pub struct BoxFitPeriodogram {
    pub options: BoxOptions,
}

impl Periodogram for BoxFitPeriodogram {
    fn name(&self) -> &'static str {
        "box least squares"
    }
    fn min_points(&self) -> usize {
        5
    }
    fn evaluate_unchecked(&self, series: &Series, grid: &FrequencyGrid) -> Result<Spectrum, SearchError> {
        let b = box_search(series, grid, &self.options)?;
        Ok(Spectrum { grid: *grid, power: b.power, amplitude: Some(b.depth), algorithm: None })
    }
}

/// Reference twin for tests and benchmarks: for every trial frequency, duration and epoch
/// on the same bin grid, sums over all points directly (O(N · bins) per frequency and
/// duration), single-threaded. Returns the Δχ² per frequency.
pub fn box_search_direct(series: &Series, grid: &FrequencyGrid, options: &BoxOptions) -> Result<Vec<f64>, SearchError> {
    let dmin = check(options, grid)?;
    let w_raw: f64 = series.weight.iter().sum();
    let w: Vec<f64> = series.weight.iter().map(|v| v / w_raw).collect();
    let y = series.band_centred_values();
    let sign = if options.values_are_magnitudes { 1.0 } else { -1.0 };
    let t0 = series.time_d[0];
    let mut out = vec![0.0; grid.len];
    for (k, o) in out.iter_mut().enumerate() {
        let f = grid.freq_per_day(k);
        let p = 1.0 / f;
        let nb = ((p * options.bins_per_duration as f64 / dmin).ceil() as usize).clamp(2, 1 << 20);
        let bins: Vec<usize> = series
            .time_d
            .iter()
            .map(|&t| {
                let x = (t - t0) * f;
                (((x - x.floor()) * nb as f64) as usize).min(nb - 1)
            })
            .collect();
        for &d in &options.durations_d {
            let q = ((d / p * nb as f64).round() as usize).clamp(1, nb - 1);
            for s in 0..nb {
                let (mut r, mut sy) = (0.0, 0.0);
                for i in 0..series.len() {
                    let rel = (bins[i] + nb - s) % nb;
                    if rel < q {
                        r += w[i];
                        sy += w[i] * y[i];
                    }
                }
                if r <= 1e-12 || r >= 1.0 - 1e-12 || sign * sy <= 0.0 {
                    continue;
                }
                *o = f64::max(*o, sy * sy / (r * (1.0 - r)) * w_raw);
            }
        }
    }
    Ok(out)
}

/// A frequency grid for a box search between `min_period_d` and `max_period_d`: the step
/// keeps the drift of a box edge across the baseline T under min_duration/oversampling,
/// Δf = min_duration / (oversampling · T · max_period) (common practice; cf. Ofir 2014,
/// A&A 561, A138, for the underlying phase-drift argument).
pub fn plan_box_grid(
    baseline_d: f64,
    min_period_d: f64,
    max_period_d: f64,
    min_duration_d: f64,
    oversampling: f64,
    memory_limit_bytes: u128,
) -> Result<super::GridPlan, SearchError> {
    if !(min_period_d.is_finite() && min_period_d > 0.0 && max_period_d.is_finite() && max_period_d > min_period_d) {
        return Err(SearchError::InvalidParameter {
            name: "period range (d)",
            value: max_period_d,
            expected: "0 < minimum period < maximum period",
        });
    }
    if max_period_d > baseline_d {
        return Err(SearchError::UnresolvableRange {
            min_freq_per_day: 1.0 / max_period_d,
            max_freq_per_day: 1.0 / min_period_d,
            baseline_d,
            reason: "the longest period asked for exceeds the baseline",
        });
    }
    if !(min_duration_d.is_finite() && min_duration_d > 0.0 && min_duration_d < 0.5 * min_period_d) {
        return Err(SearchError::InvalidParameter {
            name: "shortest box duration (d)",
            value: min_duration_d,
            expected: "a duration > 0 and under half the shortest period",
        });
    }
    if !(oversampling.is_finite() && (1.0..=100.0).contains(&oversampling)) {
        return Err(SearchError::InvalidParameter { name: "oversampling", value: oversampling, expected: "1 to 100" });
    }
    let step = min_duration_d / (oversampling * baseline_d * max_period_d);
    let (f0, f1) = (1.0 / max_period_d, 1.0 / min_period_d);
    let n = ((f1 - f0) / step).floor() + 1.0;
    let bytes = (n * super::grid::BYTES_PER_FREQUENCY as f64) as u128;
    if n > 4.0e9 || bytes > memory_limit_bytes {
        return Err(SearchError::GridTooLarge {
            n_freq: n.min(usize::MAX as f64) as usize,
            bytes_needed: bytes,
            bytes_limit: memory_limit_bytes,
        });
    }
    Ok(super::GridPlan { grid: FrequencyGrid::new(f0, step, n as usize)?, bytes_estimate: bytes })
}
