//! The HTML report in a real browser: a report with real figures (a Lomb–Scargle
//! periodogram, an O–C diagram with a fitted light-time model, the companion's light-time
//! orbit, a folded light curve in magnitudes) is written and opened in headless Chromium.
//! Checked: the page loads with no console messages, every figure has a non-zero drawn
//! size and every figure became explorable (the page's own check records the counts on
//! `<body>`), and a screenshot is produced (kept under the cargo target folder, never in
//! git). The interaction test appends a driver script to a copy of the page that acts as
//! a reader would — points at a known timing, clicks a legend entry, turns the wheel,
//! drags, presses Reset — and writes what it saw into the page, which the test reads from
//! the dumped DOM. All data are invented. The detectors are first shown to fire on pages
//! that deliberately fail, so a silent browser cannot pass the test.
//!
//! When neither `chromium` nor `chromium-browser` is on PATH the tests print a "SKIPPED:"
//! line and pass — unless `CI=true` or `SKYCLOCK_REQUIRE_BROWSER` is set (`.ci/run` sets
//! both), when they fail.

#[path = "common/prerequisite.rs"]
mod prerequisite;

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant as Clock};

use skyclock::fit::SeededRng;
use skyclock::fold::{BinStatistic, bin_folded, fold_times};
use skyclock::oc::models::light_time_d;
use skyclock::oc::{
    CycleOptions, EventKind, FitOptions, ModelKind, ReferenceEphemeris, Timing, assign_cycles, fit_model,
};
use skyclock::periodogram::{FrequencyGrid, GeneralisedLombScargle, Periodogram, Series};
use skyclock::plot::search::{FoldedCurve, folded_figure};
use skyclock::plot::timing::{HoverTimes, light_time_orbit, oc_diagram};
use skyclock::plot::{Figure, Layer, Panel, PhaseRange};
use skyclock::report::{Report, ReportFigure, Section, Table, write_report};
use skyclock::table::Provenance;
use skyclock::time::format::format_iso;
use skyclock::time::{Instant, LeapSecondTable, ScaleConverter, TimeScale};

/// The browser on PATH; `None` (after saying so) when it is missing and may be skipped.
fn browser_or_skip(what: &str) -> Option<PathBuf> {
    let found = find_chromium();
    if found.is_none() {
        assert!(
            std::env::var_os("SKYCLOCK_REQUIRE_BROWSER").is_none(),
            "chromium is not installed but SKYCLOCK_REQUIRE_BROWSER is set ({what})"
        );
        prerequisite::missing(&format!("chromium ({what})"), "apt-get install chromium");
    }
    found
}

/// The browser on PATH, if any.
fn find_chromium() -> Option<PathBuf> {
    let path = std::env::var_os("PATH")?;
    for name in ["chromium", "chromium-browser"] {
        for dir in std::env::split_paths(&path) {
            let candidate = dir.join(name);
            if candidate.is_file() {
                return Some(candidate);
            }
        }
    }
    None
}

/// Runs headless Chromium on `page` with `extra` arguments; returns (stdout, stderr).
/// Killed after 90 s.
fn run_chromium(browser: &Path, page: &Path, work: &Path, extra: &[String]) -> (String, String) {
    let profile = work.join(format!("profile-{}", page.file_stem().unwrap().to_string_lossy()));
    let mut cmd = Command::new(browser);
    cmd.args([
        "--headless=new",
        "--no-sandbox",
        "--disable-gpu",
        "--enable-logging=stderr",
        "--v=0",
        "--no-first-run",
        "--virtual-time-budget=3000",
    ])
    .arg(format!("--user-data-dir={}", profile.display()))
    .args(extra)
    .arg(format!("file://{}", page.display()))
    .stdout(Stdio::piped())
    .stderr(Stdio::piped());
    let child = cmd.spawn().expect("chromium starts");
    let id = child.id();
    let started = Clock::now();
    // A watchdog thread kills this one browser process if it outlives the limit.
    let (tx, rx) = std::sync::mpsc::channel::<()>();
    let watchdog = std::thread::spawn(move || {
        if rx.recv_timeout(Duration::from_secs(90)).is_err() {
            let _ = Command::new("kill").arg(id.to_string()).status();
        }
    });
    let out = child.wait_with_output().expect("chromium runs");
    let _ = tx.send(());
    let _ = watchdog.join();
    assert!(started.elapsed() < Duration::from_secs(90), "chromium did not finish within 90 s on {}", page.display());
    (String::from_utf8_lossy(&out.stdout).into_owned(), String::from_utf8_lossy(&out.stderr).into_owned())
}

/// Console messages and uncaught exceptions in Chromium's stderr log. The log prefix does
/// not reliably carry the message level (Chromium 13x writes `console.error` as
/// `INFO:CONSOLE`), so every console message counts: the report itself writes nothing to
/// the console, and an error, warning or exception from the page is a failure.
fn console_errors(stderr: &str) -> Vec<String> {
    stderr.lines().filter(|l| l.contains(":CONSOLE") || l.contains("Uncaught")).map(str::to_string).collect()
}

/// The value of `name="…"` on the `<body>` tag of a dumped DOM.
fn body_attribute(dom: &str, name: &str) -> Option<String> {
    let start = dom.find("<body")?;
    let tag = &dom[start..start + dom[start..].find('>')?];
    let key = format!("{name}=\"");
    let from = tag.find(&key)? + key.len();
    Some(tag[from..from + tag[from..].find('"')?].to_string())
}

/// One timing of the O–C figure, as the test expects a reader to see it.
#[derive(Debug, Clone)]
struct KnownTiming {
    /// Position in the figure: BJD_TDB − 2400000 (d) and O − C (d).
    x: f64,
    y: f64,
    bjd_tdb: Instant,
    observer_tdb: Instant,
    cycle: f64,
    observer: String,
    error_d: f64,
    residual_d: f64,
    row: usize,
}

/// Invented time of light travel across the orbit, observer → barycentre, for the
/// invented observer times (any value would do; the UTC on hover must follow it).
const INVENTED_ROEMER_S: f64 = 212.5;

/// Invented eclipsing binary "V999 Imag": 25 seasons of timings from two invented
/// observers, with a light-time orbit of an invented third body; fitted with the linear +
/// light-time model. Returns the O–C figure, the light-time orbit figure, the fit table
/// and the timing of input row `known_row` as a reader should see it.
fn timing_figures(known_row: usize) -> (Figure, Figure, Vec<Vec<String>>, KnownTiming) {
    let period_d = 0.812_345_6;
    let ltte = [0.003, 5_000.0, 0.3, 0.2, 1.0];
    let epoch = Instant::from_mjd_two_part(TimeScale::Tdb, 46_000.0, 0.3);
    let mut rng = SeededRng::for_stream(20_261_202, 3);
    let mut timings = Vec::new();
    let mut cycles = Vec::new();
    for season in 0..25 {
        for k in 0..4 {
            let day = season as f64 * 365.25 + 25.0 * k as f64 + 10.0 * rng.uniform();
            let e = (day / period_d).round();
            let sigma = if season < 10 { 0.002 } else { 0.0003 };
            let t = e * period_d + light_time_d(&ltte, e * period_d) + sigma * rng.normal();
            let source = if season < 10 { "invented visual observer" } else { "invented CCD observatory" };
            cycles.push(e);
            timings.push(Timing {
                bjd_tdb: epoch.add_seconds(t * 86_400.0),
                error_d: sigma,
                kind: EventKind::Primary,
                source: Some(source.to_string()),
                row: timings.len() + 1,
            });
        }
    }
    // Invented times at the observer (TDB), one per input row.
    let observer_tdb: Vec<Option<Instant>> =
        timings.iter().map(|t| Some(t.bjd_tdb.add_seconds(-INVENTED_ROEMER_S))).collect();
    let reference = ReferenceEphemeris { epoch, period_d, period_sigma_d: 1e-6 };
    let series = assign_cycles(&timings, &reference, &CycleOptions::default()).unwrap();
    let fit = fit_model(&series, ModelKind::LinearLightTime, &FitOptions::default()).unwrap();
    let converter = ScaleConverter::new(LeapSecondTable::builtin());
    let hover = HoverTimes { converter: &converter, observer_tdb: Some(&observer_tdb) };
    let oc = oc_diagram("O − C of V999 Imag (invented)", &series, &fit, &hover);
    let orbit = light_time_orbit("Light-time orbit of V999 Imag (invented)", &series, &fit, PhaseRange::FOLDED, &hover)
        .expect("a light-time model has an orbit");
    let rows = fit
        .kind
        .parameter_names()
        .iter()
        .enumerate()
        .map(|(i, name)| vec![name.to_string(), format!("{:.6e}", fit.params[i]), format!("{:.2e}", fit.sigma(i))])
        .collect();
    // The known timing, from the invented data (cycle as generated) and the fitted model.
    let t = &timings[known_row - 1];
    let since_d = t.bjd_tdb.seconds_since(&epoch) / 86_400.0;
    let cycle = cycles[known_row - 1];
    let oc_d = since_d - cycle * period_d;
    let (e1, e2) = epoch.jd_two_part();
    let known = KnownTiming {
        x: (e1 - 2_400_000.0) + e2 + since_d,
        y: oc_d,
        bjd_tdb: t.bjd_tdb,
        observer_tdb: t.bjd_tdb.add_seconds(-INVENTED_ROEMER_S),
        cycle,
        observer: t.source.clone().unwrap(),
        error_d: t.error_d,
        residual_d: oc_d - fit.model_oc_d(cycle, since_d),
        row: known_row,
    };
    (oc, orbit, rows, known)
}

/// Invented detached eclipsing binary with a primary eclipse at phase 0 (V magnitudes,
/// 0.6 mag deep), folded and drawn over −0.25 to 1.25 with magnitudes downwards.
fn folded_magnitude_figure() -> Figure {
    let mut rng = SeededRng::for_stream(5, 2);
    let period = 1.234_5;
    let (mut t, mut v) = (Vec::new(), Vec::new());
    for k in 0..600 {
        let ti = k as f64 * 0.061 + 0.01 * rng.uniform();
        let phase = (ti / period).rem_euclid(1.0);
        let d = phase.min(1.0 - phase);
        t.push(ti);
        v.push(11.0 + 0.6 * (-(d / 0.03).powi(2)).exp() + 0.01 * rng.normal());
    }
    let phase = fold_times(&t, period, 0.0).unwrap();
    let err = vec![0.01; t.len()];
    let bins = bin_folded(&phase, &v, Some(&err), 40, BinStatistic::Mean).unwrap();
    folded_figure(
        &FoldedCurve {
            phase: &phase,
            value: &v,
            error: Some(&err),
            bins: &bins,
            value_label: "V (mag)",
            invert_y: true,
            phase_range: PhaseRange::FOLDED,
            times: None,
        },
        "Invented eclipsing binary folded",
    )
}

/// Generalised Lomb–Scargle periodogram of an invented pulsator (period 0.2 d, one
/// observing season with nightly gaps), with its highest peak marked.
fn periodogram_figure() -> Figure {
    let mut rng = SeededRng::for_stream(77, 1);
    let mut t = Vec::new();
    let mut y = Vec::new();
    for night in 0..40 {
        for k in 0..12 {
            let ti = night as f64 + 0.3 * k as f64 / 12.0 + 0.01 * rng.uniform();
            t.push(ti);
            y.push(12.0 + 0.08 * (std::f64::consts::TAU * ti / 0.2).sin() + 0.01 * rng.normal());
        }
    }
    let series = Series::from_arrays(&t, &y, None).unwrap();
    let grid = FrequencyGrid::new(0.05, 0.002, 5_000).unwrap();
    let spectrum = GeneralisedLombScargle::default().evaluate(&series, &grid).unwrap();
    let (k, _) = spectrum.argmax().unwrap();
    let f = grid.freq_per_day(k);
    Figure {
        title: "Generalised Lomb–Scargle periodogram (invented pulsator)".into(),
        panels: vec![Panel {
            x_label: "frequency (1/d)".into(),
            y_label: "normalised power".into(),
            layers: vec![
                Layer::Line {
                    label: "power".into(),
                    x: grid.frequencies(),
                    y: spectrum.power.clone(),
                    colour: (31, 75, 153),
                },
                Layer::Markers {
                    label: "highest peak".into(),
                    x: vec![f],
                    text: vec![format!("{f:.3}")],
                    colour: (200, 30, 30),
                },
            ],
            invert_y: false,
            height_weight: 1,
        }],
        width: 1000,
        height: 500,
    }
}

/// Input row of the timing the interaction test points at (a visual timing, season 3).
const KNOWN_ROW: usize = 11;

fn build_report() -> (Report, KnownTiming) {
    let provenance = Provenance::new("skyclock (browser test of the report)")
        .with("ephemeris", "DE440 (embedded pack)")
        .with("leap_seconds", "IERS Bulletin C (built in)");
    let mut report = Report::new("Timing report for V999 Imag (invented)", provenance);
    report.subtitle.push("Invented eclipsing binary, 25 seasons, two invented observers".into());
    let mut search = Section::new("Period search");
    search.paragraphs.push("Generalised Lomb–Scargle on one invented season; the highest peak is marked.".into());
    search
        .figures
        .push(ReportFigure::from_figure(&periodogram_figure(), "Periodogram with the highest peak marked.").unwrap());
    report.sections.push(search);
    let (oc, orbit, rows, known) = timing_figures(KNOWN_ROW);
    let mut timing = Section::new("O − C & third body");
    timing.cautions.push("Early visual timings carry errors of 0.002 d <assumed>.".into());
    let mut table = Table::new("Linear + light-time fit", &["parameter", "value", "1σ"]);
    table.rows = rows;
    timing.tables.push(table);
    timing.figures.push(
        ReportFigure::from_figure(&oc, "O − C diagram with the model and its 1σ band; residuals below.").unwrap(),
    );
    timing.figures.push(ReportFigure::from_figure(&orbit, "Light-time orbit of the companion.").unwrap());
    report.sections.push(timing);
    let mut folded = Section::new("Folded light curve");
    folded.figures.push(
        ReportFigure::from_figure(&folded_magnitude_figure(), "Folded over −0.25 to 1.25, magnitudes downwards.")
            .unwrap(),
    );
    report.sections.push(folded);
    (report, known)
}

#[test]
fn report_renders_in_headless_chromium() {
    // Under the cargo target folder (never in git); emptied at the start of each run.
    let work = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("report_browser");
    let _ = std::fs::remove_dir_all(&work);
    std::fs::create_dir_all(&work).unwrap();
    let (report, _) = build_report();
    assert_eq!(report.figure_count(), 4);
    assert_eq!(report.explorable_figure_count(), 4);
    let page = work.join("report.html");
    write_report(&report, &page, &[]).unwrap();
    let html = std::fs::read_to_string(&page).unwrap();
    // Self-contained: nothing fetched from anywhere (checked without a browser too).
    for forbidden in ["http://", "https://", " src=", "<link", "@import", "url("] {
        assert!(!html.contains(forbidden), "the report contains '{forbidden}'");
    }

    let Some(browser) = browser_or_skip(&format!("the report was written to {} but not opened", page.display())) else {
        return;
    };

    // The detectors fire on pages that fail on purpose.
    for (name, script) in [("logs_error", "console.error('deliberate failure');"), ("throws", "undefinedFunction();")] {
        let broken = work.join(format!("{name}.html"));
        std::fs::write(&broken, format!("<!DOCTYPE html><html><body><script>{script}</script></body></html>")).unwrap();
        let (_, stderr) = run_chromium(&browser, &broken, &work, &["--dump-dom".to_string()]);
        assert!(
            !console_errors(&stderr).is_empty(),
            "the console detector missed a deliberate failure ({name}); stderr:\n{stderr}"
        );
    }
    let (mut empty, _) = build_report();
    empty.sections[0]
        .figures
        .push(ReportFigure { caption: "zero-size".into(), svg: "<svg width=\"0\" height=\"0\"></svg>".into() });
    let empty_page = work.join("zero_size.html");
    write_report(&empty, &empty_page, &[]).unwrap();
    let (dom, _) = run_chromium(&browser, &empty_page, &work, &["--dump-dom".to_string()]);
    assert_eq!(body_attribute(&dom, "data-figures-expected").as_deref(), Some("5"));
    assert_eq!(
        body_attribute(&dom, "data-figures-rendered").as_deref(),
        Some("4"),
        "a zero-size figure must not count as rendered"
    );

    // The real report.
    let (dom, stderr) = run_chromium(&browser, &page, &work, &["--dump-dom".to_string()]);
    let errors = console_errors(&stderr);
    assert!(errors.is_empty(), "console errors while loading the report:\n{}", errors.join("\n"));
    assert_eq!(
        body_attribute(&dom, "data-figures-rendered").as_deref(),
        Some("4"),
        "not every figure rendered; body: {:?}",
        dom.get(dom.find("<body").unwrap_or(0)..).map(|s| &s[..s.len().min(300)])
    );
    assert_eq!(body_attribute(&dom, "data-figures-explorable").as_deref(), Some("4"), "not every figure explorable");
    assert!(!dom.contains("report-figure not-rendered"), "a figure was marked as not rendered");

    let shot = work.join("report.png");
    let _ = std::fs::remove_file(&shot);
    let (_, stderr) = run_chromium(
        &browser,
        &page,
        &work,
        &[format!("--screenshot={}", shot.display()), "--window-size=1280,2000".to_string()],
    );
    let bytes =
        std::fs::read(&shot).unwrap_or_else(|e| panic!("no screenshot at {}: {e}; stderr:\n{stderr}", shot.display()));
    // PNG signature (ISO/IEC 15948 / W3C PNG specification, section 5.2).
    assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n");
    assert!(bytes.len() > 20_000, "screenshot suspiciously small: {} bytes", bytes.len());
    // Browser profiles are not needed afterwards; the pages and the screenshot stay.
    for entry in std::fs::read_dir(&work).unwrap().filter_map(|e| e.ok()) {
        if entry.file_name().to_string_lossy().starts_with("profile-") {
            let _ = std::fs::remove_dir_all(entry.path());
        }
    }
    println!("report: {}\nscreenshot: {}", page.display(), shot.display());
}

/// The driver appended to a copy of the report: acts on the O–C figure (the second
/// figure) as a reader would and writes what it saw as JSON into `<pre id="driver">`.
/// `KNOWN_X`, `KNOWN_Y` (data coordinates of the known timing) and `GROUP` (its observer)
/// are replaced before use.
const DRIVER: &str = r#"
window.addEventListener('load', function () {
  var out = {};
  function panel(fig, k) { return fig.querySelector('g.sc-panel[data-panel="' + k + '"]'); }
  function span(g) { return [Number(g.getAttribute('data-x-min')), Number(g.getAttribute('data-x-max'))]; }
  function yspan(g) { return [Number(g.getAttribute('data-y-min')), Number(g.getAttribute('data-y-max'))]; }
  function frame(g) { return g.querySelector('rect.sc-frame').getBoundingClientRect(); }
  // Screen position of data (x, y) in panel g (y upwards unless inverted).
  function at(g, x, y, inverted) {
    var r = frame(g), xs = span(g), ys = yspan(g);
    var fy = (y - ys[0]) / (ys[1] - ys[0]);
    return { x: r.left + (x - xs[0]) / (xs[1] - xs[0]) * r.width, y: inverted ? r.top + fy * r.height : r.bottom - fy * r.height };
  }
  function fire(target, type, p, extra) {
    var init = { clientX: p.x, clientY: p.y, bubbles: true, cancelable: true, pointerId: 1, isPrimary: true };
    for (var k in extra || {}) { init[k] = extra[k]; }
    var ev = type === 'wheel' ? new WheelEvent(type, init) : type === 'dblclick' ? new MouseEvent(type, init) : new PointerEvent(type, init);
    target.dispatchEvent(ev);
  }
  function tipText(fig) { var t = fig.querySelector('.sc-tip'); return t.hidden ? '' : t.textContent; }
  function tipRows(fig) {
    return [].map.call(fig.querySelectorAll('.sc-tip tr'), function (tr) { return [tr.cells[0].textContent, tr.cells[1].textContent]; });
  }
  var figs = document.querySelectorAll('figure.report-figure');
  var fig = figs[1], svg = fig.querySelector('svg.sc-plot');
  var main = function () { return panel(fig, 0); }, resid = function () { return panel(fig, 1); };
  out.initial = span(main());
  out.initialResid = span(resid());
  // 1. Hover over the known timing.
  var p = at(main(), KNOWN_X, KNOWN_Y, false);
  fire(svg, 'pointermove', p);
  out.hover = tipText(fig);
  out.hoverHead = fig.querySelector('.sc-tip-head').textContent;
  out.hoverRows = tipRows(fig);
  out.hoverPoint = fig.querySelector('.sc-tip').getAttribute('data-point');
  // 2. Legend toggle: hide the observer's timings, in both panels.
  var button = fig.querySelector('button.sc-legend[data-group="GROUP"]');
  out.buttonFound = !!button;
  button.click();
  out.pressedAfterHide = button.getAttribute('aria-pressed');
  out.hiddenLayers = [].map.call(fig.querySelectorAll('g.sc-layer[data-group="GROUP"]'), function (g) { return g.getAttribute('display'); });
  out.otherLayers = [].map.call(fig.querySelectorAll('g.sc-layer:not([data-group="GROUP"])'), function (g) { return g.getAttribute('display'); });
  fire(svg, 'pointermove', at(main(), KNOWN_X, KNOWN_Y, false));
  out.hoverWhileHidden = tipText(fig);
  button.click();
  out.shownLayers = [].map.call(fig.querySelectorAll('g.sc-layer[data-group="GROUP"]'), function (g) { return g.getAttribute('display'); });
  out.pressedAfterShow = button.getAttribute('aria-pressed');
  // 3. Zoom with the wheel at the known timing (x only with Shift in the second turn).
  p = at(main(), KNOWN_X, KNOWN_Y, false);
  fire(svg, 'wheel', p, { deltaY: -500 });
  out.zoomed = span(main());
  out.zoomedResid = span(resid());
  out.zoomedY = yspan(main());
  fire(svg, 'pointermove', at(main(), KNOWN_X, KNOWN_Y, false));
  out.hoverZoomed = tipText(fig);
  // 4. Drag to pan by 100 screen pixels to the right.
  var before = span(main()), width = frame(main()).width;
  p = at(main(), (before[0] + before[1]) / 2, (yspan(main())[0] + yspan(main())[1]) / 2, false);
  fire(svg, 'pointerdown', p);
  fire(svg, 'pointermove', { x: p.x + 50, y: p.y });
  fire(svg, 'pointermove', { x: p.x + 100, y: p.y });
  fire(svg, 'pointerup', { x: p.x + 100, y: p.y });
  out.beforePan = before;
  out.panned = span(main());
  out.panWidth = width;
  // 5. Reset.
  fig.querySelector('button.sc-reset').click();
  out.reset = span(main());
  out.resetResid = span(resid());
  // 6. The folded figure: magnitudes downwards, phases −0.25 to 1.25 shown.
  var folded = figs[3], fp = panel(folded, 0);
  var ticks = [].map.call(fp.querySelectorAll('text.sc-tick-y'), function (t) { return [Number(t.textContent), t.getBoundingClientRect().top]; });
  out.foldedTicks = ticks;
  out.foldedX = span(fp);
  // 7. Printing shows the static figures.
  var print = [];
  [].forEach.call(document.styleSheets, function (sheet) {
    [].forEach.call(sheet.cssRules, function (rule) { if (rule.media && rule.media.mediaText === 'print') { print.push(rule.cssText); } });
  });
  out.print = print.join(' ');
  var pre = document.createElement('pre');
  pre.id = 'driver';
  pre.textContent = JSON.stringify(out);
  document.body.appendChild(pre);
});
"#;

/// The text of `<pre id="driver">` in a dumped DOM, unescaped.
fn driver_output(dom: &str) -> serde_json::Value {
    let open = "<pre id=\"driver\">";
    let start =
        dom.find(open).unwrap_or_else(|| panic!("the driver wrote nothing; DOM tail: {}", tail(dom))) + open.len();
    let end = start + dom[start..].find("</pre>").expect("closed <pre>");
    let text = dom[start..end].replace("&lt;", "<").replace("&gt;", ">").replace("&quot;", "\"").replace("&amp;", "&");
    serde_json::from_str(&text).unwrap_or_else(|e| panic!("driver output is not JSON ({e}): {text}"))
}

fn tail(text: &str) -> &str {
    let cut = text.len().saturating_sub(600);
    let cut = (cut..text.len()).find(|&i| text.is_char_boundary(i)).unwrap_or(text.len());
    &text[cut..]
}

fn pair(v: &serde_json::Value) -> (f64, f64) {
    (v[0].as_f64().expect("number"), v[1].as_f64().expect("number"))
}

/// The value of the tooltip row `name` (rows as [name, value] pairs).
fn row<'a>(rows: &'a serde_json::Value, name: &str) -> &'a str {
    rows.as_array()
        .and_then(|r| r.iter().find(|p| p[0] == name))
        .and_then(|p| p[1].as_str())
        .unwrap_or_else(|| panic!("no row '{name}' in the tooltip: {rows}"))
}

#[test]
fn report_figures_zoom_hover_and_toggle_in_headless_chromium() {
    let work = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("report_explore");
    let _ = std::fs::remove_dir_all(&work);
    std::fs::create_dir_all(&work).unwrap();
    let (report, known) = build_report();
    let page = work.join("report.html");
    write_report(&report, &page, &[]).unwrap();
    let Some(browser) = browser_or_skip("the explorable figures were not exercised") else {
        return;
    };
    let driver = DRIVER
        .replace("KNOWN_X", &format!("{:.9}", known.x))
        .replace("KNOWN_Y", &format!("{:.12}", known.y))
        .replace("GROUP", &known.observer);
    let html = std::fs::read_to_string(&page).unwrap();
    let driven = work.join("driven.html");
    std::fs::write(&driven, html.replace("</body>", &format!("<script>{driver}</script>\n</body>"))).unwrap();
    let (dom, stderr) =
        run_chromium(&browser, &driven, &work, &["--dump-dom".to_string(), "--window-size=1280,2000".into()]);
    let errors = console_errors(&stderr);
    assert!(errors.is_empty(), "console messages while exploring the report:\n{}", errors.join("\n"));
    let out = driver_output(&dom);

    // Hover: the known timing's values. BJD_TDB to 8 decimals (from the invented data).
    let rows = &out["hoverRows"];
    assert_eq!(out["hoverHead"], known.observer.as_str(), "tooltip heading");
    let bjd_text = row(rows, "BJD_TDB");
    let bjd: f64 = bjd_text.parse().unwrap_or_else(|_| panic!("BJD_TDB '{bjd_text}' in {rows}"));
    let (j1, j2) = known.bjd_tdb.jd_two_part();
    assert!(((bjd - j1) - j2).abs() < 6e-9, "BJD_TDB {bjd_text} vs {}", j1 + j2);
    // UTC at the observer: TDB − (32.184 s + TAI−UTC), TAI−UTC from IERS Bulletin C (the
    // leap-second history: 23 s from 1985-07-01 to 1988-01-01, from memory), TDB − TT < 2 ms
    // (Fairhead & Bretagnon 1990) inside the 0.06 s allowed. The known timing is in 1986.
    let utc_text = row(rows, "UTC at the observer");
    let mjd = known.observer_tdb.mjd_day();
    assert!((46_247..47_161).contains(&mjd), "the known timing left the 23 s leap-second interval (MJD {mjd})");
    let expected_utc = known.observer_tdb.add_seconds(-(32.184 + 23.0)).relabel(TimeScale::Utc);
    let expected_text = format_iso(&expected_utc, 3);
    let seconds_of_day = |t: &str| -> f64 {
        let h: f64 = t[11..13].parse().unwrap();
        let m: f64 = t[14..16].parse().unwrap();
        let s: f64 = t[17..].parse().unwrap();
        3600.0 * h + 60.0 * m + s
    };
    assert_eq!(&utc_text[..10], &expected_text[..10], "UTC date: {utc_text} vs {expected_text}");
    assert!(
        (seconds_of_day(utc_text) - seconds_of_day(&expected_text)).abs() < 0.06,
        "UTC {utc_text} vs {expected_text}"
    );
    assert_eq!(row(rows, "cycle"), format!("{:.0}", known.cycle));
    assert_eq!(row(rows, "kind"), "primary");
    assert_eq!(row(rows, "observer"), known.observer);
    assert_eq!(row(rows, "error (1σ)"), format!("{:.6} d ({:.1} s)", known.error_d, known.error_d * 86_400.0));
    let resid_text = row(rows, "residual (O − C − model)");
    let resid: f64 = resid_text.split(' ').next().unwrap().parse().unwrap();
    assert!((resid - known.residual_d).abs() < 1.5e-6, "residual {resid_text} vs {}", known.residual_d);
    let oc: f64 = row(rows, "O − C").split(' ').next().unwrap().parse().unwrap();
    assert!((oc - known.y).abs() < 1.5e-6, "O − C {oc} vs {}", known.y);
    assert_eq!(row(rows, "input row"), known.row.to_string());

    // Legend toggle: both panels' layers of the observer hide and come back; others stay.
    assert_eq!(out["buttonFound"], true);
    assert_eq!(out["pressedAfterHide"], "false");
    let hidden: Vec<_> = out["hiddenLayers"].as_array().unwrap().iter().map(|v| v.as_str()).collect();
    assert_eq!(hidden, vec![Some("none"), Some("none")], "main and residual layers of the observer");
    assert!(out["otherLayers"].as_array().unwrap().iter().all(|v| v.is_null()), "{}", out["otherLayers"]);
    assert!(
        !out["hoverWhileHidden"].as_str().unwrap().starts_with(&known.observer),
        "a hidden series still answers: {}",
        out["hoverWhileHidden"]
    );
    assert!(out["shownLayers"].as_array().unwrap().iter().all(|v| v.is_null()));
    assert_eq!(out["pressedAfterShow"], "true");

    // Zoom: the wheel (deltaY −500 → factor e^−0.75) narrows x about the pointer, in both
    // panels alike; the point under the pointer stays under it (within a pixel of the
    // ~1000-pixel-wide plot: the driver places the pointer to a fraction of a pixel).
    let (a0, a1) = pair(&out["initial"]);
    let (z0, z1) = pair(&out["zoomed"]);
    let factor = (-0.75f64).exp();
    assert!(((z1 - z0) / (a1 - a0) - factor).abs() < 1e-6, "zoomed {z0}..{z1} from {a0}..{a1}");
    let f_before = (known.x - a0) / (a1 - a0);
    let f_after = (known.x - z0) / (z1 - z0);
    assert!((f_before - f_after).abs() < 1e-3, "pointer position moved: {f_before} → {f_after}");
    assert_eq!(out["zoomedResid"], out["zoomed"], "residual panel shares the zoomed time axis");
    assert!(out["hoverZoomed"].as_str().unwrap().contains(bjd_text), "the known point after zooming");

    // Pan: 100 px to the right moves the view 100/width of its span to the left.
    let (b0, b1) = pair(&out["beforePan"]);
    let (p0, p1) = pair(&out["panned"]);
    let width = out["panWidth"].as_f64().unwrap();
    let expected_shift = -(100.0 / width) * (b1 - b0);
    assert!(
        ((p0 - b0) - expected_shift).abs() < 0.02 * expected_shift.abs(),
        "pan {b0}→{p0}, expected {expected_shift}"
    );
    assert!(((p1 - p0) - (b1 - b0)).abs() < 1e-9 * (b1 - b0).abs().max(1.0));

    // Reset: back to the whole figure.
    assert_eq!(out["reset"], out["initial"]);
    assert_eq!(out["resetResid"], out["initialResid"]);

    // Folded curve: magnitudes grow downwards on screen; phases −0.25 to 1.25 are shown.
    let mut ticks: Vec<(f64, f64)> = out["foldedTicks"].as_array().unwrap().iter().map(pair).collect();
    assert!(ticks.len() >= 3, "y ticks of the folded figure: {ticks:?}");
    ticks.sort_by(|a, b| a.0.total_cmp(&b.0));
    assert!(ticks.windows(2).all(|w| w[1].1 > w[0].1), "magnitude axis not inverted: {ticks:?}");
    let (f0, f1) = pair(&out["foldedX"]);
    assert!(f0 <= -0.25 && f1 >= 1.25, "folded phases {f0}..{f1}");

    // Print: the explorable views hide and the static figures show.
    let print = out["print"].as_str().unwrap();
    assert!(print.contains(".sc-view") && print.contains("figure.explorable > svg"), "print rules: {print}");
    for entry in std::fs::read_dir(&work).unwrap().filter_map(|e| e.ok()) {
        if entry.file_name().to_string_lossy().starts_with("profile-") {
            let _ = std::fs::remove_dir_all(entry.path());
        }
    }
}
