//! Typed, serialisable result of `extract-frequencies`.

use serde::{Deserialize, Serialize};

use super::prewhiten::{Combination, PrewhitenOptions, Prewhitening, StopReason};
use crate::periodogram::Series;

/// One extracted frequency.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ExtractedFrequency {
    /// "f1", "f2", … in order of extraction.
    pub label: String,
    /// Frequency, cycles per day.
    pub freq_per_day: f64,
    /// 1-σ frequency error, cycles per day.
    pub freq_err_per_day: f64,
    /// Semi-amplitude, units of the values.
    pub amplitude: f64,
    /// 1-σ amplitude error, units of the values.
    pub amplitude_err: f64,
    /// Phase of maximum after the time reference, cycles.
    pub phase_cycles: f64,
    /// 1-σ phase error, cycles.
    pub phase_err_cycles: f64,
    /// Amplitude signal-to-noise ratio.
    pub signal_to_noise: f64,
    /// Mean residual amplitude around the frequency, units of the values.
    pub noise: f64,
    /// Combinations of earlier frequencies this one matches, e.g. "f1+f2 2f1".
    pub combination: String,
}

/// Result of `extract-frequencies`: successive prewhitening of one light curve.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FrequencyExtractionResult {
    /// Points used.
    pub points: usize,
    /// Rows dropped because a value was NaN.
    pub rows_dropped_nan: usize,
    /// Time span, days.
    pub baseline_d: f64,
    /// Frequency resolution 1/baseline, cycles per day.
    pub resolution_per_day: f64,
    /// Time reference of phases, BJD_TDB as decimal text.
    pub phase_reference_bjd_tdb: String,
    /// Detrending applied first, in words.
    pub detrending: Vec<String>,
    /// RMS of the residuals after the last frequency, units of the values.
    pub residual_rms: f64,
    /// Why extraction stopped, in words.
    pub stopped_because: String,
    /// Frequencies in order of extraction.
    pub frequencies: Vec<ExtractedFrequency>,
    /// How the times were taken (clock, site, conversion), as text.
    pub times: String,
}

impl FrequencyExtractionResult {
    /// The result of one prewhitening run ([`super::prewhiten::prewhiten`]) on `series`
    /// (after the detrending steps named in `detrending`), with the stop reason in words,
    /// frequencies labelled f1, f2, … and the resolution 1/baseline (c/d).
    /// `phase_reference_bjd_tdb` is the instant phases count from (JD text); `times` says how
    /// the times were read.
    pub fn from_run(
        series: &Series,
        result: &Prewhitening,
        options: &PrewhitenOptions,
        detrending: Vec<String>,
        phase_reference_bjd_tdb: String,
        times: String,
    ) -> FrequencyExtractionResult {
        let stopped_because = match result.stop {
            StopReason::BelowSnr { freq_per_day, snr } => {
                format!("next peak at {freq_per_day:.6} c/d has S/N {snr:.2} < {}", options.snr_stop)
            }
            StopReason::MaxFrequencies => format!("reached {} frequencies", options.max_frequencies),
            StopReason::OutOfDegreesOfFreedom => "the model has as many parameters as the data allow".into(),
        };
        FrequencyExtractionResult {
            points: series.len(),
            rows_dropped_nan: series.n_dropped(),
            baseline_d: series.baseline_d(),
            resolution_per_day: 1.0 / series.baseline_d(),
            phase_reference_bjd_tdb,
            detrending,
            residual_rms: result.residual_rms,
            stopped_because,
            frequencies: result
                .frequencies
                .iter()
                .enumerate()
                .map(|(k, x)| ExtractedFrequency {
                    label: format!("f{}", k + 1),
                    freq_per_day: x.fit.freq_per_day,
                    freq_err_per_day: x.fit.freq_err_per_day,
                    amplitude: x.fit.amplitude,
                    amplitude_err: x.fit.amplitude_err,
                    phase_cycles: x.fit.phase_cycles,
                    phase_err_cycles: x.fit.phase_err_cycles,
                    signal_to_noise: x.snr,
                    noise: x.noise,
                    combination: combination_text(&x.combinations),
                })
                .collect(),
            times,
        }
    }
}

/// "f1+f2 |f1-f3| 2f1": the combinations in words (indices are 0-based in the library).
pub fn combination_text(c: &[Combination]) -> String {
    c.iter()
        .map(|c| match c {
            Combination::Sum { i, j } => format!("f{}+f{}", i + 1, j + 1),
            Combination::Difference { i, j } => format!("|f{}-f{}|", i + 1, j + 1),
            Combination::Double { i } => format!("2f{}", i + 1),
        })
        .collect::<Vec<_>>()
        .join(" ")
}
