//! Figures of the timing stage: the O–C diagram (timings coded by origin or event kind, a
//! fitted model with its 1σ band, a residuals panel) and the light-time orbit of a
//! companion (O–C with the ephemeris part removed, against the companion's orbital phase).
//! These only describe figures; [`super::write_figure`] draws them.

use super::{Figure, Layer, Panel};
use crate::constants::SECONDS_PER_DAY;
use crate::oc::models::{eccentricity_omega, light_time_d};
use crate::oc::{ModelFit, OcSeries};

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

/// The O–C diagram of `series` with the model `fit`: main panel with timings (1σ bars,
/// days), the model curve and its 1σ band from the covariance; residuals panel below.
/// `epoch_jd` is the reference epoch as a JD (for the time axis, BJD_TDB − 2400000).
pub fn oc_diagram(title: &str, series: &OcSeries, fit: &ModelFit, epoch_jd: f64) -> Figure {
    let x_of = |t_d: f64| epoch_jd - AXIS_JD_OFFSET + t_d;
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
        });
        let resid: Vec<f64> =
            idx.iter().map(|&i| series.oc_d[i] - fit.model_oc_d(series.cycle[i], series.time_d[i])).collect();
        // Same colours as above; no second legend over the residuals.
        resid_layers.push(Layer::Points { label: String::new(), x, y: resid, y_err: Some(err), colour, size: 3 });
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
/// polynomial and any second companion (seconds) against the companion's orbital phase (0 at periastron), with the Irwin (1952)
/// model curve over one orbit. `None` when the model has no companion.
pub fn light_time_orbit(title: &str, series: &OcSeries, fit: &ModelFit) -> Option<Figure> {
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
    let n = 400;
    let phases: Vec<f64> = (0..=n).map(|k| k as f64 / n as f64).collect();
    // Time at each phase: t = (φ − M₀/2π)·P₃.
    let curve: Vec<f64> =
        phases.iter().map(|&ph| light_time_d(l, (ph - l[4] / std::f64::consts::TAU) * p3) * SECONDS_PER_DAY).collect();
    let mut layers =
        vec![Layer::Line { label: "light-time model (Irwin 1952)".into(), x: phases, y: curve, colour: (200, 30, 30) }];
    for (k, (label, idx)) in groups(series).into_iter().enumerate() {
        layers.push(Layer::Points {
            label,
            x: idx.iter().map(|&i| phase_of(series.time_d[i])).collect(),
            y: idx
                .iter()
                .map(|&i| (series.oc_d[i] - polynomial(series.cycle[i], series.time_d[i])) * SECONDS_PER_DAY)
                .collect(),
            y_err: Some(idx.iter().map(|&i| series.error_d[i] * SECONDS_PER_DAY).collect()),
            colour: PALETTE[k % PALETTE.len()],
            size: 3,
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
