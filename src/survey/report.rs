//! The serialisable report of one period search: what `find-periods --json` writes and a
//! library caller keeps. Built from a [`super::search::SearchOutcome`] (which also holds the
//! whole spectrum, left out here) by [`period_search_report`].

use serde::{Deserialize, Serialize};

use super::search::{SearchOutcome, describe_alias};
use crate::periodogram::significance::{format_log10_probability, format_probability};
use crate::table::summary::nan_as_null;

/// The frequency grid searched.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct GridReport {
    /// First frequency, cycles per day.
    pub start_per_day: f64,
    /// Step, cycles per day.
    pub step_per_day: f64,
    /// Number of trial frequencies.
    pub frequencies: usize,
}

/// The best box (transit or eclipse) of a box search.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BoxReport {
    /// Period, days (refined on a fine local grid; doubled when alternate minima differ).
    pub period_d: f64,
    /// 1σ of the period, days: the larger of the Δχ² profile's and the event-timing one.
    #[serde(with = "nan_as_null")]
    pub period_err_d: f64,
    /// Depth, units of the values (positive for a dip).
    pub depth: f64,
    /// 1σ of the depth.
    #[serde(with = "nan_as_null")]
    pub depth_err: f64,
    /// Duration, days.
    pub duration_d: f64,
    /// Resolution of the box edges, days.
    pub duration_resolution_d: f64,
    /// Mid-event time, days since the time reference of the search.
    pub mid_event_d_since_reference: f64,
    /// Signal detection efficiency (peak height over the spectrum's spread).
    #[serde(with = "nan_as_null")]
    pub signal_detection_efficiency: f64,
    /// Points inside the box.
    pub points_in_box: usize,
    /// Depth over its σ.
    #[serde(with = "nan_as_null")]
    pub signal_to_noise: f64,
    /// Events (cycles) with points inside the box.
    pub events_observed: usize,
    /// Depth of the odd-numbered events, in the units of the values.
    #[serde(with = "nan_as_null")]
    pub odd_depth: f64,
    /// 1σ of the odd-event depth, in the units of the values.
    #[serde(with = "nan_as_null")]
    pub odd_depth_err: f64,
    /// Depth of the even-numbered events, in the units of the values.
    #[serde(with = "nan_as_null")]
    pub even_depth: f64,
    /// 1σ of the even-event depth, in the units of the values.
    #[serde(with = "nan_as_null")]
    pub even_depth_err: f64,
    /// |odd − even| in σ of the difference.
    #[serde(with = "nan_as_null")]
    pub odd_even_sigma: f64,
    /// Depth of a box of the same duration at phase 0.5, in the units of the values.
    #[serde(with = "nan_as_null")]
    pub secondary_depth_phase_half: f64,
    /// 1σ of the depth at phase 0.5, in the units of the values.
    #[serde(with = "nan_as_null")]
    pub secondary_depth_phase_half_err: f64,
    /// Phase of the deepest dip elsewhere in phase, cycles after the primary.
    #[serde(with = "nan_as_null")]
    pub secondary_search_phase: f64,
    /// Depth of that dip, in the units of the values.
    #[serde(with = "nan_as_null")]
    pub secondary_search_depth: f64,
    /// 1σ of that depth, in the units of the values.
    #[serde(with = "nan_as_null")]
    pub secondary_search_depth_err: f64,
    /// χ²/(N − 5) of the box model (value² without uncertainties).
    #[serde(with = "nan_as_null")]
    pub reduced_chi2: f64,
    /// Factor applied to the weight-based σ (√χ²_red when > 1 with uncertainties; the
    /// residual rms without them; 1 otherwise).
    #[serde(with = "nan_as_null")]
    pub uncertainty_scale: f64,
}

/// One ranked peak.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PeakReport {
    /// Rank, 1 for the highest.
    pub rank: usize,
    /// Frequency, cycles per day.
    pub freq_per_day: f64,
    /// 1σ of the frequency (null when the peak was not refined).
    #[serde(with = "nan_as_null")]
    pub freq_err_per_day: f64,
    /// Period, days.
    pub period_d: f64,
    /// 1σ of the period, days.
    #[serde(with = "nan_as_null")]
    pub period_err_d: f64,
    /// Power of the method at the peak.
    pub power: f64,
    /// Sinusoid semi-amplitude, units of the values.
    #[serde(with = "nan_as_null")]
    pub amplitude: f64,
    /// 1σ of the amplitude.
    #[serde(with = "nan_as_null")]
    pub amplitude_err: f64,
    /// Phase of maximum, cycles from the time reference.
    #[serde(with = "nan_as_null")]
    pub phase_of_maximum_cycles: f64,
    /// 1σ of that phase, cycles.
    #[serde(with = "nan_as_null")]
    pub phase_err_cycles: f64,
    /// Whether the least-squares refinement succeeded.
    pub refined: bool,
    /// Analytic false-alarm probability (null where the method has none; 0 below the
    /// smallest `f64`, ~1e-308: read `log10_false_alarm_probability` there).
    #[serde(with = "nan_as_null")]
    pub false_alarm_probability: f64,
    /// log₁₀ of the false-alarm probability, computed in log space: keeps its digits where
    /// the probability itself underflows (null where the method has none or for a perfect
    /// fit, whose probability is exactly 0).
    #[serde(with = "nan_as_null", default = "not_a_number")]
    pub log10_false_alarm_probability: f64,
    /// Why this peak may be an alias of a stronger one.
    pub alias_notes: Vec<String>,
    /// How the uncertainties were obtained (model, reduced χ², any inflation); empty when
    /// the peak was not refined by a fit.
    pub uncertainty_basis: String,
}

/// Peaks, grid and detection of one search.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PeakTable {
    /// BJD_TDB (JD) the times, phases and mid-event times count from.
    pub phase_reference_bjd_tdb: String,
    /// Points searched.
    pub points: usize,
    /// Rows dropped because a time, value or error was not a number.
    pub rows_dropped_nan: usize,
    /// Baseline, days.
    pub baseline_d: f64,
    /// The frequency grid.
    pub grid: GridReport,
    /// Spectral-window sidelobes tested as alias sources, cycles per day.
    pub window_sidelobes_per_day: Vec<f64>,
    /// Bootstrap false-alarm probability of the top peak, if asked for.
    pub bootstrap_fap_top_peak: Option<f64>,
    /// The best box of a box search.
    #[serde(rename = "box")]
    pub box_detection: Option<BoxReport>,
    /// What was decided about the top peak's period and why (box search: odd/even minima),
    /// when there was a decision.
    pub period_note: Option<String>,
    /// The peaks, highest first.
    pub peaks: Vec<PeakReport>,
}

/// The report of one period search.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PeriodSearchReport {
    /// The method, in words.
    pub method: String,
    /// How the times were read and carried to BJD_TDB.
    pub times: String,
    /// Peaks, grid and detection.
    pub result: PeakTable,
}

/// The report of `outcome`: `method` and `times` describe the search and the input's
/// times; `phase_reference_bjd_tdb` is the JD text the search's times count from.
pub fn period_search_report(
    outcome: &SearchOutcome,
    method: &str,
    times: &str,
    phase_reference_bjd_tdb: &str,
) -> PeriodSearchReport {
    let grid = &outcome.spectrum.grid;
    PeriodSearchReport {
        method: method.to_string(),
        times: times.to_string(),
        result: PeakTable {
            phase_reference_bjd_tdb: phase_reference_bjd_tdb.to_string(),
            points: outcome.n_points,
            rows_dropped_nan: outcome.n_dropped,
            baseline_d: outcome.baseline_d,
            grid: GridReport {
                start_per_day: grid.start_per_day,
                step_per_day: grid.step_per_day,
                frequencies: grid.len,
            },
            window_sidelobes_per_day: outcome.window_sidelobes_per_day.clone(),
            bootstrap_fap_top_peak: outcome.bootstrap_fap.filter(|v| v.is_finite()),
            period_note: outcome.period_note.clone(),
            box_detection: outcome.box_detection.as_ref().map(|b| BoxReport {
                period_d: b.period_d,
                period_err_d: b.period_err_d,
                depth: b.depth,
                depth_err: b.depth_err,
                duration_d: b.duration_d,
                duration_resolution_d: b.duration_resolution_d,
                mid_event_d_since_reference: b.epoch_d,
                signal_detection_efficiency: b.sde,
                points_in_box: b.n_in_box,
                signal_to_noise: b.snr,
                events_observed: b.measurement.n_events,
                odd_depth: b.measurement.odd_depth,
                odd_depth_err: b.measurement.odd_depth_err,
                even_depth: b.measurement.even_depth,
                even_depth_err: b.measurement.even_depth_err,
                odd_even_sigma: b.measurement.odd_even_sigma,
                secondary_depth_phase_half: b.measurement.secondary_depth,
                secondary_depth_phase_half_err: b.measurement.secondary_depth_err,
                secondary_search_phase: b.measurement.secondary_search_phase,
                secondary_search_depth: b.measurement.secondary_search_depth,
                secondary_search_depth_err: b.measurement.secondary_search_depth_err,
                reduced_chi2: b.measurement.reduced_chi2,
                uncertainty_scale: b.measurement.err_scale,
            }),
            peaks: outcome
                .peaks
                .iter()
                .enumerate()
                .map(|(k, p)| PeakReport {
                    rank: k + 1,
                    freq_per_day: p.peak.freq_per_day,
                    freq_err_per_day: p.peak.freq_err_per_day,
                    period_d: p.peak.period_d,
                    period_err_d: p.peak.period_err_d,
                    power: p.peak.power,
                    amplitude: p.peak.amplitude,
                    amplitude_err: p.peak.amplitude_err,
                    phase_of_maximum_cycles: p.peak.phase_cycles,
                    phase_err_cycles: p.peak.phase_err_cycles,
                    refined: p.peak.refined,
                    false_alarm_probability: p.fap,
                    log10_false_alarm_probability: if p.log10_fap.is_finite() { p.log10_fap } else { f64::NAN },
                    alias_notes: p.peak.aliases.iter().map(describe_alias).collect(),
                    uncertainty_basis: p.refinement.map_or_else(
                        || {
                            if p.peak.refined && outcome.box_detection.is_some() && outcome.classification.is_none() {
                                "box fit: half the interval where the best-box delta-chi2 stays within max(1, reduced chi2) of its peak".to_string()
                            } else {
                                String::new()
                            }
                        },
                        |r| r.describe(),
                    ),
                })
                .collect(),
        },
    }
}

fn not_a_number() -> f64 {
    f64::NAN
}

/// A peak's false-alarm probability as text, from its log₁₀ where that is known (no floor:
/// "1.50e-27", and "10^-412.3" below the `f64` range) and from the probability otherwise
/// ([`format_probability`]); "n/a" where the method has none.
pub fn format_false_alarm(p: f64, log10_p: f64) -> String {
    if log10_p.is_nan() { format_probability(p) } else { format_log10_probability(log10_p) }
}

#[cfg(test)]
mod tests {
    use super::format_false_alarm;

    #[test]
    fn tiny_probabilities_keep_their_digits() {
        assert_eq!(format_false_alarm(1.5e-27, (1.5e-27f64).log10()), "1.50e-27");
        assert_eq!(format_false_alarm(2e-30, f64::NAN), "2.00e-30");
        assert_eq!(format_false_alarm(0.0, -412.34), "10^-412.3");
        assert_eq!(format_false_alarm(0.0123, f64::NAN), "1.23e-2");
        assert_eq!(format_false_alarm(f64::NAN, f64::NAN), "n/a");
    }
}
