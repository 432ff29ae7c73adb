//! Figures of the timing stage: the O–C diagram (timings coded by origin or event kind, a
//! fitted model with its 1σ band, a residuals panel) and the light-time orbit of a
//! companion (O–C with the ephemeris part removed, against the companion's orbital phase).
//! These only describe figures; [`super::write_figure`] draws them. Every timing carries
//! its hover details for the report: BJD_TDB, UTC, cycle, kind, observer, O − C, error,
//! residual from the model and input row.

use super::search::jd_text;
use super::{Figure, Layer, Panel, PhaseRange, PointDetails};
use crate::constants::SECONDS_PER_DAY;
use crate::oc::models::{eccentricity_omega, light_time_d};
use crate::oc::{ModelFit, OcSeries};
use crate::time::format::format_iso;
use crate::time::{Instant, ScaleConverter, TimeScale};

/// Colours of successive point groups (chosen to stay distinct in greyscale print).
const PALETTE: [(u8, u8, u8); 8] = [
    (31, 75, 153),
    (200, 82, 0),
    (0, 128, 96),
    (150, 40, 140),
    (90, 90, 90),
    (180, 150, 0),
    (0, 150, 200),
    (120, 60, 20),
];

/// Reference JD subtracted on the time axis.
const AXIS_JD_OFFSET: f64 = 2_400_000.0;

/// Index lists of the point groups: by origin when 2–8 distinct origins are named, else by
/// event kind. Returns (label, indices).
fn groups(series: &OcSeries) -> Vec<(String, Vec<usize>)> {
    let named = series.sources.iter().filter(|s| !s.is_empty()).count();
    if named >= 2 && series.sources.len() <= PALETTE.len() {
        return series
            .sources
            .iter()
            .enumerate()
            .map(|(k, label)| {
                (
                    if label.is_empty() { "unnamed origin".to_string() } else { label.clone() },
                    (0..series.len()).filter(|&i| series.source_index[i] == k).collect(),
                )
            })
            .filter(|(_, v): &(String, Vec<usize>)| !v.is_empty())
            .collect();
    }
    let mut out: Vec<(String, Vec<usize>)> = Vec::new();
    for (i, k) in series.kind.iter().enumerate() {
        match out.iter_mut().find(|g| g.0 == k.name()) {
            Some(g) => g.1.push(i),
            None => out.push((k.name().to_string(), vec![i])),
        }
    }
    out
}

/// How the times of the timings are shown on hover in the report.
#[derive(Debug, Clone, Copy)]
pub struct HoverTimes<'a> {
    /// Converts TDB to UTC with the leap-second table of the run.
    pub converter: &'a ScaleConverter,
    /// Time at the observer (TDB) of every input row, row r at index r − 1, when known
    /// (the `observer_tdb` column of a corrected table; `None` where unknown): its UTC is shown as the UTC at the
    /// observer. Without it the UTC of the barycentric instant is shown, labelled so.
    pub observer_tdb: Option<&'a [Option<Instant>]>,
}

/// A cycle number as written in O–C tables: whole, or with one decimal (secondaries: .5).
fn cycle_text(cycle: f64) -> String {
    if cycle.fract() == 0.0 { format!("{cycle:.0}") } else { format!("{cycle:.1}") }
}

/// Hover details of every timing of `series` (series order): BJD_TDB (8 decimals), UTC
/// (0.1 s), cycle, kind, observer, O − C, 1σ error and residual from `fit` (days and
/// seconds), input row.
pub fn timing_details(series: &OcSeries, fit: &ModelFit, times: &HoverTimes<'_>) -> PointDetails {
    let utc_name = if times.observer_tdb.is_some() { "UTC at the observer" } else { "UTC of the BJD_TDB instant" };
    let mut details = PointDetails::new(&[
        "BJD_TDB",
        utc_name,
        "cycle",
        "kind",
        "observer",
        "O − C",
        "error (1σ)",
        "residual (O − C − model)",
        "input row",
    ]);
    let days_and_seconds = |d: f64| format!("{d:+.6} d ({:+.1} s)", d * SECONDS_PER_DAY);
    for i in 0..series.len() {
        let bjd = series.reference.epoch.add_seconds(series.time_d[i] * SECONDS_PER_DAY);
        let row = series.row[i];
        let at_observer = match times.observer_tdb {
            Some(list) => row.checked_sub(1).and_then(|k| list.get(k)).copied().flatten(),
            None => Some(bjd),
        };
        let utc = at_observer
            .and_then(|t| times.converter.convert(&t, TimeScale::Utc).ok())
            .map_or("—".to_string(), |u| format_iso(&u, 1));
        let observer = series.sources.get(series.source_index[i]).filter(|s| !s.is_empty());
        let residual = series.oc_d[i] - fit.model_oc_d(series.cycle[i], series.time_d[i]);
        details.rows.push(vec![
            jd_text(&bjd, 8),
            utc,
            cycle_text(series.cycle[i]),
            series.kind[i].name().to_string(),
            observer.cloned().unwrap_or_else(|| "—".to_string()),
            days_and_seconds(series.oc_d[i]),
            format!("{:.6} d ({:.1} s)", series.error_d[i], series.error_d[i] * SECONDS_PER_DAY),
            days_and_seconds(residual),
            row.to_string(),
        ]);
    }
    details
}

/// The O–C diagram of `series` with the model `fit`: main panel with timings (1σ bars,
/// days), the model curve and its 1σ band from the covariance; residuals panel below. The
/// time axis is BJD_TDB − 2400000 (d). Each timing carries [`timing_details`] for the report.
pub fn oc_diagram(title: &str, series: &OcSeries, fit: &ModelFit, times: &HoverTimes<'_>) -> Figure {
    let (e1, e2) = series.reference.epoch.jd_two_part();
    let epoch_jd = (e1 - AXIS_JD_OFFSET) + e2;
    let x_of = |t_d: f64| epoch_jd + t_d;
    let details = timing_details(series, fit, times);
    let period = series.reference.period_d;
    let mut main_layers = Vec::new();
    let mut resid_layers = Vec::new();
    // The time span both panels share (the model curve runs 3 % beyond the data).
    let mut shared_x = None;
    // Model curve and band on a dense grid of cycles.
    if let (Some(&c0), Some(&c1)) = (series.cycle.first(), series.cycle.last()) {
        let span = (c1 - c0).max(1.0);
        let (lo, hi) = (c0 - 0.03 * span, c1 + 0.03 * span);
        let n = 600;
        let cycles: Vec<f64> = (0..=n).map(|k| lo + (hi - lo) * k as f64 / n as f64).collect();
        let x: Vec<f64> = cycles.iter().map(|&e| x_of(e * period)).collect();
        shared_x = Some((x[0], x[n]));
        let model: Vec<f64> = cycles.iter().map(|&e| fit.model_oc_d(e, e * period)).collect();
        let sigma: Vec<f64> = cycles.iter().map(|&e| fit.model_sigma_d(e, e * period)).collect();
        main_layers.push(Layer::Band {
            label: format!("{} model ±1σ", fit.kind.name()),
            x: x.clone(),
            lower: model.iter().zip(&sigma).map(|(m, s)| m - s).collect(),
            upper: model.iter().zip(&sigma).map(|(m, s)| m + s).collect(),
            colour: (200, 30, 30),
        });
        main_layers.push(Layer::Line {
            label: format!("{} model", fit.kind.name()),
            x,
            y: model,
            colour: (200, 30, 30),
        });
    }
    for (k, (label, idx)) in groups(series).into_iter().enumerate() {
        let colour = PALETTE[k % PALETTE.len()];
        let x: Vec<f64> = idx.iter().map(|&i| x_of(series.time_d[i])).collect();
        let err: Vec<f64> = idx.iter().map(|&i| series.error_d[i]).collect();
        main_layers.push(Layer::Points {
            label,
            x: x.clone(),
            y: idx.iter().map(|&i| series.oc_d[i]).collect(),
            y_err: Some(err.clone()),
            colour,
            size: 3,
            details: Some(details.pick(&idx)),
        });
        let resid: Vec<f64> =
            idx.iter().map(|&i| series.oc_d[i] - fit.model_oc_d(series.cycle[i], series.time_d[i])).collect();
        // Same colours as above; no second legend over the residuals.
        resid_layers.push(Layer::Points {
            label: String::new(),
            x,
            y: resid,
            y_err: Some(err),
            colour,
            size: 3,
            details: Some(details.pick(&idx)),
        });
    }
    let (x0, x1) = shared_x.unwrap_or((0.0, 1.0));
    resid_layers.insert(0, Layer::Line { label: String::new(), x: vec![x0, x1], y: vec![0.0, 0.0], colour: (0, 0, 0) });
    Figure {
        title: title.to_string(),
        panels: vec![
            Panel {
                x_label: "BJD_TDB − 2400000 (d)".into(),
                y_label: "O − C (d)".into(),
                layers: main_layers,
                invert_y: false,
                height_weight: 3,
            },
            Panel {
                x_label: "BJD_TDB − 2400000 (d)".into(),
                y_label: "O − C − model (d)".into(),
                layers: resid_layers,
                invert_y: false,
                height_weight: 1,
            },
        ],
        width: 1100,
        height: 800,
    }
}

/// The light-time orbit of the (first) fitted companion: O–C minus the fitted ephemeris
/// polynomial and any second companion (seconds) against the companion's orbital phase (0 at
/// periastron), with the Irwin (1952) model curve, both over `phase_range` (periastron seen
/// whole with the default −0.25 to 1.25). Each timing carries [`timing_details`] plus its
/// light-time delay. `None` when the model has no companion.
pub fn light_time_orbit(
    title: &str,
    series: &OcSeries,
    fit: &ModelFit,
    phase_range: PhaseRange,
    times: &HoverTimes<'_>,
) -> Option<Figure> {
    if !fit.kind.has_light_time() {
        return None;
    }
    let np = fit.kind.n_polynomial();
    let l = &fit.params[np..np + 5];
    let p3 = l[1];
    // Mean anomaly M(t) = M₀ + 2π t/P₃; phase 0 at periastron (M = 0).
    let phase_of = |t_d: f64| ((l[4] / std::f64::consts::TAU) + t_d / p3).rem_euclid(1.0);
    // Everything but the first companion: the polynomial and any second companion.
    let polynomial = |e: f64, t_d: f64| {
        let mut v = fit.params[0] + fit.params[1] * e;
        if fit.kind.has_quadratic() {
            v += fit.params[2] * e * e;
        }
        if fit.kind.companions() == 2 {
            v += light_time_d(&fit.params[np + 5..np + 10], t_d);
        }
        v
    };
    let n = (400.0 * phase_range.span()).ceil() as usize;
    let phases: Vec<f64> = (0..=n).map(|k| phase_range.start + phase_range.span() * k as f64 / n as f64).collect();
    // Time at each phase: t = (φ − M₀/2π)·P₃.
    let curve: Vec<f64> =
        phases.iter().map(|&ph| light_time_d(l, (ph - l[4] / std::f64::consts::TAU) * p3) * SECONDS_PER_DAY).collect();
    let mut layers =
        vec![Layer::Line { label: "light-time model (Irwin 1952)".into(), x: phases, y: curve, colour: (200, 30, 30) }];
    let delay_s: Vec<f64> = (0..series.len())
        .map(|i| (series.oc_d[i] - polynomial(series.cycle[i], series.time_d[i])) * SECONDS_PER_DAY)
        .collect();
    let mut details = timing_details(series, fit, times);
    details.names.push("light-time delay".into());
    for (row, d) in details.rows.iter_mut().zip(&delay_s) {
        row.push(format!("{d:+.1} s"));
    }
    for (k, (label, idx)) in groups(series).into_iter().enumerate() {
        let phase: Vec<f64> = idx.iter().map(|&i| phase_of(series.time_d[i])).collect();
        let (x, copy) = phase_range.repeat(&phase);
        let picked: Vec<usize> = copy.iter().map(|&c| idx[c]).collect();
        layers.push(Layer::Points {
            label,
            x,
            y: picked.iter().map(|&i| delay_s[i]).collect(),
            y_err: Some(picked.iter().map(|&i| series.error_d[i] * SECONDS_PER_DAY).collect()),
            colour: PALETTE[k % PALETTE.len()],
            size: 3,
            details: Some(details.pick(&picked)),
        });
    }
    let (e, w) = eccentricity_omega(l[2], l[3]);
    Some(Figure {
        title: format!("{title} — P₃ = {:.0} d, e = {:.2}, ω = {:.0}°", p3, e, w.to_degrees().rem_euclid(360.0)),
        panels: vec![Panel {
            x_label: "companion orbital phase (0 = periastron)".into(),
            y_label: "light-time delay (s)".into(),
            layers,
            invert_y: false,
            height_weight: 1,
        }],
        width: 1000,
        height: 650,
    })
}
