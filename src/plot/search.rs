//! Figures of the search stage, described as [`Figure`]s (drawn by [`super::write_figure`]):
//! the periodogram with its top peaks and, as a separate dashed layer, where the aliases
//! of the top peak fall; the folded light curve with error bars and a residuals panel
//! below it on the same phase axis.

use super::{Figure, Layer, Panel};
use crate::fold::{PhaseBin, residuals_from_bins};
use crate::periodogram::peaks::alias_frequencies;
use crate::survey::search::SearchOutcome;

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

/// What a folded-curve figure shows.
#[derive(Debug, Clone, Copy)]
pub struct FoldedCurve<'a> {
    /// Phases of the points, cycles.
    pub phase: &'a [f64],
    pub value: &'a [f64],
    /// 1-σ uncertainties of the values (drawn as error bars), if known.
    pub error: Option<&'a [f64]>,
    /// The binned curve (from [`crate::fold::bin_folded`] on the same points).
    pub bins: &'a [PhaseBin],
    /// Name of the values with their units, e.g. "V (mag)".
    pub value_label: &'a str,
    /// Draw values increasing downwards (magnitudes).
    pub invert_y: bool,
}

/// The folded light curve: points with error bars and the binned curve with its errors in
/// the main panel; below it, on the same phase axis, the residuals data − binned curve
/// with the same error bars and a zero line, y label in the units of the values.
pub fn folded_figure(curve: &FoldedCurve<'_>, title: &str) -> Figure {
    let residual = residuals_from_bins(curve.phase, curve.value, curve.bins);
    let err = curve.error.map(|e| e.to_vec());
    let main = Panel {
        x_label: "phase (cycles)".into(),
        y_label: curve.value_label.to_string(),
        invert_y: curve.invert_y,
        height_weight: 2,
        layers: vec![
            Layer::Points {
                label: "observations".into(),
                x: curve.phase.to_vec(),
                y: curve.value.to_vec(),
                y_err: err.clone(),
                colour: (120, 140, 180),
                size: 2,
            },
            Layer::Points {
                label: "binned".into(),
                x: curve.bins.iter().map(|b| b.phase_center).collect(),
                y: curve.bins.iter().map(|b| b.value).collect(),
                y_err: Some(curve.bins.iter().map(|b| b.error).collect()),
                colour: (200, 30, 30),
                size: 4,
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
                x: curve.phase.to_vec(),
                y: residual,
                y_err: err,
                colour: (120, 140, 180),
                size: 2,
            },
            Layer::Line { label: "zero".into(), x: vec![0.0, 1.0], y: vec![0.0, 0.0], colour: (0, 0, 0) },
        ],
    };
    Figure { title: title.to_string(), panels: vec![main, lower], width: 1200, height: 900 }
}
