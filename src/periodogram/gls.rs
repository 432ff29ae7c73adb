//! The Lomb–Scargle family on trigonometric sums: generalised Lomb–Scargle with weights
//! and a floating mean (Zechmeister & Kürster 2009, A&A 496, 577, eqs. 4–20), its
//! multi-band form with one zero point per band and a shared sinusoid, the classical
//! periodogram (Lomb 1976, Ap&SS 39, 447; Scargle 1982, ApJ 263, 835) on mean-subtracted
//! data, and the spectral window |Σ w e^{iωt}|² / (Σ w)² (Deeming 1975, Ap&SS 36, 137).

use super::sums::TrigSums;
use super::{Algorithm, FrequencyGrid, Periodogram, SearchError, Series, Spectrum, compute_sums};

/// Power p ∈ [0,1] and semi-amplitude from per-band sums with band-centred data.
/// `w_band` = Σ w per band (weights normalised to Σ w = 1 overall), `yy` = Σ w y².
/// Returns (power, amplitude) at frequency k. Floating mean per band when `floating_mean`.
fn power_at(bands: &[TrigSums], w_band: &[f64], yy: f64, k: usize, floating_mean: bool) -> (f64, f64) {
    let (mut yc, mut ys, mut cc, mut ss, mut cs) = (0.0, 0.0, 0.0, 0.0, 0.0);
    for (b, s) in bands.iter().enumerate() {
        let wb = w_band[b];
        if wb <= 0.0 {
            continue;
        }
        yc += s.yc[k];
        ys += s.ys[k];
        let (cch, ssh, csh) = (0.5 * (wb + s.c2[k]), 0.5 * (wb - s.c2[k]), 0.5 * s.s2[k]);
        if floating_mean {
            cc += cch - s.c[k] * s.c[k] / wb;
            ss += ssh - s.s[k] * s.s[k] / wb;
            cs += csh - s.c[k] * s.s[k] / wb;
        } else {
            cc += cch;
            ss += ssh;
            cs += csh;
        }
    }
    let d = cc * ss - cs * cs;
    if !(d > 1e-14 * (cc + ss).abs().max(1e-300) * (cc + ss).abs()) || yy <= 0.0 {
        return (0.0, 0.0);
    }
    let inv_d = 1.0 / d;
    let p = (ss * yc * yc + cc * ys * ys - 2.0 * cs * yc * ys) * inv_d / yy;
    let a = (yc * ss - ys * cs) * inv_d;
    let bb = (ys * cc - yc * cs) * inv_d;
    (p.clamp(0.0, 1.0), (a * a + bb * bb).sqrt())
}

/// [`power_at`] for one band of weight `wb` > 0 at every frequency (the same formulas with
/// 1/wb hoisted: one division per frequency).
fn single_band(s: &TrigSums, wb: f64, yy: f64, m: usize, floating_mean: bool) -> (Vec<f64>, Vec<f64>) {
    let inv_wb = if floating_mean { 1.0 / wb } else { 0.0 };
    let inv_yy = 1.0 / yy;
    let mut power = Vec::with_capacity(m);
    let mut amplitude = Vec::with_capacity(m);
    for k in 0..m {
        let (c, sn, c2, s2, yc, ys) = (s.c[k], s.s[k], s.c2[k], s.s2[k], s.yc[k], s.ys[k]);
        let cc = 0.5 * (wb + c2) - c * c * inv_wb;
        let ss = 0.5 * (wb - c2) - sn * sn * inv_wb;
        let cs = 0.5 * s2 - c * sn * inv_wb;
        let d = cc * ss - cs * cs;
        if !(d > 1e-14 * (cc + ss).abs().max(1e-300) * (cc + ss).abs()) || yy <= 0.0 {
            power.push(0.0);
            amplitude.push(0.0);
            continue;
        }
        let inv_d = 1.0 / d;
        let p = (ss * yc * yc + cc * ys * ys - 2.0 * cs * yc * ys) * inv_d * inv_yy;
        let a = (yc * ss - ys * cs) * inv_d;
        let bb = (ys * cc - yc * cs) * inv_d;
        power.push(p.clamp(0.0, 1.0));
        amplitude.push((a * a + bb * bb).sqrt());
    }
    (power, amplitude)
}

/// Normalised weights, band-centred values and per-band weight sums.
fn prepare(series: &Series) -> (Vec<f64>, Vec<f64>, Vec<f64>, f64) {
    let sw: f64 = series.weight.iter().sum();
    let w: Vec<f64> = series.weight.iter().map(|v| v / sw).collect();
    let y = series.band_centred_values();
    let mut w_band = vec![0.0; series.n_bands()];
    for i in 0..series.len() {
        w_band[series.band[i]] += w[i];
    }
    let yy = y.iter().zip(&w).map(|(y, w)| w * y * y).sum();
    (w, y, w_band, yy)
}

fn lomb_scargle_family(
    series: &Series,
    grid: &FrequencyGrid,
    algorithm: Algorithm,
    floating_mean: bool,
    per_band: bool,
) -> Spectrum {
    let (w, y, w_band, yy) = prepare(series);
    let algorithm = algorithm.resolve(series.len(), grid.len);
    let sums: Vec<TrigSums>;
    let wb: Vec<f64>;
    if per_band && series.n_bands() > 1 {
        sums = (0..series.n_bands())
            .map(|b| {
                let idx: Vec<usize> = (0..series.len()).filter(|&i| series.band[i] == b).collect();
                let t: Vec<f64> = idx.iter().map(|&i| series.time_d[i]).collect();
                let wv: Vec<f64> = idx.iter().map(|&i| w[i]).collect();
                let h: Vec<f64> = idx.iter().map(|&i| w[i] * y[i]).collect();
                compute_sums(&t, &wv, &h, grid, algorithm)
            })
            .collect();
        wb = w_band;
    } else {
        // One zero point for everything: centre on the global weighted mean.
        let mean: f64 = series.value.iter().zip(&w).map(|(v, w)| v * w).sum();
        let yg: Vec<f64> = series.value.iter().map(|v| v - mean).collect();
        let h: Vec<f64> = yg.iter().zip(&w).map(|(y, w)| y * w).collect();
        sums = vec![compute_sums(&series.time_d, &w, &h, grid, algorithm)];
        wb = vec![1.0];
        let yy: f64 = yg.iter().zip(&w).map(|(y, w)| w * y * y).sum();
        return finish(&sums, &wb, yy, grid, floating_mean, algorithm);
    }
    finish(&sums, &wb, yy, grid, floating_mean, algorithm)
}

fn finish(
    sums: &[TrigSums],
    wb: &[f64],
    yy: f64,
    grid: &FrequencyGrid,
    floating_mean: bool,
    algorithm: Algorithm,
) -> Spectrum {
    if let ([s], [w]) = (sums, wb)
        && *w > 0.0
    {
        let (power, amplitude) = single_band(s, *w, yy, grid.len, floating_mean);
        return Spectrum { grid: *grid, power, amplitude: Some(amplitude), algorithm: Some(algorithm) };
    }
    let (power, amplitude): (Vec<f64>, Vec<f64>) =
        (0..grid.len).map(|k| power_at(sums, wb, yy, k, floating_mean)).unzip();
    Spectrum { grid: *grid, power, amplitude: Some(amplitude), algorithm: Some(algorithm) }
}

/// Generalised Lomb–Scargle periodogram (weights 1/σ², floating mean).
/// Power p(f) = 1 − χ²(f)/χ²₀ ∈ [0, 1] (ZK09 eq. 5); amplitude = fitted semi-amplitude in
/// the units of the values. Accuracy: exact algorithm ~1e-12 in p; fast ≤1e-4.
/// Source: Zechmeister & Kürster (2009), A&A 496, 577.
#[derive(Debug, Clone, Copy, Default)]
pub struct GeneralisedLombScargle {
    /// Kernel for the trigonometric sums (`Auto` picks by problem size).
    pub algorithm: Algorithm,
}

impl Periodogram for GeneralisedLombScargle {
    fn name(&self) -> &'static str {
        "generalised Lomb-Scargle"
    }
    fn min_points(&self) -> usize {
        4
    }
    fn evaluate_unchecked(&self, series: &Series, grid: &FrequencyGrid) -> Result<Spectrum, SearchError> {
        Ok(lomb_scargle_family(series, grid, self.algorithm, true, false))
    }
}

/// Multi-band generalised Lomb–Scargle: one sinusoid shared by all bands, one free zero
/// point per band. Power 1 − χ²(f)/χ²₀ with χ²₀ the per-band-mean model. Reduces to
/// [`GeneralisedLombScargle`] for one band. Source: ZK09 generalised to per-band offsets
/// (the "shared-phase, per-band offset" model of VanderPlas & Ivezić 2015, ApJ 812, 18, §2).
#[derive(Debug, Clone, Copy, Default)]
pub struct MultiBandLombScargle {
    /// Kernel for the trigonometric sums (`Auto` picks by problem size).
    pub algorithm: Algorithm,
}

impl Periodogram for MultiBandLombScargle {
    fn name(&self) -> &'static str {
        "multi-band Lomb-Scargle with per-band zero points"
    }
    fn min_points(&self) -> usize {
        4
    }
    fn evaluate_unchecked(&self, series: &Series, grid: &FrequencyGrid) -> Result<Spectrum, SearchError> {
        Ok(lomb_scargle_family(series, grid, self.algorithm, true, true))
    }
}

/// Classical Lomb–Scargle periodogram on data centred by their (weighted) mean, no
/// floating mean in the fit. Power normalised to [0, 1] by Σ w y² ("standard"
/// normalisation). Source: Lomb (1976); Scargle (1982); ZK09 §2 (the case without offset).
#[derive(Debug, Clone, Copy, Default)]
pub struct ClassicalLombScargle {
    /// Kernel for the trigonometric sums (`Auto` picks by problem size).
    pub algorithm: Algorithm,
}

impl Periodogram for ClassicalLombScargle {
    fn name(&self) -> &'static str {
        "classical Lomb-Scargle"
    }
    fn min_points(&self) -> usize {
        3
    }
    fn evaluate_unchecked(&self, series: &Series, grid: &FrequencyGrid) -> Result<Spectrum, SearchError> {
        Ok(lomb_scargle_family(series, grid, self.algorithm, false, false))
    }
}

/// Spectral window W(f) = |Σ w_i exp(2πi f t_i)|² / (Σ w_i)², 1 at f = 0; shows which
/// frequencies the sampling alone produces (daily and yearly aliases).
/// Source: Deeming (1975), Ap&SS 36, 137.
#[derive(Debug, Clone, Copy, Default)]
pub struct SpectralWindow {
    /// Kernel for the trigonometric sums (`Auto` picks by problem size).
    pub algorithm: Algorithm,
}

impl Periodogram for SpectralWindow {
    fn name(&self) -> &'static str {
        "spectral window"
    }
    fn min_points(&self) -> usize {
        2
    }
    fn check_series(&self, series: &Series) -> Result<(), SearchError> {
        if series.len() < 2 {
            return Err(SearchError::TooFewPoints {
                needed: 2,
                got: series.len(),
                dropped: series.n_dropped,
                reason: self.name(),
            });
        }
        Ok(())
    }
    fn evaluate_unchecked(&self, series: &Series, grid: &FrequencyGrid) -> Result<Spectrum, SearchError> {
        let sw: f64 = series.weight.iter().sum();
        let w: Vec<f64> = series.weight.iter().map(|v| v / sw).collect();
        let algorithm = self.algorithm.resolve(series.len(), grid.len);
        // Only the weight sums at f are needed: the fast kernel transforms them alone (one
        // FFT over the grid's modes, about a quarter of the work of the periodogram's sums).
        let (c, s) = match algorithm {
            Algorithm::Fast => super::fast::fast_weight_sums(&series.time_d, &w, grid, &Default::default()),
            _ => {
                let s = compute_sums(&series.time_d, &w, &w, grid, algorithm);
                (s.c, s.s)
            }
        };
        let power = c.iter().zip(&s).map(|(c, s)| c * c + s * s).collect();
        Ok(Spectrum { grid: *grid, power, amplitude: None, algorithm: Some(algorithm) })
    }
}
