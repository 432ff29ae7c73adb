//! The top peaks of a periodogram, refined by a least-squares sinusoid fit (frequency,
//! amplitude, phase and Montgomery & O'Donoghue 1999 uncertainties) or, for methods without
//! a sinusoid amplitude, a Fourier series sharing one frequency (`fold::refine`), then
//! annotated when a peak is a likely alias of a stronger one. It lives here, above
//! `periodogram` and `fold`, because it uses their models (DEVELOPERS.md, Layering).

use super::model::{Sinusoid, fit_sinusoids};
use crate::periodogram::peaks::{Peak, annotate_aliases, local_maxima};
use crate::periodogram::{SearchError, Series, Spectrum};
use rayon::prelude::*;

/// Options for [`describe_peaks`].
#[derive(Debug, Clone, PartialEq)]
pub struct PeakOptions {
    /// How many peaks to return.
    pub count: usize,
    /// Minimum distance between returned peaks, c/d; default 1/T.
    pub min_separation_per_day: Option<f64>,
    /// Tolerance for alias matching, c/d; default 0.5/T. Alias kinds whose offset is under
    /// twice the tolerance are not tested (they cannot be resolved).
    pub alias_tolerance_per_day: Option<f64>,
    /// Frequencies of spectral-window sidelobes to test, cycles per day (see
    /// [`crate::periodogram::peaks::window_sidelobes`]).
    pub window_sidelobes_per_day: Vec<f64>,
    /// Refine each peak by a least-squares sinusoid fit.
    pub refine: bool,
    /// Harmonics of the Fourier-series refinement for methods without a sinusoid amplitude
    /// (1..=10): the user's model for a multi-harmonic search (default 6).
    pub refine_harmonics: usize,
}

/// Default harmonics of the refinement for non-sinusoidal methods (phase dispersion,
/// conditional entropy) when the caller names no model.
pub const DEFAULT_REFINE_HARMONICS: usize = 6;

/// How a peak's uncertainties were obtained.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RefinementFit {
    /// Harmonics of the refinement model (1 for a sinusoid).
    pub harmonics: usize,
    /// χ²/dof of the refinement fit (value² without uncertainties).
    pub reduced_chi2: f64,
    /// Whether the σ were inflated by √(χ²/dof) because the model leaves χ²/dof > 1 on data
    /// with uncertainties (for the sinusoid, σ follow the residual rms, Montgomery &
    /// O'Donoghue 1999, which includes the misfit).
    pub err_inflated: bool,
    /// The factor applied (1 when none).
    pub err_scale: f64,
}

impl RefinementFit {
    /// The basis of the σ in words.
    pub fn describe(&self) -> String {
        if self.harmonics == 1 {
            format!(
                "sinusoid fit, sigma from the residual rms (Montgomery & O'Donoghue 1999), reduced chi2 {:.2}",
                self.reduced_chi2
            )
        } else if self.err_inflated {
            format!(
                "{}-harmonic fit, sigma inflated x{:.2} by sqrt(reduced chi2 {:.2}): the model does not describe the data to their errors",
                self.harmonics, self.err_scale, self.reduced_chi2
            )
        } else {
            format!("{}-harmonic fit, least-squares sigma, reduced chi2 {:.2}", self.harmonics, self.reduced_chi2)
        }
    }
}

impl Default for PeakOptions {
    fn default() -> Self {
        PeakOptions {
            count: 5,
            min_separation_per_day: None,
            alias_tolerance_per_day: None,
            window_sidelobes_per_day: Vec::new(),
            refine: true,
            refine_harmonics: DEFAULT_REFINE_HARMONICS,
        }
    }
}

/// The top peaks of a spectrum, refined and annotated (see [`PeakOptions`]).
/// Source of the uncertainties: Montgomery & O'Donoghue (1999), DSSN 13, 28.
pub fn describe_peaks(series: &Series, spectrum: &Spectrum, options: &PeakOptions) -> Result<Vec<Peak>, SearchError> {
    Ok(describe_peaks_with_fits(series, spectrum, options)?.into_iter().map(|(p, _)| p).collect())
}

/// [`describe_peaks`] with, for each refined peak, how its uncertainties were obtained.
pub fn describe_peaks_with_fits(
    series: &Series,
    spectrum: &Spectrum,
    options: &PeakOptions,
) -> Result<Vec<(Peak, Option<RefinementFit>)>, SearchError> {
    if !(1..=10).contains(&options.refine_harmonics) {
        return Err(SearchError::InvalidParameter {
            name: "refinement harmonics",
            value: options.refine_harmonics as f64,
            expected: "1 to 10",
        });
    }
    if options.count == 0 {
        return Err(SearchError::InvalidParameter { name: "peak count", value: 0.0, expected: "at least 1" });
    }
    let t_base = series.baseline_d();
    let sep = options.min_separation_per_day.unwrap_or(1.0 / t_base);
    let idx = local_maxima(spectrum, options.count, sep);
    // Each peak is refined on its own (in parallel: independent fits of the same series).
    let described: Vec<(Peak, Option<RefinementFit>)> =
        idx.par_iter().map(|&k| describe_one(series, spectrum, options, k)).collect();
    let (mut peaks, fits): (Vec<Peak>, Vec<Option<RefinementFit>>) = described.into_iter().unzip();
    let tol = options.alias_tolerance_per_day.unwrap_or(0.5 / t_base);
    annotate_aliases(&mut peaks, tol, &options.window_sidelobes_per_day);
    Ok(peaks.into_iter().zip(fits).collect())
}

/// The peak at grid index `k` of `spectrum`, refined per `options` (see [`describe_peaks`]).
fn describe_one(
    series: &Series,
    spectrum: &Spectrum,
    options: &PeakOptions,
    k: usize,
) -> (Peak, Option<RefinementFit>) {
    {
        let f = spectrum.grid.freq_per_day(k);
        let amp0 = spectrum.amplitude.as_ref().map_or(0.0, |a| a[k]);
        let mut peak = Peak {
            grid_index: k,
            power: spectrum.power[k],
            freq_per_day: f,
            freq_err_per_day: f64::NAN,
            period_d: 1.0 / f,
            period_err_d: f64::NAN,
            amplitude: amp0,
            amplitude_err: f64::NAN,
            phase_cycles: f64::NAN,
            phase_err_cycles: f64::NAN,
            refined: false,
            aliases: Vec::new(),
        };
        let mut fit_note = None;
        if options.refine && f > 0.0 && spectrum.amplitude.is_none() {
            // Methods without a sinusoid amplitude (multi-harmonic, phase dispersion,
            // conditional entropy) find non-sinusoidal signals: refine with a Fourier series
            // of `refine_harmonics` harmonics sharing one frequency (fold::refine).
            if let Ok(r) = crate::fold::refine::refine_period(series, f, options.refine_harmonics)
                && (r.freq_per_day - f).abs() <= 2.0 * spectrum.grid.step_per_day
                && r.freq_err_per_day.is_finite()
            {
                peak.freq_per_day = r.freq_per_day;
                peak.freq_err_per_day = r.freq_err_per_day;
                peak.period_d = r.period_d;
                peak.period_err_d = r.period_err_d;
                peak.amplitude = f64::NAN;
                peak.refined = true;
                fit_note = Some(RefinementFit {
                    harmonics: r.harmonics,
                    reduced_chi2: r.chi2 / r.dof.max(1) as f64,
                    err_inflated: r.err_inflated,
                    err_scale: if r.err_inflated { r.err_scale } else { 1.0 },
                });
            }
        } else if options.refine && f > 0.0 {
            // Start from the linear fit at the grid frequency (phase 0 and amplitude from the
            // spectrum are fine starting values: the fit is linear in a, b).
            let start = Sinusoid { freq_per_day: f, amplitude: amp0.max(1e-12), phase_cycles: 0.0 };
            if let Ok(fit) = fit_sinusoids(series, &[start]) {
                let c = fit.components[0];
                // Accept only refinements that stay within one grid step of the peak.
                if (c.freq_per_day - f).abs() <= 2.0 * spectrum.grid.step_per_day {
                    peak.freq_per_day = c.freq_per_day;
                    peak.freq_err_per_day = c.freq_err_per_day;
                    peak.period_d = c.period_d();
                    peak.period_err_d = c.period_err_d();
                    peak.amplitude = c.amplitude;
                    peak.amplitude_err = c.amplitude_err;
                    peak.phase_cycles = c.phase_cycles;
                    peak.phase_err_cycles = c.phase_err_cycles;
                    peak.refined = true;
                    let dof = (series.len() as f64 - (series.n_bands() + 3) as f64).max(1.0);
                    fit_note = Some(RefinementFit {
                        harmonics: 1,
                        reduced_chi2: fit.chi2 / dof,
                        err_inflated: false,
                        err_scale: 1.0,
                    });
                }
            }
        }
        (peak, fit_note)
    }
}
