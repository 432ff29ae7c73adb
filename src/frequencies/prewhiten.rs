//! Iterative frequency extraction ("prewhitening"): take the highest amplitude peak of the
//! residuals, refit all frequencies, amplitudes and phases jointly by nonlinear least
//! squares on the original data, and repeat until the new peak's amplitude signal-to-noise
//! falls below the stopping value (4 by default: Breger et al. 1993, A&A 271, 482). The
//! noise is the mean amplitude of the residual spectrum in a box around the frequency.
//! Combination frequencies f_i ± f_j and 2f_i within the resolution 1/T are flagged.

use super::model::{FittedSinusoid, Sinusoid, fit_sinusoids};
use crate::fit::weighted_linear_lsq;
use crate::periodogram::{Algorithm, FrequencyGrid, MultiBandLombScargle, Periodogram, SearchError, Series, Spectrum};
use std::f64::consts::TAU;

/// Options of the extraction.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PrewhitenOptions {
    /// Stop after this many accepted frequencies.
    pub max_frequencies: usize,
    /// Accept a frequency only if amplitude / noise ≥ this (Breger et al. 1993: 4).
    pub snr_stop: f64,
    /// Full width of the box in which the residual noise is averaged, c/d.
    pub noise_box_per_day: f64,
    /// Kernel for the amplitude spectra.
    pub algorithm: Algorithm,
}

impl Default for PrewhitenOptions {
    fn default() -> Self {
        PrewhitenOptions { max_frequencies: 20, snr_stop: 4.0, noise_box_per_day: 2.0, algorithm: Algorithm::Auto }
    }
}

/// A combination relation of an extracted frequency with earlier ones (indices).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Combination {
    /// f_k ≈ f_i + f_j.
    Sum {
        /// Index of the first earlier frequency.
        i: usize,
        /// Index of the second earlier frequency (j > i).
        j: usize,
    },
    /// f_k ≈ |f_i − f_j|.
    Difference {
        /// Index of the first earlier frequency.
        i: usize,
        /// Index of the second earlier frequency (j > i).
        j: usize,
    },
    /// f_k ≈ 2 f_i.
    Double {
        /// Index of the earlier frequency.
        i: usize,
    },
}

/// One extracted frequency.
#[derive(Debug, Clone, PartialEq)]
pub struct ExtractedFrequency {
    /// Parameters from the final joint fit.
    pub fit: FittedSinusoid,
    /// Amplitude signal-to-noise when it was accepted.
    pub snr: f64,
    /// Mean residual amplitude in the noise box when accepted (units of the values).
    pub noise: f64,
    /// Relations to earlier extracted frequencies within the resolution 1/T (empty: none).
    pub combinations: Vec<Combination>,
}

/// Why the extraction stopped.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum StopReason {
    /// The next candidate fell below the S/N limit (its frequency and S/N).
    BelowSnr {
        /// Frequency of the rejected candidate after the joint fit, cycles per day.
        freq_per_day: f64,
        /// Its amplitude signal-to-noise.
        snr: f64,
    },
    /// `max_frequencies` reached.
    MaxFrequencies,
    /// The model has as many parameters as the data allow.
    OutOfDegreesOfFreedom,
}

/// Result of the extraction.
#[derive(Debug, Clone, PartialEq)]
pub struct Prewhitening {
    /// The accepted frequencies, in the order of extraction.
    pub frequencies: Vec<ExtractedFrequency>,
    /// Zero point per band from the final joint fit, in the units of the values (the
    /// weighted mean when no frequency was accepted).
    pub zero_points: Vec<f64>,
    /// Observed minus the final model, one per point of the series (the values themselves
    /// when no frequency was accepted).
    pub residuals: Vec<f64>,
    /// Weighted rms of the residuals, in the units of the values (about the weighted mean
    /// when no frequency was accepted).
    pub residual_rms: f64,
    /// Why the extraction stopped.
    pub stop: StopReason,
}

fn amplitude_spectrum(series: &Series, grid: &FrequencyGrid, alg: Algorithm) -> Result<Spectrum, SearchError> {
    MultiBandLombScargle { algorithm: alg }.evaluate(series, grid)
}

fn box_noise(spec: &Spectrum, f: f64, width: f64) -> f64 {
    let amp = spec.amplitude.as_deref().unwrap_or(&[]);
    let (mut s, mut n) = (0.0, 0usize);
    for (k, a) in amp.iter().enumerate() {
        if (spec.grid.freq_per_day(k) - f).abs() <= 0.5 * width {
            s += a;
            n += 1;
        }
    }
    if n == 0 { f64::NAN } else { s / n as f64 }
}

/// Flags f_k ≈ f_i + f_j, |f_i − f_j| or 2 f_i (i, j < k) within `tol` c/d.
pub fn combination_flags(freqs_per_day: &[f64], k: usize, tol: f64) -> Vec<Combination> {
    let fk = freqs_per_day[k];
    let mut out = Vec::new();
    for i in 0..k {
        if (fk - 2.0 * freqs_per_day[i]).abs() < tol {
            out.push(Combination::Double { i });
        }
        for j in i + 1..k {
            if (fk - (freqs_per_day[i] + freqs_per_day[j])).abs() < tol {
                out.push(Combination::Sum { i, j });
            }
            if (fk - (freqs_per_day[i] - freqs_per_day[j]).abs()).abs() < tol {
                out.push(Combination::Difference { i, j });
            }
        }
    }
    out
}

/// Extracts frequencies from `series` on `grid` (see module doc).
pub fn prewhiten(
    series: &Series,
    grid: &FrequencyGrid,
    options: &PrewhitenOptions,
) -> Result<Prewhitening, SearchError> {
    if !(options.snr_stop.is_finite() && options.snr_stop > 0.0) {
        return Err(SearchError::InvalidParameter {
            name: "signal-to-noise limit",
            value: options.snr_stop,
            expected: "a finite number > 0 (4 is customary)",
        });
    }
    if !(options.noise_box_per_day.is_finite() && options.noise_box_per_day > 2.0 * grid.step_per_day) {
        return Err(SearchError::InvalidParameter {
            name: "noise box (c/d)",
            value: options.noise_box_per_day,
            expected: "a width covering several grid steps",
        });
    }
    let resolution = 1.0 / series.baseline_d();
    let mut accepted: Vec<ExtractedFrequency> = Vec::new();
    let mut current: Vec<Sinusoid> = Vec::new();
    let mut residual_series = series.clone();
    let mut zero_points = vec![series.weighted_mean(); series.n_bands()];
    let mean0 = series.weighted_mean();
    let sw0: f64 = series.weight.iter().sum();
    let mut residual_rms =
        (series.value.iter().zip(&series.weight).map(|(v, w)| w * (v - mean0) * (v - mean0)).sum::<f64>() / sw0).sqrt();
    let mut stop = StopReason::MaxFrequencies;
    while accepted.len() < options.max_frequencies {
        if series.len() <= series.n_bands() + 3 * (current.len() + 1) {
            stop = StopReason::OutOfDegreesOfFreedom;
            break;
        }
        let spec = amplitude_spectrum(&residual_series, grid, options.algorithm)?;
        let amp = spec.amplitude.clone().unwrap_or_default();
        let Some(k) = (0..amp.len()).max_by(|&a, &b| amp[a].total_cmp(&amp[b])) else { break };
        let f = spec.grid.freq_per_day(k);
        // starting amplitude and phase from a linear fit on the residuals
        let design: Vec<f64> = residual_series
            .time_d
            .iter()
            .flat_map(|&t| {
                let (s, c) = (TAU * f * t).sin_cos();
                [1.0, c, s]
            })
            .collect();
        let lin = weighted_linear_lsq(&design, 3, &residual_series.value, &residual_series.weight)?;
        let cand = Sinusoid {
            freq_per_day: f,
            amplitude: lin.params[1].hypot(lin.params[2]),
            phase_cycles: lin.params[2].atan2(lin.params[1]) / TAU,
        };
        let mut trial = current.clone();
        trial.push(cand);
        let fit = fit_sinusoids(series, &trial)?;
        let new_res = series.with_values(fit.residuals.clone())?;
        let res_spec = amplitude_spectrum(&new_res, grid, options.algorithm)?;
        let newest = fit.components[fit.components.len() - 1];
        let noise = box_noise(&res_spec, newest.freq_per_day, options.noise_box_per_day);
        let snr = newest.amplitude / noise;
        if !(snr >= options.snr_stop) {
            stop = StopReason::BelowSnr { freq_per_day: newest.freq_per_day, snr };
            break;
        }
        for (e, c) in accepted.iter_mut().zip(&fit.components) {
            e.fit = *c;
        }
        accepted.push(ExtractedFrequency { fit: newest, snr, noise, combinations: Vec::new() });
        current = fit.components.iter().map(|c| c.sinusoid()).collect();
        zero_points = fit.zero_points.clone();
        residual_rms = fit.residual_rms;
        residual_series = new_res;
    }
    let freqs: Vec<f64> = accepted.iter().map(|e| e.fit.freq_per_day).collect();
    for k in 0..accepted.len() {
        accepted[k].combinations = combination_flags(&freqs, k, resolution);
    }
    Ok(Prewhitening { frequencies: accepted, zero_points, residuals: residual_series.value, residual_rms, stop })
}
