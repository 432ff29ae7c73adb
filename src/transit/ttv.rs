//! Transit timing variations: the O–C of mid-transit times fitted with a linear ephemeris
//! plus one sinusoid, T(E) = T₀ + P·E + A sin(2π E/P_ttv + φ), with the false-alarm
//! probability of the sinusoid from the periodogram of the O–C residuals (generalised
//! Lomb–Scargle over the cycle number, Baluev 2008), and that periodogram itself.
//!
//! A sinusoid is the first-order shape of the TTV of a planet near a mean-motion resonance
//! (Lithwick, Xie & Wu 2012, ApJ 761, 122) and of an exomoon or a distant companion's
//! light time over a short stretch; the fitted TTV period is in cycles (transits) of the
//! planet, the amplitude in days.

use serde::{Deserialize, Serialize};
use std::f64::consts::TAU;

use super::TransitError;
use super::timing::FittedValue;
use crate::fit::levenberg::{LevenbergOptions, LsqModel, levenberg_marquardt};
use crate::fit::linear::weighted_linear_lsq;
use crate::fit::small::{add_weighted_row, cholesky_solve_in_place};
use crate::oc::OcSeries;
use crate::periodogram::significance::baluev_log10_fap_nested;

/// Frequency range and sampling of the O–C periodogram.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct TtvSearchOptions {
    /// Shortest TTV period searched, cycles (≥ 2: timings one per cycle cannot show
    /// shorter periods, which alias to longer ones).
    pub min_period_cycles: f64,
    /// Longest TTV period searched, cycles; `None`: the span of the cycle numbers.
    pub max_period_cycles: Option<f64>,
    /// Frequency step = 1 / (oversampling × span).
    pub oversampling: f64,
}

impl Default for TtvSearchOptions {
    fn default() -> Self {
        TtvSearchOptions { min_period_cycles: 2.0, max_period_cycles: None, oversampling: 10.0 }
    }
}

/// The periodogram of the O–C: at each frequency, a sinusoid fitted together with the linear
/// ephemeris (so the power is the share of the linear ephemeris's χ² it removes).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct OcPeriodogram {
    /// Trial frequencies, per cycle.
    pub frequency_per_cycle: Vec<f64>,
    /// Power 1 − χ²(line + sinusoid at f)/χ²(line), the generalised Lomb–Scargle power of
    /// Zechmeister & Kürster (2009) with a line in place of the floating mean.
    pub power: Vec<f64>,
    /// Frequency of the highest peak, per cycle.
    pub peak_frequency_per_cycle: f64,
    /// Its power.
    pub peak_power: f64,
    /// Baluev (2008) false-alarm probability of a peak this high from white noise, log₁₀.
    pub log10_false_alarm_probability: f64,
}

/// The fitted linear ephemeris + sinusoidal TTV.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SinusoidalTtvFit {
    /// Offset of T₀ from the reference epoch, days.
    pub epoch_offset_d: FittedValue,
    /// Period of the planet, days.
    pub period_d: FittedValue,
    /// Semi-amplitude A of the TTV, days.
    pub amplitude_d: FittedValue,
    /// TTV period, cycles.
    pub ttv_period_cycles: FittedValue,
    /// Phase φ at E = 0, radians in (−π, π].
    pub phase_rad: FittedValue,
    /// χ² of the linear ephemeris alone.
    pub chi2_linear: f64,
    /// χ² with the sinusoid.
    pub chi2: f64,
    /// Degrees of freedom with the sinusoid (n − 5).
    pub dof: usize,
    /// Bayesian information criterion of the sinusoid minus that of the linear ephemeris
    /// (negative favours the sinusoid; Schwarz 1978).
    pub delta_bic: f64,
    /// The periodogram of the linear-ephemeris residuals (its peak seeds the fit).
    pub periodogram: OcPeriodogram,
    /// Notes (error scaling, weak detections, TTV period near the span).
    pub notes: Vec<String>,
}

/// The periodogram of the O–C of `series`: the power of a sinusoid fitted with a linear
/// ephemeris, over frequencies in cycles⁻¹ (up to 1/`min_period_cycles`).
///
/// Accuracy: exact weighted least squares per frequency. Source: Zechmeister & Kürster
/// (2009), A&A 496, 577, with a line as the base model; the false-alarm probability of
/// Baluev (2008), MNRAS 385, 1279, for a two-parameter base model, the cycle number in
/// place of time.
pub fn oc_periodogram(series: &OcSeries, options: &TtvSearchOptions) -> Result<OcPeriodogram, TransitError> {
    let (_, chi2_line, _) = linear_residuals(series)?;
    periodogram_of(series, chi2_line, options)
}

fn linear_residuals(series: &OcSeries) -> Result<(Vec<f64>, f64, [f64; 2]), TransitError> {
    let n = series.cycle.len();
    if n < 7 {
        return Err(TransitError::BadOption(format!(
            "a sinusoidal TTV needs at least 7 timings (5 parameters and a margin), got {n}"
        )));
    }
    let design: Vec<f64> = series.cycle.iter().flat_map(|e| [1.0, *e]).collect();
    let weight: Vec<f64> = series.error_d.iter().map(|s| 1.0 / (s * s)).collect();
    let fit =
        weighted_linear_lsq(&design, 2, &series.oc_d, &weight).map_err(|e| TransitError::BadOption(e.to_string()))?;
    let residuals: Vec<f64> =
        series.cycle.iter().zip(&series.oc_d).map(|(e, y)| y - fit.params[0] - fit.params[1] * e).collect();
    let chi2 = residuals.iter().zip(&weight).map(|(r, w)| r * r * w).sum();
    Ok((residuals, chi2, [fit.params[0], fit.params[1]]))
}

/// Power of a sinusoid of frequency `f` added to a line: 1 − χ²(line + sinusoid)/χ²(line).
fn nested_power(cycle: &[f64], oc: &[f64], weight: &[f64], chi2_line: f64, f: f64) -> f64 {
    let mut a = [0.0; 16];
    let mut b = [0.0; 4];
    for ((e, y), w) in cycle.iter().zip(oc).zip(weight) {
        let (s, c) = (TAU * f * e).sin_cos();
        add_weighted_row(&mut a, &mut b, &[1.0, *e, s, c], *w, *y);
    }
    if !cholesky_solve_in_place(&mut a, &mut b, 4) {
        return 0.0;
    }
    let chi2: f64 = cycle
        .iter()
        .zip(oc)
        .zip(weight)
        .map(|((e, y), w)| {
            let (s, c) = (TAU * f * e).sin_cos();
            let r = y - b[0] - b[1] * e - b[2] * s - b[3] * c;
            w * r * r
        })
        .sum();
    (1.0 - chi2 / chi2_line).clamp(0.0, 1.0)
}

fn periodogram_of(
    series: &OcSeries,
    chi2_line: f64,
    options: &TtvSearchOptions,
) -> Result<OcPeriodogram, TransitError> {
    let cycle = &series.cycle;
    let span =
        cycle.iter().cloned().fold(f64::NEG_INFINITY, f64::max) - cycle.iter().cloned().fold(f64::INFINITY, f64::min);
    if !(span > 0.0) {
        return Err(TransitError::BadOption("the timings span no cycles".into()));
    }
    if !(options.min_period_cycles >= 2.0 && options.oversampling >= 1.0) {
        return Err(TransitError::BadOption(format!(
            "TTV search: shortest period {} cycles must be ≥ 2 and oversampling {} ≥ 1",
            options.min_period_cycles, options.oversampling
        )));
    }
    let max_period = options.max_period_cycles.unwrap_or(span);
    if !(max_period > options.min_period_cycles) {
        return Err(TransitError::BadOption(format!(
            "TTV search: longest period {max_period} cycles must exceed the shortest {}",
            options.min_period_cycles
        )));
    }
    let f_max = 1.0 / options.min_period_cycles;
    let f_min = 1.0 / max_period;
    let step = 1.0 / (options.oversampling * span);
    let len = (((f_max - f_min) / step).floor() as usize + 1).max(2);
    let weight: Vec<f64> = series.error_d.iter().map(|s| 1.0 / (s * s)).collect();
    let frequency_per_cycle: Vec<f64> = (0..len).map(|k| f_min + k as f64 * step).collect();
    let power: Vec<f64> =
        frequency_per_cycle.iter().map(|f| nested_power(cycle, &series.oc_d, &weight, chi2_line, *f)).collect();
    let (k, peak) = power
        .iter()
        .cloned()
        .enumerate()
        .fold((0, f64::NEG_INFINITY), |best, (k, p)| if p > best.1 { (k, p) } else { best });
    let sw: f64 = weight.iter().sum();
    let mean: f64 = cycle.iter().zip(&weight).map(|(e, w)| e * w).sum::<f64>() / sw;
    let var_t = cycle.iter().zip(&weight).map(|(e, w)| w * (e - mean) * (e - mean)).sum::<f64>() / sw;
    let log10_fap = baluev_log10_fap_nested(peak, cycle.len(), 2, var_t, frequency_per_cycle[len - 1]);
    Ok(OcPeriodogram {
        frequency_per_cycle: frequency_per_cycle.clone(),
        power,
        peak_frequency_per_cycle: frequency_per_cycle[k],
        peak_power: peak,
        log10_false_alarm_probability: log10_fap,
    })
}

/// Linear ephemeris + sinusoid in O–C: parameters [t₀, P − P_ref, s, c, f] of
/// t₀ + ΔP·E + s sin(2πfE) + c cos(2πfE).
struct SineModel<'a> {
    cycle: &'a [f64],
    oc: &'a [f64],
    weight: Vec<f64>,
}

impl LsqModel for SineModel<'_> {
    fn n_params(&self) -> usize {
        5
    }
    fn n_obs(&self) -> usize {
        self.cycle.len()
    }
    fn predict(&self, q: &[f64], out: &mut [f64]) {
        for (o, e) in out.iter_mut().zip(self.cycle) {
            let (s, c) = (TAU * q[4] * e).sin_cos();
            *o = q[0] + q[1] * e + q[2] * s + q[3] * c;
        }
    }
    fn jacobian(&self, q: &[f64], jac: &mut [f64]) {
        for (i, e) in self.cycle.iter().enumerate() {
            let (s, c) = (TAU * q[4] * e).sin_cos();
            let row = &mut jac[5 * i..5 * i + 5];
            row[0] = 1.0;
            row[1] = *e;
            row[2] = s;
            row[3] = c;
            row[4] = TAU * e * (q[2] * c - q[3] * s);
        }
    }
    fn observed(&self) -> &[f64] {
        self.oc
    }
    fn weight(&self) -> &[f64] {
        &self.weight
    }
}

/// Fits T(E) = T₀ + P·E + A sin(2π E/P_ttv + φ) to the O–C of `series` (errors as given,
/// taken as true 1σ: the covariance is not rescaled by χ²_red, which is reported), starting
/// from the highest peak of the O–C periodogram.
///
/// Accuracy: σ from the covariance matrix at the solution; the amplitude is biased upwards
/// when A/σ_A ≲ 3 (a Rice distribution, common practice). Source: model as Lithwick, Xie &
/// Wu (2012) eq. 8 form; periodogram Zechmeister & Kürster (2009); false alarm Baluev (2008).
pub fn fit_sinusoidal_ttv(series: &OcSeries, options: &TtvSearchOptions) -> Result<SinusoidalTtvFit, TransitError> {
    let (_, chi2_linear, _) = linear_residuals(series)?;
    let periodogram = periodogram_of(series, chi2_linear, options)?;
    let f0 = periodogram.peak_frequency_per_cycle;
    // Seed the sinusoid's two amplitudes linearly at the peak frequency.
    let weight: Vec<f64> = series.error_d.iter().map(|s| 1.0 / (s * s)).collect();
    let design: Vec<f64> = series
        .cycle
        .iter()
        .flat_map(|e| {
            let (s, c) = (TAU * f0 * e).sin_cos();
            [1.0, *e, s, c]
        })
        .collect();
    let seed =
        weighted_linear_lsq(&design, 4, &series.oc_d, &weight).map_err(|e| TransitError::BadOption(e.to_string()))?;
    let model = SineModel { cycle: &series.cycle, oc: &series.oc_d, weight };
    let start = [seed.params[0], seed.params[1], seed.params[2], seed.params[3], f0];
    let fit = levenberg_marquardt(&model, &start, &LevenbergOptions::default())
        .map_err(|e| TransitError::BadOption(format!("the sinusoidal TTV fit failed: {e}")))?;
    let q = &fit.params;
    let cov = |a: usize, b: usize| fit.covariance.get(a * 5 + b).copied().unwrap_or(f64::NAN);
    let value = |v: f64, var: f64| FittedValue { value: v, sigma: (var.is_finite() && var >= 0.0).then(|| var.sqrt()) };
    let (s, c, f) = (q[2], q[3], q[4]);
    let amplitude = s.hypot(c);
    let var_a = (s * s * cov(2, 2) + c * c * cov(3, 3) + 2.0 * s * c * cov(2, 3)) / (amplitude * amplitude);
    // φ = atan2(c, s): A sin(x + φ) = A cos φ sin x + A sin φ cos x.
    let phase = c.atan2(s);
    let var_phase = (c * c * cov(2, 2) + s * s * cov(3, 3) - 2.0 * s * c * cov(2, 3)) / amplitude.powi(4);
    let ttv_period = 1.0 / f.abs();
    let var_period = cov(4, 4) / f.powi(4);
    let n = series.cycle.len() as f64;
    let delta_bic = fit.chi2 - chi2_linear + 3.0 * n.ln();
    let mut notes = Vec::new();
    let chi2_red = fit.chi2 / fit.dof.max(1) as f64;
    if chi2_red > 1.5 {
        notes.push(format!(
            "note: χ²/dof = {chi2_red:.2} with the sinusoid: the timing errors look too small or the model too simple; \
             the σ above assume the given errors"
        ));
    }
    if periodogram.log10_false_alarm_probability > -2.0 {
        notes.push(format!(
            "note: the O–C periodogram peak has a false-alarm probability of {:.2} — not a significant TTV",
            10f64.powf(periodogram.log10_false_alarm_probability)
        ));
    }
    let span = series.cycle.iter().cloned().fold(f64::NEG_INFINITY, f64::max)
        - series.cycle.iter().cloned().fold(f64::INFINITY, f64::min);
    if ttv_period > 0.7 * span {
        notes.push(format!(
            "note: the TTV period ({ttv_period:.1} cycles) is not much shorter than the span ({span:.0} cycles): it trades \
             off against the linear ephemeris"
        ));
    }
    Ok(SinusoidalTtvFit {
        epoch_offset_d: value(q[0], cov(0, 0)),
        period_d: value(series.reference.period_d + q[1], cov(1, 1)),
        amplitude_d: value(amplitude, var_a),
        ttv_period_cycles: value(ttv_period, var_period),
        phase_rad: value(phase, var_phase),
        chi2_linear,
        chi2: fit.chi2,
        dof: fit.dof,
        delta_bic,
        periodogram,
        notes,
    })
}
