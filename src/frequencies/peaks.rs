//! The top peaks of a periodogram, refined by a least-squares sinusoid fit (frequency,
//! amplitude, phase and Montgomery & O'Donoghue 1999 uncertainties) or, for methods without
//! a sinusoid amplitude, a Fourier series sharing one frequency (`fold::refine`), then
//! annotated when a peak is a likely alias of a stronger one. It lives here, above
//! `periodogram` and `fold`, because it uses their models (DEVELOPERS.md, Layering).

use super::model::{Sinusoid, fit_sinusoids};
use crate::periodogram::peaks::{Peak, annotate_aliases, local_maxima};
use crate::periodogram::{SearchError, Series, Spectrum};

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
    /// Frequencies of spectral-window sidelobes to test (see [`window_sidelobes`]).
    pub window_sidelobes_per_day: Vec<f64>,
    /// Refine each peak by a least-squares sinusoid fit.
    pub refine: bool,
}

impl Default for PeakOptions {
    fn default() -> Self {
        PeakOptions {
            count: 5,
            min_separation_per_day: None,
            alias_tolerance_per_day: None,
            window_sidelobes_per_day: Vec::new(),
            refine: true,
        }
    }
}

/// The top peaks of a spectrum, refined and annotated (see [`PeakOptions`]).
/// Source of the uncertainties: Montgomery & O'Donoghue (1999), DSSN 13, 28.
pub fn describe_peaks(series: &Series, spectrum: &Spectrum, options: &PeakOptions) -> Result<Vec<Peak>, SearchError> {
    if options.count == 0 {
        return Err(SearchError::InvalidParameter { name: "peak count", value: 0.0, expected: "at least 1" });
    }
    let t_base = series.baseline_d();
    let sep = options.min_separation_per_day.unwrap_or(1.0 / t_base);
    let idx = local_maxima(spectrum, options.count, sep);
    let mut peaks = Vec::with_capacity(idx.len());
    /// Harmonics of the refinement model for non-sinusoidal methods.
    const REFINE_HARMONICS: usize = 6;
    for k in idx {
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
        if options.refine && f > 0.0 && spectrum.amplitude.is_none() {
            // Methods without a sinusoid amplitude (multi-harmonic, phase dispersion,
            // conditional entropy) find non-sinusoidal signals: refine with a Fourier series
            // of REFINE_HARMONICS harmonics sharing one frequency (fold::refine).
            if let Ok(r) = crate::fold::refine::refine_period(series, f, REFINE_HARMONICS)
                && (r.freq_per_day - f).abs() <= 2.0 * spectrum.grid.step_per_day
                && r.freq_err_per_day.is_finite()
            {
                peak.freq_per_day = r.freq_per_day;
                peak.freq_err_per_day = r.freq_err_per_day;
                peak.period_d = r.period_d;
                peak.period_err_d = r.period_err_d;
                peak.amplitude = f64::NAN;
                peak.refined = true;
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
                }
            }
        }
        peaks.push(peak);
    }
    let tol = options.alias_tolerance_per_day.unwrap_or(0.5 / t_base);
    annotate_aliases(&mut peaks, tol, &options.window_sidelobes_per_day);
    Ok(peaks)
}
