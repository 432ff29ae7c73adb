//! The data of a figure as JSON, embedded in every SVG figure inside a `<metadata>`
//! element (class [`FIGURE_DATA_CLASS`]). An SVG viewer ignores it; the HTML report reads
//! it to redraw the figure so that it can be zoomed, panned, hovered and its series
//! toggled, and anyone can take the plotted numbers back out of a figure file.
//!
//! Layout (version 1): `{"version":1,"title","width","height","panels":[{"x_label",
//! "y_label","invert_y","weight","layers":[…]}]}`; each layer has `"type"` (`points`,
//! `line`, `markers`, `guides`, `band`), `"label"`, `"group"` (the legend entry that
//! shows and hides it), `"colour"` (`#rrggbb`) and its arrays (`x`, `y`, `err`, `lower`,
//! `upper`, `text`); points may carry `"details":{"names":[…],"rows":[[…]]}`, one row of
//! text per point. Numbers are rounded to 12 significant digits; non-finite ones are `null`.

use serde_json::{Value, json};

use super::{Figure, Layer, PointDetails};

/// The class of the `<metadata>` element holding the figure data.
pub const FIGURE_DATA_CLASS: &str = "skyclock-figure-data";
/// Version of the layout above.
pub const FIGURE_DATA_VERSION: u32 = 1;

fn number(v: f64) -> Value {
    if !v.is_finite() {
        return Value::Null;
    }
    let rounded: f64 = format!("{v:.11e}").parse().unwrap_or(v);
    serde_json::Number::from_f64(rounded).map_or(Value::Null, Value::Number)
}

fn numbers(v: &[f64]) -> Value {
    Value::Array(v.iter().map(|&x| number(x)).collect())
}

fn colour(c: (u8, u8, u8)) -> String {
    format!("#{:02x}{:02x}{:02x}", c.0, c.1, c.2)
}

fn details(d: &PointDetails) -> Value {
    json!({ "names": d.names, "rows": d.rows })
}

/// The legend entry a layer belongs to: its own label; an unlabelled point layer joins the
/// labelled point layer of the same colour elsewhere in the figure (e.g. the residuals of
/// one observer's timings, drawn in that observer's colour without a second legend).
fn group_of(fig: &Figure, layer: &Layer) -> String {
    match layer {
        Layer::Points { label, colour, .. } if label.is_empty() => fig
            .panels
            .iter()
            .flat_map(|p| &p.layers)
            .find_map(|l| match l {
                Layer::Points { label: other, colour: c, .. } if !other.is_empty() && c == colour => {
                    Some(other.clone())
                }
                _ => None,
            })
            .unwrap_or_default(),
        Layer::Points { label, .. }
        | Layer::Line { label, .. }
        | Layer::Markers { label, .. }
        | Layer::Guides { label, .. }
        | Layer::Band { label, .. } => label.clone(),
    }
}

fn layer_value(fig: &Figure, layer: &Layer) -> Value {
    let group = group_of(fig, layer);
    match layer {
        Layer::Points { label, x, y, y_err, colour: c, size, details: d } => json!({
            "type": "points", "label": label, "group": group, "colour": colour(*c), "size": size,
            "x": numbers(x), "y": numbers(y), "err": y_err.as_ref().map(|e| numbers(e)),
            "details": d.as_ref().map(details),
        }),
        Layer::Line { label, x, y, colour: c } => json!({
            "type": "line", "label": label, "group": group, "colour": colour(*c), "x": numbers(x), "y": numbers(y),
        }),
        Layer::Markers { label, x, text, colour: c } => json!({
            "type": "markers", "label": label, "group": group, "colour": colour(*c), "x": numbers(x), "text": text,
        }),
        Layer::Guides { label, x, text, colour: c } => json!({
            "type": "guides", "label": label, "group": group, "colour": colour(*c), "x": numbers(x), "text": text,
        }),
        Layer::Band { label, x, lower, upper, colour: c } => json!({
            "type": "band", "label": label, "group": group, "colour": colour(*c),
            "x": numbers(x), "lower": numbers(lower), "upper": numbers(upper),
        }),
    }
}

/// The figure's data as compact JSON text (layout in the module notes).
pub fn figure_data_json(fig: &Figure) -> String {
    let panels: Vec<Value> = fig
        .panels
        .iter()
        .map(|p| {
            json!({
                "x_label": p.x_label, "y_label": p.y_label, "invert_y": p.invert_y,
                "weight": p.height_weight.max(1),
                "layers": p.layers.iter().map(|l| layer_value(fig, l)).collect::<Vec<_>>(),
            })
        })
        .collect();
    json!({
        "version": FIGURE_DATA_VERSION, "title": fig.title, "width": fig.width, "height": fig.height, "panels": panels,
    })
    .to_string()
}

/// Escapes text for XML character data.
fn escape_xml(text: &str) -> String {
    text.replace('&', "&amp;").replace('<', "&lt;").replace('>', "&gt;")
}

/// The `<metadata>` element carrying [`figure_data_json`], ready to go inside `<svg>`.
pub fn figure_data_element(fig: &Figure) -> String {
    format!("<metadata class=\"{FIGURE_DATA_CLASS}\">{}</metadata>", escape_xml(&figure_data_json(fig)))
}

/// Reads the figure data back out of SVG text written by [`super::render_svg`]:
/// `None` when the SVG carries none, or it is not valid JSON.
pub fn figure_data_from_svg(svg: &str) -> Option<Value> {
    let open = format!("<metadata class=\"{FIGURE_DATA_CLASS}\">");
    let start = svg.find(&open)? + open.len();
    let end = start + svg[start..].find("</metadata>")?;
    let text = svg[start..end].replace("&lt;", "<").replace("&gt;", ">").replace("&amp;", "&");
    serde_json::from_str(&text).ok()
}
