//! # report — one self-contained HTML file for a run
//!
//! A [`Report`] is a title, provenance, and [`Section`]s; each section holds paragraphs,
//! [`Table`]s of text cells, [`ReportFigure`]s (SVG text, usually from
//! [`crate::plot::render_svg`]) and cautions. [`render_html`] turns it into one HTML5 page
//! and [`write_report`] writes that page atomically, refusing to overwrite an input.
//!
//! The page needs nothing from outside: the style sheet is inline, figures are inline
//! `<svg>` elements, no fonts, images or scripts are fetched. All text is HTML-escaped.
//!
//! Figures are explorable: every SVG figure skyclock draws carries its data
//! ([`crate::plot::data`]), and a small inline script written for this report
//! (`explore.js`, no library) redraws each such figure so that it can be zoomed (wheel;
//! Shift for x only) and panned (drag), shows the values of a point on hover or tap (for
//! timings: BJD_TDB, UTC, cycle, observer, error, residual), toggles series from legend
//! buttons and returns to the whole figure with Reset or a double click. Printing shows
//! the static figures (print style sheet); so does a reader without scripts. The script
//! also checks after loading that every figure has a non-zero drawn size and records the
//! counts on `<body>` as `data-figures-rendered` and `data-figures-explorable` (beside
//! the static `data-figures-expected` and `data-figures-explorable-expected`), so a
//! headless browser can confirm that figures render.
//!
//! ```no_run
//! use skyclock::report::{Report, ReportFigure, Section, Table, write_report};
//! use skyclock::table::Provenance;
//! # fn figure() -> skyclock::plot::Figure { unimplemented!() }
//! let provenance = Provenance::new("skyclock demo").with("ephemeris", "DE440 (embedded pack)");
//! let section = Section::new("Times of minimum")
//!     .with_paragraph("42 minima measured with Kwee–van Woerden.")
//!     .with_caution("Three timings lack uncertainties; 0.001 d was assumed.")
//!     .with_table(Table::new("Fitted ephemeris", &["quantity", "value"]).with_row(&["period (d)", "1.2345678"]))
//!     .with_figure(ReportFigure::from_figure(&figure(), "O–C diagram").unwrap());
//! let report = Report::new("Invented star XY Imag", provenance)
//!     .with_subtitle("Timings 1995–2025 from three invented sites")
//!     .with_section(section);
//! // Public fields may also be filled directly (report.sections.push(...)).
//! write_report(&report, std::path::Path::new("report.html"), &[]).unwrap();
//! ```

use std::fmt::Write as _;
use std::io::Write as _;
use std::path::Path;

use crate::plot::data::FIGURE_DATA_CLASS;
use crate::plot::{Figure, PlotError, render_svg};
use crate::table::write::{refuse_overwriting_inputs, write_atomically};
use crate::table::{Provenance, TableError};

/// A whole report: title, lines under it, provenance, and the sections in order.
#[derive(Debug, Clone, PartialEq)]
pub struct Report {
    /// Page title (also the `<title>`).
    pub title: String,
    /// Short lines shown under the title (target, data span, what was run).
    pub subtitle: Vec<String>,
    /// Tool, version, command and entries such as "ephemeris" and "leap_seconds".
    pub provenance: Provenance,
    /// Sections, in page order (each listed in the contents).
    pub sections: Vec<Section>,
}

/// One section: a heading, then cautions, paragraphs, tables and figures in that order.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Section {
    /// Heading, also its entry in the contents.
    pub heading: String,
    /// Paragraphs of plain text (HTML-escaped when written).
    pub paragraphs: Vec<String>,
    /// Tables, after the paragraphs.
    pub tables: Vec<Table>,
    /// Figures, after the tables.
    pub figures: Vec<ReportFigure>,
    /// Warnings the reader must not miss (shown first, in a marked box).
    pub cautions: Vec<String>,
}

/// A table of text cells with a caption; every row has one cell per column.
/// Cells that read as numbers are right-aligned.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Table {
    /// Caption, shown above the table and named in errors.
    pub caption: String,
    /// Column headings, with units where they have one.
    pub columns: Vec<String>,
    /// Rows of cells, one cell per column.
    pub rows: Vec<Vec<String>>,
}

/// A figure as SVG text (an `<svg>` element, optionally preceded by an XML declaration)
/// with a caption.
#[derive(Debug, Clone, PartialEq)]
pub struct ReportFigure {
    /// Caption, shown below the figure and named in errors.
    pub caption: String,
    /// The figure as SVG text.
    pub svg: String,
}

/// Why a report could not be produced.
#[derive(Debug, thiserror::Error)]
pub enum ReportError {
    /// A figure is not one `<svg>` element, or it scripts or fetches something.
    #[error("report figure '{caption}': {message}")]
    Figure {
        /// The figure's caption.
        caption: String,
        /// What is wrong with its SVG.
        message: String,
    },
    /// A table row has a different number of cells than the table has columns.
    #[error("report table '{caption}', row {row}: {cells} cells, but the table has {columns} columns")]
    TableShape {
        /// The table's caption.
        caption: String,
        /// The row, 1-based.
        row: usize,
        /// Cells in that row.
        cells: usize,
        /// Columns of the table.
        columns: usize,
    },
    /// A figure could not be rendered.
    #[error(transparent)]
    Plot(#[from] PlotError),
    /// The output path is one of the inputs, or the file could not be written.
    #[error(transparent)]
    Output(#[from] TableError),
}

impl Report {
    /// An empty report with `title` and `provenance`.
    pub fn new(title: &str, provenance: Provenance) -> Report {
        Report { title: title.to_string(), subtitle: Vec::new(), provenance, sections: Vec::new() }
    }

    /// Adds a line under the title.
    pub fn with_subtitle(mut self, line: &str) -> Report {
        self.subtitle.push(line.to_string());
        self
    }

    /// Adds a section at the end.
    pub fn with_section(mut self, section: Section) -> Report {
        self.sections.push(section);
        self
    }

    /// Number of figures in all sections.
    pub fn figure_count(&self) -> usize {
        self.sections.iter().map(|s| s.figures.len()).sum()
    }

    /// Number of figures that carry their data and so become explorable in the page.
    pub fn explorable_figure_count(&self) -> usize {
        self.sections.iter().flat_map(|s| &s.figures).filter(|f| f.is_explorable()).count()
    }
}

impl Section {
    /// An empty section with `heading`.
    pub fn new(heading: &str) -> Section {
        Section { heading: heading.to_string(), ..Section::default() }
    }

    /// Adds a paragraph.
    pub fn with_paragraph(mut self, text: &str) -> Section {
        self.paragraphs.push(text.to_string());
        self
    }

    /// Adds a caution.
    pub fn with_caution(mut self, text: &str) -> Section {
        self.cautions.push(text.to_string());
        self
    }

    /// Adds a table.
    pub fn with_table(mut self, table: Table) -> Section {
        self.tables.push(table);
        self
    }

    /// Adds a figure.
    pub fn with_figure(mut self, figure: ReportFigure) -> Section {
        self.figures.push(figure);
        self
    }
}

impl Table {
    /// A table with `caption` and column names, no rows yet.
    pub fn new(caption: &str, columns: &[&str]) -> Table {
        Table {
            caption: caption.to_string(),
            columns: columns.iter().map(|c| c.to_string()).collect(),
            rows: Vec::new(),
        }
    }

    /// Adds one row.
    pub fn with_row(mut self, cells: &[&str]) -> Table {
        self.rows.push(cells.iter().map(|c| c.to_string()).collect());
        self
    }
}

impl ReportFigure {
    /// Renders `fig` to SVG text (see [`crate::plot::render_svg`]) with `caption`; the SVG
    /// carries the figure's data, so the figure is explorable in the page.
    pub fn from_figure(fig: &Figure, caption: &str) -> Result<ReportFigure, PlotError> {
        Ok(ReportFigure { caption: caption.to_string(), svg: render_svg(fig)? })
    }

    /// Whether the SVG carries the figure's data ([`crate::plot::data`]), as every SVG
    /// figure skyclock writes does: the page then draws it as an explorable figure.
    pub fn is_explorable(&self) -> bool {
        self.svg.contains(&format!("<metadata class=\"{FIGURE_DATA_CLASS}\">"))
    }
}

/// Escapes text for HTML element content and quoted attribute values.
pub fn escape_html(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            _ => out.push(c),
        }
    }
    out
}

/// The `<svg>` element of a figure, ready to inline: the XML declaration and the
/// namespace attribute (optional for inline SVG in HTML5) removed. Refuses anything that
/// is not a single `<svg>` element, or that carries scripts or references outside the page.
fn inline_svg(fig: &ReportFigure) -> Result<String, ReportError> {
    let fail = |message: &str| ReportError::Figure { caption: fig.caption.clone(), message: message.to_string() };
    let mut s = fig.svg.trim();
    if s.starts_with("<?xml") {
        let end = s.find("?>").ok_or_else(|| fail("unterminated XML declaration"))?;
        s = s[end + 2..].trim_start();
    }
    if !s.starts_with("<svg") || !s.ends_with("</svg>") {
        return Err(fail("expected one <svg> element"));
    }
    let s = s.replacen(" xmlns=\"http://www.w3.org/2000/svg\"", "", 1);
    let lower = s.to_ascii_lowercase();
    for forbidden in ["<script", "<foreignobject", "http:", "https:", "javascript:", "<image", "@import"] {
        if lower.contains(forbidden) {
            return Err(fail(&format!(
                "the SVG contains '{forbidden}'; a report figure may not script or fetch anything"
            )));
        }
    }
    Ok(s)
}

/// True when a cell reads as a number (optionally with ± or an exponent), for alignment.
fn looks_numeric(cell: &str) -> bool {
    let t = cell.trim();
    !t.is_empty()
        && t.chars().any(|c| c.is_ascii_digit())
        && t.chars().all(|c| c.is_ascii_digit() || " +-−±.eE×^()".contains(c))
}

/// The style sheet: our own plain layout, dark text on white, figures scaled to the
/// column, cautions in an amber box, and print rules (no page breaks inside figures or
/// tables, links shown as text).
const STYLE: &str = r#"
:root { --ink: #1d2430; --muted: #5a6473; --rule: #d5dae1; --accent: #24507a; --caution-bg: #fff6e0; --caution-edge: #c77d00; }
* { box-sizing: border-box; }
body { margin: 0 auto; max-width: 1120px; padding: 2rem 1.5rem 4rem; color: var(--ink); background: #fff;
  font: 16px/1.5 system-ui, -apple-system, "Segoe UI", "DejaVu Sans", Arial, sans-serif; }
header.title-block { border-bottom: 3px solid var(--accent); padding-bottom: 0.75rem; margin-bottom: 1.25rem; }
h1 { font-size: 1.9rem; margin: 0 0 0.3rem; }
.subtitle { margin: 0.1rem 0; color: var(--muted); }
h2 { font-size: 1.35rem; margin: 2.2rem 0 0.6rem; padding-bottom: 0.2rem; border-bottom: 1px solid var(--rule); color: var(--accent); }
nav.contents { background: #f4f6f9; border: 1px solid var(--rule); padding: 0.6rem 1.2rem; margin: 1rem 0 1.5rem; }
nav.contents h2 { border: 0; margin: 0.2rem 0 0.3rem; font-size: 1.05rem; color: var(--ink); }
nav.contents ol { margin: 0; padding-left: 1.4rem; }
nav.contents a { color: var(--accent); text-decoration: none; }
nav.contents a:hover { text-decoration: underline; }
dl.provenance { display: grid; grid-template-columns: max-content 1fr; gap: 0.15rem 1rem; margin: 0.5rem 0; font-size: 0.92rem; }
dl.provenance dt { font-weight: 600; color: var(--muted); }
dl.provenance dd { margin: 0; font-family: ui-monospace, "DejaVu Sans Mono", Menlo, Consolas, monospace; overflow-wrap: anywhere; }
.caution { border-left: 6px solid var(--caution-edge); background: var(--caution-bg); padding: 0.5rem 0.9rem; margin: 0.7rem 0; }
.caution strong { color: #8a4b00; margin-right: 0.4rem; }
table { border-collapse: collapse; margin: 0.8rem 0 1.2rem; font-size: 0.92rem; }
caption { caption-side: top; text-align: left; font-weight: 600; padding-bottom: 0.3rem; }
th, td { border-bottom: 1px solid var(--rule); padding: 0.25rem 0.7rem; text-align: left; vertical-align: top; }
th { border-bottom: 2px solid var(--ink); }
td.number { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
tbody tr:nth-child(even) { background: #f8f9fb; }
figure { margin: 1rem 0 1.6rem; }
figure svg { display: block; max-width: 100%; height: auto; border: 1px solid var(--rule); }
figure svg text { font-family: "DejaVu Sans", "Liberation Sans", Arial, sans-serif; }
figcaption { color: var(--muted); font-size: 0.92rem; margin-top: 0.35rem; }
figure.not-rendered { outline: 3px solid #b00020; }
figure.explorable > svg { display: none; }
.sc-toolbar { display: flex; flex-wrap: wrap; gap: 0.35rem; align-items: center; margin-bottom: 0.35rem; font-size: 0.85rem; }
.sc-toolbar button { font: inherit; border: 1px solid var(--rule); background: #fff; border-radius: 3px; padding: 0.1rem 0.5rem; cursor: pointer; }
.sc-toolbar button[aria-pressed="false"] { opacity: 0.45; text-decoration: line-through; }
.sc-swatch { display: inline-block; width: 0.8rem; height: 0.8rem; margin-right: 0.3rem; vertical-align: -0.1rem; border-radius: 2px; }
.sc-hint { color: var(--muted); margin-left: auto; }
.sc-holder { position: relative; border: 1px solid var(--rule); }
.sc-plot { display: block; width: 100%; height: auto; touch-action: none; cursor: crosshair; user-select: none; }
.sc-plot text { font-family: "DejaVu Sans", "Liberation Sans", Arial, sans-serif; }
.sc-title { font-size: 20px; }
.sc-tick { font-size: 13px; fill: #333; }
.sc-axis { font-size: 15px; }
.sc-mark { font-size: 12px; }
.sc-tip { position: absolute; z-index: 2; background: #fffffff2; border: 1px solid var(--ink); padding: 0.3rem 0.5rem; font-size: 0.8rem; pointer-events: none; box-shadow: 0 1px 4px #0003; }
.sc-tip-head { font-weight: 600; margin-bottom: 0.15rem; }
.sc-tip table { margin: 0; font-size: inherit; border-collapse: collapse; }
.sc-tip th, .sc-tip td { border: 0; padding: 0 0.4rem 0 0; font-variant-numeric: tabular-nums; white-space: nowrap; }
.sc-tip th { font-weight: normal; color: var(--muted); }
footer { margin-top: 3rem; color: var(--muted); font-size: 0.85rem; border-top: 1px solid var(--rule); padding-top: 0.5rem; }
@media print {
  body { max-width: none; padding: 0; font-size: 11pt; }
  nav.contents { background: none; }
  nav.contents a { color: var(--ink); }
  figure, table, .caution { break-inside: avoid; page-break-inside: avoid; }
  h2 { break-after: avoid; page-break-after: avoid; }
  tbody tr:nth-child(even) { background: none; }
  .sc-view { display: none !important; }
  figure.explorable > svg { display: block !important; }
}
"#;

/// The page's one script (`explore.js`, written for this report, no library): runs once
/// the page has loaded, redraws every figure that carries its data as an explorable figure
/// (zoom, pan, values on hover or tap, legend toggles, reset), counts figures whose
/// drawing has a non-zero layout box and drawn content, marks the others, and records the
/// counts on `<body>` (`data-figures-rendered`, `data-figures-explorable`).
const EXPLORE_SCRIPT: &str = include_str!("explore.js");

/// The whole report as one HTML5 document (see the module notes for what it contains).
pub fn render_html(report: &Report) -> Result<String, ReportError> {
    let e = escape_html;
    let mut h = String::new();
    let p = &report.provenance;
    // Writing to a String cannot fail; the results of write! are ignored below.
    let _ = write!(
        h,
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n<meta name=\"generator\" content=\"{} {}\">\n<title>{}</title>\n<style>{}</style>\n</head>\n",
        e(&p.tool),
        e(&p.version),
        e(&report.title),
        STYLE
    );
    let _ = writeln!(
        h,
        "<body data-figures-expected=\"{}\" data-figures-explorable-expected=\"{}\">",
        report.figure_count(),
        report.explorable_figure_count()
    );
    let _ = writeln!(h, "<header class=\"title-block\">\n<h1>{}</h1>", e(&report.title));
    for line in &report.subtitle {
        let _ = writeln!(h, "<p class=\"subtitle\">{}</p>", e(line));
    }
    h.push_str("</header>\n");

    // Contents: provenance first, then each section.
    h.push_str("<nav class=\"contents\" aria-label=\"Contents\">\n<h2>Contents</h2>\n<ol>\n<li><a href=\"#provenance\">Provenance</a></li>\n");
    for (k, s) in report.sections.iter().enumerate() {
        let _ = writeln!(h, "<li><a href=\"#section-{}\">{}</a></li>", k + 1, e(&s.heading));
    }
    h.push_str("</ol>\n</nav>\n");

    h.push_str("<section id=\"provenance\">\n<h2>Provenance</h2>\n<dl class=\"provenance\">\n");
    let _ = writeln!(h, "<dt>tool</dt><dd>{} {}</dd>", e(&p.tool), e(&p.version));
    let _ = writeln!(h, "<dt>command</dt><dd>{}</dd>", e(&p.command));
    for (key, value) in &p.entries {
        let _ = writeln!(h, "<dt>{}</dt><dd>{}</dd>", e(key), e(value));
    }
    h.push_str("</dl>\n</section>\n");

    for (k, s) in report.sections.iter().enumerate() {
        let _ = writeln!(h, "<section id=\"section-{}\">\n<h2>{}</h2>", k + 1, e(&s.heading));
        for c in &s.cautions {
            let _ = writeln!(h, "<div class=\"caution\" role=\"note\"><strong>Caution</strong>{}</div>", e(c));
        }
        for para in &s.paragraphs {
            let _ = writeln!(h, "<p>{}</p>", e(para));
        }
        for t in &s.tables {
            for (r, row) in t.rows.iter().enumerate() {
                if row.len() != t.columns.len() {
                    return Err(ReportError::TableShape {
                        caption: t.caption.clone(),
                        row: r + 1,
                        cells: row.len(),
                        columns: t.columns.len(),
                    });
                }
            }
            let _ = writeln!(h, "<table>\n<caption>{}</caption>\n<thead><tr>", e(&t.caption));
            for c in &t.columns {
                let _ = write!(h, "<th scope=\"col\">{}</th>", e(c));
            }
            h.push_str("</tr></thead>\n<tbody>\n");
            for row in &t.rows {
                h.push_str("<tr>");
                for cell in row {
                    let class = if looks_numeric(cell) { " class=\"number\"" } else { "" };
                    let _ = write!(h, "<td{class}>{}</td>", e(cell));
                }
                h.push_str("</tr>\n");
            }
            h.push_str("</tbody>\n</table>\n");
        }
        for f in &s.figures {
            let svg = inline_svg(f)?;
            let _ = writeln!(
                h,
                "<figure class=\"report-figure\">\n{svg}\n<figcaption>{}</figcaption>\n</figure>",
                e(&f.caption)
            );
        }
        h.push_str("</section>\n");
    }
    let _ = writeln!(h, "<footer>Written by {} {}.</footer>", e(&p.tool), e(&p.version));
    let _ = writeln!(h, "<script>{EXPLORE_SCRIPT}</script>\n</body>\n</html>");
    Ok(h)
}

/// Writes `report` as one self-contained HTML file at `path`, atomically (temporary file
/// in the same folder, then rename), after checking that `path` is none of `inputs`.
pub fn write_report(report: &Report, path: &Path, inputs: &[&Path]) -> Result<(), ReportError> {
    refuse_overwriting_inputs(path, inputs)?;
    let html = render_html(report)?;
    write_atomically(path, |f| f.write_all(html.as_bytes()))?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::plot::{Layer, Panel};

    fn small_figure(title: &str) -> Figure {
        Figure {
            title: title.to_string(),
            panels: vec![Panel {
                x_label: "frequency (1/d)".into(),
                y_label: "power".into(),
                layers: vec![Layer::Line {
                    label: "power".into(),
                    x: vec![0.0, 1.0, 2.0],
                    y: vec![0.1, 0.9, 0.2],
                    colour: (0, 0, 0),
                }],
                invert_y: false,
                height_weight: 1,
            }],
            width: 400,
            height: 300,
        }
    }

    fn sample() -> Report {
        let provenance = Provenance::new("skyclock report <test> & more").with("ephemeris", "DE440 \"embedded\"");
        let s = Section::new("Minima & O–C")
            .with_paragraph("<script>alert(1)</script>")
            .with_caution("σ assumed > 0")
            .with_table(
                Table::new("fit <ok>", &["quantity", "value"])
                    .with_row(&["period (d)", "1.234 ± 0.002"])
                    .with_row(&["model", "linear"]),
            )
            .with_figure(ReportFigure::from_figure(&small_figure("periodogram & aliases"), "periodogram <1>").unwrap());
        Report::new("Star <b>XY</b> & co", provenance)
            .with_subtitle("invented 'site' 1 < 2")
            .with_section(s)
            .with_section(Section::new("Predictions"))
    }

    #[test]
    fn escapes_every_special_character() {
        // The five characters HTML requires escaping in text and quoted attributes (common practice).
        assert_eq!(escape_html(r#"a<b>&"c'"#), "a&lt;b&gt;&amp;&quot;c&#39;");
        assert_eq!(escape_html("Ω ± σ"), "Ω ± σ");
    }

    #[test]
    fn structure_and_escaping_of_a_report() {
        let r = sample();
        let h = render_html(&r).unwrap();
        assert!(h.starts_with("<!DOCTYPE html>"));
        assert!(h.contains("<title>Star &lt;b&gt;XY&lt;/b&gt; &amp; co</title>"));
        assert!(!h.contains("<script>alert"), "user text must be escaped");
        assert!(h.contains("&lt;script&gt;alert(1)&lt;/script&gt;"));
        // Exactly one script: the figure check.
        assert_eq!(h.matches("<script>").count(), 1);
        // Contents link to each section and to provenance; the targets exist.
        for id in ["provenance", "section-1", "section-2"] {
            assert!(h.contains(&format!("href=\"#{id}\"")), "{id}");
            assert!(h.contains(&format!("id=\"{id}\"")), "{id}");
        }
        // Provenance block: version, command, ephemeris.
        assert!(h.contains(&format!("<dd>skyclock {}</dd>", env!("CARGO_PKG_VERSION"))));
        assert!(h.contains("<dd>skyclock report &lt;test&gt; &amp; more</dd>"));
        assert!(h.contains("<dt>ephemeris</dt><dd>DE440 &quot;embedded&quot;</dd>"));
        // Cautions are marked; numbers right-aligned, words not.
        assert!(h.contains("<div class=\"caution\" role=\"note\"><strong>Caution</strong>σ assumed &gt; 0</div>"));
        assert!(h.contains("<td class=\"number\">1.234 ± 0.002</td>"));
        assert!(h.contains("<td>linear</td>"));
        // One inline figure, without namespace URL or XML declaration; nothing fetched.
        assert_eq!(h.matches("<svg").count(), 1);
        assert!(h.contains("data-figures-expected=\"1\""));
        // The figure carries its data, so the page makes it explorable.
        assert!(h.contains("data-figures-explorable-expected=\"1\""));
        assert!(h.contains("<metadata class=\"skyclock-figure-data\">"));
        assert!(h.contains("<figcaption>periodogram &lt;1&gt;</figcaption>"));
        assert!(!h.contains("<?xml"));
        assert!(!h.contains("http:") && !h.contains("https:"));
        assert!(!h.contains(" src=") && !h.contains("<link"));
    }

    #[test]
    fn refuses_bad_tables_and_figures() {
        let mut r = sample();
        r.sections[1].tables.push(Table::new("short", &["a", "b"]).with_row(&["1"]));
        assert!(matches!(render_html(&r), Err(ReportError::TableShape { row: 1, cells: 1, columns: 2, .. })));
        for bad in
            ["<div></div>", "<svg><script>x()</script></svg>", "<svg><image href=\"https://example.org/a.png\"/></svg>"]
        {
            let mut r = sample();
            r.sections[1].figures.push(ReportFigure { caption: "bad".into(), svg: bad.into() });
            assert!(matches!(render_html(&r), Err(ReportError::Figure { .. })), "{bad}");
        }
        let ok = ReportFigure {
            caption: "ok".into(),
            svg: "<?xml version=\"1.0\"?>\n<svg width=\"1\" height=\"1\"></svg>".into(),
        };
        assert_eq!(inline_svg(&ok).unwrap(), "<svg width=\"1\" height=\"1\"></svg>");
    }

    #[test]
    fn writes_atomically_and_never_over_an_input() {
        let d = std::env::temp_dir().join(format!("skyclock_report_{}", std::process::id()));
        std::fs::create_dir_all(&d).unwrap();
        let input = d.join("timings.csv");
        std::fs::write(&input, "bjd_tdb\n2460000.5\n").unwrap();
        let r = sample();
        assert!(matches!(
            write_report(&r, &input, &[&input]),
            Err(ReportError::Output(TableError::OutputIsInput { .. }))
        ));
        assert_eq!(std::fs::read_to_string(&input).unwrap(), "bjd_tdb\n2460000.5\n");
        let out = d.join("report.html");
        write_report(&r, &out, &[&input]).unwrap();
        assert_eq!(std::fs::read_to_string(&out).unwrap(), render_html(&r).unwrap());
        let leftovers: Vec<_> = std::fs::read_dir(&d)
            .unwrap()
            .filter_map(|e| e.ok())
            .filter(|e| e.file_name().to_string_lossy().contains("partial"))
            .collect();
        assert!(leftovers.is_empty());
        std::fs::remove_dir_all(&d).ok();
    }
}
