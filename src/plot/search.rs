//! Figures of the search stage, described as [`Figure`]s (drawn by [`super::write_figure`]):
//! the periodogram with its top peaks and, as a separate dashed layer, where the aliases
//! of the top peak fall; the folded light curve with error bars and a residuals panel
//! below it on the same phase axis, drawn over a [`PhaseRange`] so that each event is
//! seen whole, magnitudes increasing downwards.

use super::{Figure, Layer, Panel, PhaseRange, PointDetails};
use crate::constants::SECONDS_PER_DAY;
use crate::fold::{PhaseBin, residuals_from_bins};
use crate::periodogram::peaks::alias_frequencies;
use crate::survey::search::SearchOutcome;
use crate::time::Instant;
use crate::time::format::format_whole_and_fraction;

/// Legend label of the alias layer of [`periodogram_figure`].
pub const ALIAS_LAYER_LABEL: &str = "aliases of peak 1 (±1 c/sidereal day, ±1 c/yr, 2f, f/2)";
/// Legend label of the peak layer of [`periodogram_figure`].
pub const PEAK_LAYER_LABEL: &str = "top peaks (rank; * = likely alias)";

/// The periodogram of `outcome` (power against frequency in c/d) with the described peaks
/// marked by rank (a `*` when the peak is a likely alias of a stronger one) and, as a
/// separate dashed layer, the alias frequencies of the top peak inside the plotted range
/// and farther from it than the resolution 1/T of the baseline (see [`alias_frequencies`]).
/// An outcome without a spectrum (batch summaries) gives a
/// panel with the markers only.
pub fn periodogram_figure(outcome: &SearchOutcome, title: &str) -> Figure {
    let grid = &outcome.spectrum.grid;
    let marks: Vec<String> = outcome
        .peaks
        .iter()
        .enumerate()
        .map(|(k, p)| if p.peak.aliases.is_empty() { format!("{}", k + 1) } else { format!("{}*", k + 1) })
        .collect();
    let mut layers = vec![
        Layer::Line {
            label: "periodogram".into(),
            x: grid.frequencies(),
            y: outcome.spectrum.power.clone(),
            colour: (30, 60, 140),
        },
        Layer::Markers {
            label: PEAK_LAYER_LABEL.into(),
            x: outcome.peaks.iter().map(|p| p.peak.freq_per_day).collect(),
            text: marks,
            colour: (200, 30, 30),
        },
    ];
    if let Some(top) = outcome.peaks.first() {
        let resolution = if outcome.baseline_d > 0.0 { 1.0 / outcome.baseline_d } else { 0.0 };
        let aliases = alias_frequencies(top.peak.freq_per_day, grid.start_per_day, grid.max_freq_per_day(), resolution);
        if !aliases.is_empty() {
            layers.push(Layer::Guides {
                label: ALIAS_LAYER_LABEL.into(),
                x: aliases.iter().map(|a| a.freq_per_day).collect(),
                text: aliases.iter().map(|a| a.short_label()).collect(),
                colour: (230, 140, 20),
            });
        }
    }
    Figure {
        title: title.to_string(),
        panels: vec![Panel {
            x_label: "frequency (cycles per day)".into(),
            y_label: "power".into(),
            invert_y: false,
            height_weight: 1,
            layers,
        }],
        width: 1200,
        height: 700,
    }
}

/// Times of the folded points, for the values shown on hover in the report.
#[derive(Debug, Clone, Copy)]
pub struct FoldedTimes<'a> {
    /// The instant the days count from (BJD_TDB).
    pub epoch: Instant,
    /// Time of each point, days since `epoch` (same order as the phases).
    pub days: &'a [f64],
    /// 1-based input row of each point, if known.
    pub rows: Option<&'a [usize]>,
}

/// What a folded-curve figure shows.
#[derive(Debug, Clone, Copy)]
pub struct FoldedCurve<'a> {
    /// Phases of the points, cycles.
    pub phase: &'a [f64],
    /// Values of the points (magnitudes or fluxes), in the unit named by `value_label`.
    pub value: &'a [f64],
    /// 1-σ uncertainties of the values (drawn as error bars), if known.
    pub error: Option<&'a [f64]>,
    /// The binned curve (from [`crate::fold::bin_folded`] on the same points).
    pub bins: &'a [PhaseBin],
    /// Name of the values with their units, e.g. "V (mag)".
    pub value_label: &'a str,
    /// Draw values increasing downwards (magnitudes).
    pub invert_y: bool,
    /// The phases drawn; points, bins and residuals are repeated over it.
    pub phase_range: PhaseRange,
    /// Times of the points, if known (shown on hover in the report).
    pub times: Option<FoldedTimes<'a>>,
}

/// `v` with `digits` significant digits in fixed notation (at most 12 decimals).
pub(crate) fn significant(v: f64, digits: i32) -> String {
    if !v.is_finite() {
        return "—".to_string();
    }
    if v == 0.0 {
        return "0".to_string();
    }
    let decimals = (digits - 1 - v.abs().log10().floor() as i32).clamp(0, 12) as usize;
    format!("{v:.decimals$}")
}

/// A BJD_TDB (or other) instant as a Julian Date with `decimals` decimals, from the
/// integer day and the fraction separately (no precision lost in `f64`).
pub(crate) fn jd_text(t: &Instant, decimals: usize) -> String {
    let mut whole = t.mjd_day() + 2_400_000;
    let mut fraction = t.day_fraction() + 0.5;
    if fraction >= 1.0 {
        fraction -= 1.0;
        whole += 1;
    }
    format_whole_and_fraction(whole, fraction, decimals)
}

/// Hover details of the folded points (one row per point, in input order).
fn folded_details(curve: &FoldedCurve<'_>, residual: &[f64]) -> PointDetails {
    let mut names = Vec::new();
    if curve.times.is_some() {
        names.push("BJD_TDB".to_string());
    }
    names.extend(["phase (cycles)".to_string(), curve.value_label.to_string()]);
    if curve.error.is_some() {
        names.push("error".to_string());
    }
    names.push("residual".to_string());
    let rows_known = curve.times.and_then(|t| t.rows).is_some();
    if rows_known {
        names.push("input row".to_string());
    }
    let rows = (0..curve.phase.len())
        .map(|i| {
            let mut row = Vec::new();
            if let Some(t) = &curve.times {
                let day = t.days.get(i).copied().unwrap_or(f64::NAN);
                row.push(if day.is_finite() {
                    jd_text(&t.epoch.add_seconds(day * SECONDS_PER_DAY), 6)
                } else {
                    "—".to_string()
                });
            }
            row.push(format!("{:.4}", curve.phase[i].rem_euclid(1.0)));
            row.push(significant(curve.value.get(i).copied().unwrap_or(f64::NAN), 7));
            if let Some(e) = curve.error {
                row.push(significant(e.get(i).copied().unwrap_or(f64::NAN), 3));
            }
            row.push(significant(residual.get(i).copied().unwrap_or(f64::NAN), 3));
            if let Some(r) = curve.times.and_then(|t| t.rows) {
                row.push(r.get(i).map_or("—".to_string(), |r| r.to_string()));
            }
            row
        })
        .collect();
    PointDetails { names, rows }
}

/// The folded light curve over `curve.phase_range`: points with error bars and the binned
/// curve with its errors in the main panel; below it, on the same phase axis, the residuals
/// data − binned curve with the same error bars and a zero line, y label in the units of
/// the values. Each point appears at every copy of its phase inside the range (see
/// [`PhaseRange::copies`]); its hover details (time, phase in [0, 1), value, error,
/// residual, input row) are the same at every copy.
pub fn folded_figure(curve: &FoldedCurve<'_>, title: &str) -> Figure {
    let residual = residuals_from_bins(curve.phase, curve.value, curve.bins);
    let range = curve.phase_range;
    let (x, index) = range.repeat(curve.phase);
    let take = |v: &[f64]| -> Vec<f64> { index.iter().map(|&i| v.get(i).copied().unwrap_or(f64::NAN)).collect() };
    let err = curve.error.map(take);
    let details = folded_details(curve, &residual).pick(&index);
    let bin_phase: Vec<f64> = curve.bins.iter().map(|b| b.phase_center).collect();
    let (bin_x, bin_index) = range.repeat(&bin_phase);
    let bin_take =
        |f: &dyn Fn(&PhaseBin) -> f64| -> Vec<f64> { bin_index.iter().map(|&i| f(&curve.bins[i])).collect() };
    let bin_details = PointDetails {
        names: vec![
            "bin centre (cycles)".into(),
            format!("binned {}", curve.value_label),
            "error".into(),
            "points".into(),
        ],
        rows: bin_index
            .iter()
            .map(|&i| {
                let b = &curve.bins[i];
                vec![
                    format!("{:.4}", b.phase_center),
                    significant(b.value, 7),
                    significant(b.error, 3),
                    b.count.to_string(),
                ]
            })
            .collect(),
    };
    let main = Panel {
        x_label: "phase (cycles)".into(),
        y_label: curve.value_label.to_string(),
        invert_y: curve.invert_y,
        height_weight: 2,
        layers: vec![
            Layer::Points {
                label: "observations".into(),
                x: x.clone(),
                y: take(curve.value),
                y_err: err.clone(),
                colour: (120, 140, 180),
                size: 2,
                details: Some(details.clone()),
            },
            Layer::Points {
                label: "binned".into(),
                x: bin_x,
                y: bin_take(&|b| b.value),
                y_err: Some(bin_take(&|b| b.error)),
                colour: (200, 30, 30),
                size: 4,
                details: Some(bin_details),
            },
        ],
    };
    let lower = Panel {
        x_label: "phase (cycles)".into(),
        y_label: format!("residual, {}", curve.value_label),
        invert_y: curve.invert_y,
        height_weight: 1,
        layers: vec![
            Layer::Points {
                label: "data − binned curve".into(),
                x,
                y: take(&residual),
                y_err: err,
                colour: (120, 140, 180),
                size: 2,
                details: Some(details),
            },
            Layer::Line { label: "zero".into(), x: vec![range.start, range.end], y: vec![0.0, 0.0], colour: (0, 0, 0) },
        ],
    };
    Figure { title: title.to_string(), panels: vec![main, lower], width: 1200, height: 900 }
}
