//! The O–C diagram of apsidal motion: primary and secondary minima with the fitted linear
//! ephemeris removed, each with its model curve, the two diverging and converging as the
//! line of apsides turns; a residuals panel below.

use super::{Figure, Layer, Panel};
use crate::oc::EventKind;
use crate::oc::apsidal::ApsidalAnalysis;

/// Reference JD subtracted on the time axis.
const AXIS_JD_OFFSET: f64 = 2_400_000.0;
const PRIMARY: (u8, u8, u8) = (31, 75, 153);
const SECONDARY: (u8, u8, u8) = (200, 82, 0);

/// The apsidal-motion figure of an analysis (x: BJD_TDB − 2400000 d; y: O − C minus the
/// fitted ΔT₀ + ΔP_s·E, days). `None` when the analysis kept no series or fit.
pub fn apsidal_diagram(title: &str, analysis: &ApsidalAnalysis) -> Option<Figure> {
    let (series, fit) = (analysis.series.as_ref()?, analysis.fit.as_ref()?);
    let (e1, e2) = series.reference.epoch.jd_two_part();
    let epoch_jd = (e1 - AXIS_JD_OFFSET) + e2;
    let period = series.reference.period_d;
    let curves = analysis.model_curves(800);
    let x_curve: Vec<f64> = curves.iter().map(|c| epoch_jd + c.0 * period).collect();
    let mut main = vec![
        Layer::Line {
            label: "primary model".into(),
            x: x_curve.clone(),
            y: curves.iter().map(|c| c.1).collect(),
            colour: PRIMARY,
        },
        Layer::Line {
            label: "secondary model".into(),
            x: x_curve.iter().map(|x| x + 0.5 * period).collect(),
            y: curves.iter().map(|c| c.2).collect(),
            colour: SECONDARY,
        },
    ];
    let mut resid = vec![Layer::Line {
        label: String::new(),
        x: vec![x_curve.first().copied().unwrap_or(0.0), x_curve.last().copied().unwrap_or(1.0)],
        y: vec![0.0, 0.0],
        colour: (0, 0, 0),
    }];
    for (kind, colour) in [(EventKind::Primary, PRIMARY), (EventKind::Secondary, SECONDARY)] {
        let idx: Vec<usize> = (0..series.len()).filter(|&i| series.kind[i] == kind).collect();
        let x: Vec<f64> = idx.iter().map(|&i| epoch_jd + series.time_d[i]).collect();
        let err: Vec<f64> = idx.iter().map(|&i| series.error_d[i]).collect();
        main.push(Layer::Points {
            label: format!("{kind} minima"),
            x: x.clone(),
            y: idx.iter().map(|&i| series.oc_d[i] - fit.linear_part_d(series.cycle[i])).collect(),
            y_err: Some(err.clone()),
            colour,
            size: 3,
            details: None,
        });
        resid.push(Layer::Points {
            label: String::new(),
            x,
            y: idx.iter().map(|&i| series.oc_d[i] - fit.model_oc_d(series.cycle[i], kind, series.time_d[i])).collect(),
            y_err: Some(err),
            colour,
            size: 3,
            details: None,
        });
    }
    Some(Figure {
        title: title.to_string(),
        panels: vec![
            Panel {
                x_label: "BJD_TDB − 2400000 (d)".into(),
                y_label: "O − C − (ΔT₀ + ΔP·E) (d)".into(),
                layers: main,
                invert_y: false,
                height_weight: 3,
            },
            Panel {
                x_label: "BJD_TDB − 2400000 (d)".into(),
                y_label: "O − C − model (d)".into(),
                layers: resid,
                invert_y: false,
                height_weight: 1,
            },
        ],
        width: 1100,
        height: 800,
    })
}
