//! # plot — figures as SVG or PNG, readable in print
//!
//! A small generic description ([`Figure`] of stacked [`Panel`]s, each holding [`Layer`]s:
//! points with uncertainty bars, lines, vertical markers with labels) rendered by plotters.
//! Periodograms, folded light curves, and later O–C diagrams and timing residuals (a main
//! panel plus a residuals panel) all use the same pieces. Text uses the DejaVu Sans font
//! committed beside this file (Bitstream Vera licence, see fonts/DejaVuSans-LICENSE.txt),
//! so no system fonts are needed.
//!
//! Every SVG figure also carries its data (axes, series, per-point details) as JSON in a
//! `<metadata>` element ([`data`]), from which the HTML report draws the explorable
//! version of the figure. Folded figures are drawn over a [`PhaseRange`] (default −0.25
//! to 1.25) so that events at phase 0 are seen whole; magnitude axes increase downwards.

pub mod apsidal;
pub mod data;
pub mod phase;
pub mod search;
pub mod timing;

pub use phase::{PhaseRange, PhaseRangeError};

use std::path::Path;

use plotters::coord::Shift;
use plotters::element::DashedPathElement;
use plotters::prelude::*;

/// What a reader is shown for each point of a [`Layer::Points`] when pointing at it in the
/// HTML report: column names and one row of text per point (same order as the points).
/// Text is formatted by the code that knows the quantities (times with their scale,
/// errors with their units).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct PointDetails {
    /// Names of the values, with units (e.g. "BJD_TDB", "error (d)").
    pub names: Vec<String>,
    /// One row per point, one cell per name.
    pub rows: Vec<Vec<String>>,
}

impl PointDetails {
    /// Details with `names` and no rows yet.
    pub fn new(names: &[&str]) -> PointDetails {
        PointDetails { names: names.iter().map(|n| n.to_string()).collect(), rows: Vec::new() }
    }

    /// The rows at `index` (in that order), for points drawn more than once or a subset.
    pub fn pick(&self, index: &[usize]) -> PointDetails {
        PointDetails {
            names: self.names.clone(),
            rows: index.iter().map(|&i| self.rows.get(i).cloned().unwrap_or_default()).collect(),
        }
    }
}

/// Layer drawn in a panel. A layer with an empty label stays out of the legend.
#[derive(Debug, Clone, PartialEq)]
pub enum Layer {
    /// Points with optional symmetric 1-σ y uncertainty bars and optional per-point details
    /// (shown on hover in the report; not drawn in the static figure).
    Points {
        /// Legend text; empty keeps the layer out of the legend.
        label: String,
        /// x of each point, in the panel's x unit; points with a non-finite x or y are not drawn.
        x: Vec<f64>,
        /// y of each point, in the panel's y unit.
        y: Vec<f64>,
        /// 1σ uncertainty of each y, same unit, drawn as a bar from y − σ to y + σ.
        y_err: Option<Vec<f64>>,
        /// Colour, 8-bit red, green, blue.
        colour: (u8, u8, u8),
        /// Marker radius, pixels.
        size: u32,
        /// Per-point details for the report's hover text, one row per point.
        details: Option<PointDetails>,
    },
    /// A connected line.
    Line {
        /// Legend text; empty keeps the layer out of the legend.
        label: String,
        /// x of each vertex, in the panel's x unit; non-finite vertices are left out.
        x: Vec<f64>,
        /// y of each vertex, in the panel's y unit.
        y: Vec<f64>,
        /// Colour, 8-bit red, green, blue.
        colour: (u8, u8, u8),
    },
    /// Vertical markers at x with a short text each (peaks, aliases).
    Markers {
        /// Legend text; empty keeps the layer out of the legend.
        label: String,
        /// Where each marker stands, in the panel's x unit.
        x: Vec<f64>,
        /// The text written beside each marker, in the order of `x`.
        text: Vec<String>,
        /// Colour, 8-bit red, green, blue.
        colour: (u8, u8, u8),
    },
    /// Dashed vertical guides at x with a short text each, written lower than the
    /// [`Layer::Markers`] texts (e.g. where aliases of a peak would fall).
    Guides {
        /// Legend text; empty keeps the layer out of the legend.
        label: String,
        /// Where each guide stands, in the panel's x unit.
        x: Vec<f64>,
        /// The text written beside each guide, in the order of `x`.
        text: Vec<String>,
        /// Colour, 8-bit red, green, blue.
        colour: (u8, u8, u8),
    },
    /// A shaded band between `lower` and `upper` along x (a model's 1σ region).
    Band {
        /// Legend text; empty keeps the layer out of the legend.
        label: String,
        /// x of each band point, in the panel's x unit, in drawing order.
        x: Vec<f64>,
        /// Lower edge at each x, in the panel's y unit.
        lower: Vec<f64>,
        /// Upper edge at each x, in the panel's y unit.
        upper: Vec<f64>,
        /// Colour, 8-bit red, green, blue (filled at 25 % opacity).
        colour: (u8, u8, u8),
    },
}

/// One panel: axes with labels (put units in them, e.g. "period (d)").
#[derive(Debug, Clone, PartialEq)]
pub struct Panel {
    /// Label of the x axis, with its unit.
    pub x_label: String,
    /// Label of the y axis, with its unit.
    pub y_label: String,
    /// What is drawn, in drawing order (later layers on top).
    pub layers: Vec<Layer>,
    /// Draw y increasing downwards (magnitudes).
    pub invert_y: bool,
    /// Relative height of the panel.
    pub height_weight: u32,
}

/// A figure: a title and panels stacked vertically (a main panel and e.g. residuals).
#[derive(Debug, Clone, PartialEq)]
pub struct Figure {
    /// Title drawn above the panels.
    pub title: String,
    /// Panels, top to bottom.
    pub panels: Vec<Panel>,
    /// Width, pixels.
    pub width: u32,
    /// Height, pixels, shared among the panels by their `height_weight`.
    pub height: u32,
}

/// Why a figure could not be written.
#[derive(Debug, thiserror::Error)]
pub enum PlotError {
    /// The output file's extension is neither `.svg` nor `.png`.
    #[error("{file}: figures are written as .svg or .png, not '{ext}'")]
    Format {
        /// The output file, as given.
        file: String,
        /// Its extension, lower-cased.
        ext: String,
    },
    /// Drawing the figure, or writing or moving the file into place, failed.
    #[error("{file}: {message}")]
    Draw {
        /// The output file, as given (or `figure '<title>'` when rendered in memory).
        file: String,
        /// What went wrong.
        message: String,
    },
}

static FONT: &[u8] = include_bytes!("fonts/DejaVuSans.ttf");
const FAMILY: &str = "skyclock-sans";

fn register_font() {
    static ONCE: std::sync::Once = std::sync::Once::new();
    ONCE.call_once(|| {
        let _ = plotters::style::register_font(FAMILY, FontStyle::Normal, FONT);
    });
}

fn range(values: impl Iterator<Item = f64>) -> (f64, f64) {
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for v in values.filter(|v| v.is_finite()) {
        lo = lo.min(v);
        hi = hi.max(v);
    }
    if !lo.is_finite() {
        return (0.0, 1.0);
    }
    let pad = if hi > lo { 0.05 * (hi - lo) } else { 0.5 };
    (lo - pad, hi + pad)
}

/// A drawing backend refused to draw (its message).
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{0}")]
struct DrawingFailed(String);

fn drawing_failed(e: impl std::fmt::Display) -> DrawingFailed {
    DrawingFailed(e.to_string())
}

fn draw_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    panel: &Panel,
    title: Option<&str>,
) -> Result<(), DrawingFailed> {
    let xs = panel.layers.iter().flat_map(|l| match l {
        Layer::Points { x, .. }
        | Layer::Line { x, .. }
        | Layer::Markers { x, .. }
        | Layer::Guides { x, .. }
        | Layer::Band { x, .. } => x.clone(),
    });
    let (x0, x1) = range(xs);
    let ys = panel.layers.iter().flat_map(|l| match l {
        Layer::Points { y, y_err, .. } => y
            .iter()
            .enumerate()
            .flat_map(|(i, v)| {
                let e = y_err.as_ref().and_then(|e| e.get(i)).copied().filter(|e| e.is_finite()).unwrap_or(0.0);
                [v - e, v + e]
            })
            .collect::<Vec<f64>>(),
        Layer::Line { y, .. } => y.clone(),
        Layer::Band { lower, upper, .. } => lower.iter().chain(upper).copied().collect(),
        Layer::Markers { .. } | Layer::Guides { .. } => Vec::new(),
    });
    let (y0, y1) = range(ys);
    let (ya, yb) = if panel.invert_y { (y1, y0) } else { (y0, y1) };
    let mut builder = ChartBuilder::on(area);
    builder.margin(12).x_label_area_size(48).y_label_area_size(72);
    if let Some(t) = title {
        builder.caption(t, (FAMILY, 22));
    }
    let mut chart = builder.build_cartesian_2d(x0..x1, ya..yb).map_err(drawing_failed)?;
    chart
        .configure_mesh()
        .x_desc(panel.x_label.as_str())
        .y_desc(panel.y_label.as_str())
        .label_style((FAMILY, 16))
        .axis_desc_style((FAMILY, 18))
        .light_line_style(RGBColor(235, 235, 235))
        .draw()
        .map_err(drawing_failed)?;
    for layer in &panel.layers {
        match layer {
            Layer::Band { label, x, lower, upper, colour } => {
                let c = RGBColor(colour.0, colour.1, colour.2);
                let ok: Vec<usize> = (0..x.len().min(lower.len()).min(upper.len()))
                    .filter(|&i| x[i].is_finite() && lower[i].is_finite() && upper[i].is_finite())
                    .collect();
                let outline: Vec<(f64, f64)> =
                    ok.iter().map(|&i| (x[i], upper[i])).chain(ok.iter().rev().map(|&i| (x[i], lower[i]))).collect();
                let anno = chart
                    .draw_series(std::iter::once(Polygon::new(outline, c.mix(0.25).filled())))
                    .map_err(drawing_failed)?;
                if !label.is_empty() {
                    anno.label(label.as_str()).legend(move |(px, py)| {
                        Rectangle::new([(px, py - 5), (px + 16, py + 5)], c.mix(0.25).filled())
                    });
                }
            }
            Layer::Points { label, x, y, y_err, colour, size, .. } => {
                let c = RGBColor(colour.0, colour.1, colour.2);
                if let Some(e) = y_err {
                    chart
                        .draw_series(
                            x.iter()
                                .zip(y)
                                .zip(e)
                                .filter(|((a, b), e)| a.is_finite() && b.is_finite() && e.is_finite())
                                .map(|((&a, &b), &e)| {
                                    PathElement::new(vec![(a, b - e), (a, b + e)], c.mix(0.6).stroke_width(1))
                                }),
                        )
                        .map_err(drawing_failed)?;
                }
                let s = *size as i32;
                let anno = chart
                    .draw_series(
                        x.iter()
                            .zip(y)
                            .filter(|(a, b)| a.is_finite() && b.is_finite())
                            .map(|(&a, &b)| Circle::new((a, b), s, c.filled())),
                    )
                    .map_err(drawing_failed)?;
                if !label.is_empty() {
                    anno.label(label.as_str()).legend(move |(px, py)| Circle::new((px + 8, py), s.max(3), c.filled()));
                }
            }
            Layer::Line { label, x, y, colour } => {
                let c = RGBColor(colour.0, colour.1, colour.2);
                let anno = chart
                    .draw_series(LineSeries::new(
                        x.iter().zip(y).filter(|(a, b)| a.is_finite() && b.is_finite()).map(|(&a, &b)| (a, b)),
                        c.stroke_width(2),
                    ))
                    .map_err(drawing_failed)?;
                if !label.is_empty() {
                    anno.label(label.as_str())
                        .legend(move |(px, py)| PathElement::new(vec![(px, py), (px + 16, py)], c.stroke_width(2)));
                }
            }
            Layer::Markers { label, x, text, colour } => {
                let c = RGBColor(colour.0, colour.1, colour.2);
                let anno = chart
                    .draw_series(
                        x.iter().map(|&a| PathElement::new(vec![(a, ya), (a, yb)], c.mix(0.8).stroke_width(1))),
                    )
                    .map_err(drawing_failed)?;
                if !label.is_empty() {
                    anno.label(label.as_str()).legend(move |(px, py)| {
                        PathElement::new(vec![(px + 8, py - 6), (px + 8, py + 6)], c.stroke_width(2))
                    });
                }
                let ytext = yb - 0.04 * (yb - ya);
                chart
                    .draw_series(
                        x.iter()
                            .zip(text)
                            .map(|(&a, t)| Text::new(t.clone(), (a, ytext), (FAMILY, 14).into_font().color(&c))),
                    )
                    .map_err(drawing_failed)?;
            }
            Layer::Guides { label, x, text, colour } => {
                let c = RGBColor(colour.0, colour.1, colour.2);
                let anno = chart
                    .draw_series(
                        x.iter().map(|&a| DashedPathElement::new(vec![(a, ya), (a, yb)], 6, 4, c.stroke_width(1))),
                    )
                    .map_err(drawing_failed)?;
                if !label.is_empty() {
                    anno.label(label.as_str()).legend(move |(px, py)| {
                        DashedPathElement::new(vec![(px + 2, py), (px + 16, py)], 4, 3, c.stroke_width(2))
                    });
                }
                // Below the legend box (upper right) so that no guide text hides under it.
                let ytext = yb - 0.2 * (yb - ya);
                chart
                    .draw_series(
                        x.iter()
                            .zip(text)
                            .map(|(&a, t)| Text::new(t.clone(), (a, ytext), (FAMILY, 13).into_font().color(&c))),
                    )
                    .map_err(drawing_failed)?;
            }
        }
    }
    // Layers with an empty label stay out of the legend; no legend box without entries.
    let labelled = panel.layers.iter().any(|l| match l {
        Layer::Points { label, .. }
        | Layer::Line { label, .. }
        | Layer::Markers { label, .. }
        | Layer::Band { label, .. }
        | Layer::Guides { label, .. } => !label.is_empty(),
    });
    if !labelled {
        return Ok(());
    }
    chart
        .configure_series_labels()
        .label_font((FAMILY, 15))
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .position(SeriesLabelPosition::UpperRight)
        .draw()
        .map_err(drawing_failed)?;
    Ok(())
}

fn draw_all<DB: DrawingBackend>(root: DrawingArea<DB, Shift>, fig: &Figure) -> Result<(), DrawingFailed> {
    root.fill(&WHITE).map_err(drawing_failed)?;
    let total: u32 = fig.panels.iter().map(|p| p.height_weight.max(1)).sum::<u32>().max(1);
    let mut rest = root.clone();
    let h = fig.height;
    for (k, panel) in fig.panels.iter().enumerate() {
        let ph = (h as u64 * panel.height_weight.max(1) as u64 / total as u64) as u32;
        let (top, bottom) =
            if k + 1 < fig.panels.len() { rest.split_vertically(ph) } else { (rest.clone(), rest.clone()) };
        draw_panel(&top, panel, (k == 0).then_some(fig.title.as_str()))?;
        rest = bottom;
    }
    root.present().map_err(drawing_failed)
}

/// Writes `fig` to `path` (.svg or .png), atomically (temporary file, then rename).
pub fn write_figure(fig: &Figure, path: &Path) -> Result<(), PlotError> {
    register_font();
    let file = path.display().to_string();
    let ext = path.extension().and_then(|e| e.to_str()).unwrap_or("").to_ascii_lowercase();
    if !matches!(ext.as_str(), "svg" | "png") {
        return Err(PlotError::Format { file, ext });
    }
    let tmp = crate::table::guard::temporary_path(path, &ext);
    let drawn = match ext.as_str() {
        "svg" => render_svg(fig).map_err(|e| e.to_string()).and_then(|text| {
            let (_, mut f) = crate::table::guard::create_temporary(path, &ext).map_err(|e| e.to_string())?;
            std::io::Write::write_all(&mut f, text.as_bytes()).map_err(|e| e.to_string())
        }),
        _ => crate::table::guard::claim_temporary(&tmp, path).map_err(|e| e.to_string()).and_then(|_| {
            draw_all(BitMapBackend::new(&tmp, (fig.width, fig.height)).into_drawing_area(), fig)
                .map_err(|e| e.to_string())
        }),
    };
    let done = drawn.and_then(|_| crate::table::guard::put_in_place(&tmp, path).map_err(|e| e.to_string()));
    if let Err(message) = done {
        let _ = std::fs::remove_file(&tmp);
        crate::table::guard::release_temporary(&tmp);
        return Err(PlotError::Draw { file, message });
    }
    Ok(())
}

/// Renders `fig` as SVG text in memory, with the same drawing code as [`write_figure`]
/// (for embedding figures inline, e.g. in the HTML report). Text is drawn as SVG `<text>`
/// elements naming the committed font family; the viewer falls back to a sans-serif face.
pub fn render_svg(fig: &Figure) -> Result<String, PlotError> {
    register_font();
    let mut out = String::new();
    draw_all(SVGBackend::with_string(&mut out, (fig.width, fig.height)).into_drawing_area(), fig)
        .map_err(|message| PlotError::Draw { file: format!("figure '{}'", fig.title), message: message.to_string() })?;
    // The glyphs were measured with the embedded DejaVu Sans; a viewer without our private
    // family name should fall back to the same face, or a sans-serif one, never to serif.
    let mut out = out.replace(
        &format!("font-family=\"{FAMILY}\""),
        &format!("font-family=\"{FAMILY}, DejaVu Sans, Liberation Sans, Arial, sans-serif\""),
    );
    // The figure's data, for the explorable report and for reading the numbers back.
    match out.rfind("</svg>") {
        Some(end) => out.insert_str(end, &data::figure_data_element(fig)),
        None => {
            return Err(PlotError::Draw {
                file: format!("figure '{}'", fig.title),
                message: "the SVG backend wrote no closing </svg>".into(),
            });
        }
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn writes_svg_and_png_with_two_panels() {
        let x: Vec<f64> = (0..50).map(|i| i as f64 * 0.02).collect();
        let y: Vec<f64> = x.iter().map(|v| (std::f64::consts::TAU * v).sin()).collect();
        let fig = Figure {
            title: "invented".into(),
            panels: vec![
                Panel {
                    x_label: "phase (cycles)".into(),
                    y_label: "magnitude".into(),
                    invert_y: true,
                    height_weight: 3,
                    layers: vec![
                        Layer::Points {
                            label: "points".into(),
                            x: x.clone(),
                            y: y.clone(),
                            y_err: Some(vec![0.1; 50]),
                            colour: (40, 80, 160),
                            size: 2,
                            details: None,
                        },
                        Layer::Markers {
                            label: "marks".into(),
                            x: vec![0.5],
                            text: vec!["P".into()],
                            colour: (200, 0, 0),
                        },
                    ],
                },
                Panel {
                    x_label: "phase (cycles)".into(),
                    y_label: "residual (mag)".into(),
                    invert_y: false,
                    height_weight: 1,
                    layers: vec![Layer::Line {
                        label: "zero".into(),
                        x: vec![0.0, 1.0],
                        y: vec![0.0, 0.0],
                        colour: (0, 0, 0),
                    }],
                },
            ],
            width: 800,
            height: 600,
        };
        let d = std::env::temp_dir().join(format!("skyclock_plot_{}", std::process::id()));
        std::fs::create_dir_all(&d).unwrap();
        write_figure(&fig, &d.join("f.svg")).unwrap();
        let svg = std::fs::read_to_string(d.join("f.svg")).unwrap();
        assert!(svg.contains("phase (cycles)") && svg.contains("magnitude"));
        write_figure(&fig, &d.join("f.png")).unwrap();
        assert!(std::fs::metadata(d.join("f.png")).unwrap().len() > 1000);
        assert!(write_figure(&fig, &d.join("f.jpg")).is_err());
        // In memory: the same drawing as the file.
        let text = render_svg(&fig).unwrap();
        assert_eq!(text, svg);
    }

    /// (value, y position) of every `<text>` that reads as a number and sits left of `x_max`.
    fn y_tick_labels(svg: &str, x_max: f64) -> Vec<(f64, f64)> {
        let attr = |tag: &str, name: &str| -> Option<f64> {
            let key = format!(" {name}=\"");
            let from = tag.find(&key)? + key.len();
            tag[from..from + tag[from..].find('"')?].parse().ok()
        };
        svg.split("<text")
            .skip(1)
            .filter_map(|chunk| {
                let close = chunk.find('>')?;
                let (tag, body) = (&chunk[..close], &chunk[close + 1..]);
                let value: f64 = body[..body.find("</text>")?].trim().parse().ok()?;
                let (x, y) = (attr(tag, "x")?, attr(tag, "y")?);
                (x < x_max).then_some((value, y))
            })
            .collect()
    }

    fn magnitude_figure(invert_y: bool) -> Figure {
        Figure {
            title: "invented eclipse".into(),
            panels: vec![Panel {
                x_label: "phase (cycles)".into(),
                y_label: "V (mag)".into(),
                invert_y,
                height_weight: 1,
                layers: vec![Layer::Points {
                    label: "observations".into(),
                    x: vec![0.0, 0.25, 0.5, 0.75],
                    y: vec![11.0, 10.0, 10.5, 10.0],
                    y_err: None,
                    colour: (0, 0, 0),
                    size: 2,
                    details: Some(PointDetails {
                        names: vec!["row".into()],
                        rows: (1..=4).map(|r| vec![r.to_string()]).collect(),
                    }),
                }],
            }],
            width: 600,
            height: 400,
        }
    }

    #[test]
    fn magnitude_axes_increase_downwards() {
        // Convention (common practice): brighter (smaller magnitude) is drawn higher.
        for invert in [true, false] {
            let svg = render_svg(&magnitude_figure(invert)).unwrap();
            let mut ticks = y_tick_labels(&svg, 80.0);
            assert!(ticks.len() >= 3, "y tick labels: {ticks:?}");
            ticks.sort_by(|a, b| a.0.total_cmp(&b.0));
            // SVG y grows downwards: with inverted axes the larger value has the larger y.
            let downwards = ticks.windows(2).all(|w| w[1].1 > w[0].1);
            let upwards = ticks.windows(2).all(|w| w[1].1 < w[0].1);
            assert!(if invert { downwards } else { upwards }, "invert_y = {invert}: {ticks:?}");
        }
    }

    #[test]
    fn svg_carries_the_figure_data() {
        let fig = magnitude_figure(true);
        let svg = render_svg(&fig).unwrap();
        let value = data::figure_data_from_svg(&svg).expect("figure data in the SVG");
        assert_eq!(value["version"], 1);
        let panel = &value["panels"][0];
        assert_eq!(panel["invert_y"], true);
        assert_eq!(panel["y_label"], "V (mag)");
        let layer = &panel["layers"][0];
        assert_eq!(layer["type"], "points");
        assert_eq!(layer["y"][0].as_f64(), Some(11.0));
        assert_eq!(layer["details"]["rows"][3][0], "4");
        // Escaped for XML: a label with markup characters survives the round trip.
        let mut odd = fig.clone();
        odd.title = "a < b & c > d".into();
        let svg = render_svg(&odd).unwrap();
        assert!(!svg.contains("a < b"));
        assert_eq!(data::figure_data_from_svg(&svg).unwrap()["title"], "a < b & c > d");
        // Non-finite numbers become null, the others keep 12 significant digits.
        let mut nan = fig.clone();
        if let Layer::Points { y, .. } = &mut nan.panels[0].layers[0] {
            y[1] = f64::NAN;
            y[2] = 59_000.123_456_789_12;
        }
        let v: serde_json::Value = serde_json::from_str(&data::figure_data_json(&nan)).unwrap();
        assert!(v["panels"][0]["layers"][0]["y"][1].is_null());
        assert_eq!(v["panels"][0]["layers"][0]["y"][2].as_f64(), Some(59_000.123_456_8));
    }
}
