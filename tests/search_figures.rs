//! Figures of the search stage, checked in the SVG text (not pixels): the periodogram
//! carries the top-peak layer and, as a separate legend entry, the aliases of the top peak
//! (±1 c/sidereal day = 1.0027379 c/d and ±1 c/yr, common practice; harmonic 2f and
//! subharmonic f/2) inside the plotted range only; the folded curve carries a residuals
//! panel on the same phase axis with units in its label, and drawn over a phase range more
//! than one cycle wide each point appears at every copy of its phase (so an event at phase
//! 0 is seen whole, common practice), with its hover details carried in the figure data.
//! Data: an invented pulsator ("invented star KX-Alpha") with nightly sampling and seeded
//! noise.

use std::path::PathBuf;

use skyclock::fit::SeededRng;
use skyclock::fold::{BinStatistic, bin_folded, fold_times};
use skyclock::periodogram::Series;
use skyclock::plot::data::figure_data_from_svg;
use skyclock::plot::search::FoldedTimes;
use skyclock::plot::search::{ALIAS_LAYER_LABEL, FoldedCurve, PEAK_LAYER_LABEL, folded_figure, periodogram_figure};
use skyclock::plot::{Layer, PhaseRange, render_svg, write_figure};
use skyclock::survey::search::{SearchPlan, search_series};
use skyclock::time::{Instant, TimeScale};

fn dir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("skyclock_search_figures_{name}_{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).expect("temp dir");
    d
}

/// Invented: 50 nights × 8 points in 4 h, one sinusoid at `freq` c/d, amplitude 0.15 mag.
fn invented_series(freq: f64) -> Series {
    let mut rng = SeededRng::new(11);
    let (mut t, mut y, mut e) = (Vec::new(), Vec::new(), Vec::new());
    for night in 0..50 {
        for k in 0..8 {
            let x = night as f64 + 0.02 * k as f64 + 0.005 * rng.uniform();
            t.push(x);
            y.push(12.0 + 0.15 * (std::f64::consts::TAU * freq * x).sin() + 0.03 * rng.normal());
            e.push(0.03);
        }
    }
    Series::from_arrays(&t, &y, Some(&e)).expect("valid invented series")
}

fn count(hay: &str, needle: &str) -> usize {
    hay.matches(needle).count()
}

/// The text content of every `<text>` element of an SVG document, trimmed.
fn texts(svg: &str) -> Vec<String> {
    svg.split("<text")
        .skip(1)
        .filter_map(|chunk| {
            let body = &chunk[chunk.find('>')? + 1..];
            Some(body[..body.find("</text>")?].trim().to_string())
        })
        .collect()
}

fn has_text(svg: &str, text: &str) -> usize {
    texts(svg).iter().filter(|t| *t == text).count()
}

#[test]
fn periodogram_svg_has_peak_and_alias_layers() {
    let s = invented_series(2.31);
    let out = search_series(&s, &SearchPlan::sinusoid_up_to(6.0)).expect("search");
    let f1 = out.peaks[0].peak.freq_per_day;
    assert!((f1 - 2.31).abs() < 0.01, "top peak {f1}");
    let d = dir("periodogram");
    let path = d.join("kx_alpha_periodogram.svg");
    write_figure(&periodogram_figure(&out, "KX-Alpha (invented)"), &path).expect("write");
    let svg = std::fs::read_to_string(&path).expect("read svg");
    assert!(svg.contains("frequency (cycles per day)"), "x label");
    assert_eq!(has_text(&svg, PEAK_LAYER_LABEL), 1, "peak layer legend entry");
    assert_eq!(has_text(&svg, ALIAS_LAYER_LABEL), 1, "alias layer legend entry");
    // The aliases of 2.31 c/d inside [1/T, 6] c/d: ±1/sd, 2f, f/2. The ±1/yr aliases lie
    // 0.0027 c/d away, below the resolution 1/T = 0.02 c/d of a 50-night baseline, and
    // are left out (they cannot be told from the peak itself).
    for label in ["+1/sd", "-1/sd", "2f", "f/2"] {
        assert_eq!(has_text(&svg, label), 1, "alias label {label} missing");
    }
    assert_eq!(has_text(&svg, "+1/yr") + has_text(&svg, "-1/yr"), 0, "unresolvable yearly aliases drawn");
    // The alias layer is drawn in its own colour (orange guides), distinct from the peaks.
    assert!(svg.to_ascii_uppercase().contains("#E68C14"), "alias colour");
    assert!(svg.to_ascii_uppercase().contains("#C81E1E"), "peak colour");

    // A top peak at 4 c/d searched up to 6 c/d: 2f = 8 c/d lies outside and is not drawn.
    let s = invented_series(4.0);
    let out = search_series(&s, &SearchPlan::sinusoid_up_to(6.0)).expect("search");
    assert!((out.peaks[0].peak.freq_per_day - 4.0).abs() < 0.01);
    let path = d.join("kx_alpha_4.svg");
    write_figure(&periodogram_figure(&out, "KX-Alpha (invented)"), &path).expect("write");
    let svg = std::fs::read_to_string(&path).expect("read svg");
    assert!(has_text(&svg, "2f") == 0 && has_text(&svg, "f/2") == 1 && has_text(&svg, "+1/sd") == 1);
    let _ = std::fs::remove_dir_all(&d);
}

#[test]
fn folded_svg_has_residuals_panel_with_units() {
    let s = invented_series(2.31);
    let phase = fold_times(s.time_d(), 1.0 / 2.31, 0.0).expect("fold");
    let err: Vec<f64> = s.weight().iter().map(|w| 1.0 / w.sqrt()).collect();
    let bins = bin_folded(&phase, s.value(), Some(&err), 25, BinStatistic::Mean).expect("bins");
    let curve = FoldedCurve {
        phase: &phase,
        value: s.value(),
        error: Some(&err),
        bins: &bins,
        value_label: "V (mag)",
        invert_y: true,
        phase_range: PhaseRange::ONE_CYCLE,
        times: None,
    };
    let fig = folded_figure(&curve, "KX-Alpha folded (invented)");
    assert_eq!(fig.panels.len(), 2);
    let d = dir("folded");
    let path = d.join("kx_alpha_folded.svg");
    write_figure(&fig, &path).expect("write");
    let svg = std::fs::read_to_string(&path).expect("read svg");
    assert_eq!(has_text(&svg, "phase (cycles)"), 2, "both panels share the phase axis label");
    assert_eq!(has_text(&svg, "V (mag)"), 1, "main y label");
    assert_eq!(has_text(&svg, "residual, V (mag)"), 1, "residual y label with units");
    assert_eq!(has_text(&svg, "data − binned curve"), 1, "residual legend");
    // Error bars: one vertical segment per observation in each panel at least.
    assert!(count(&svg, "<polyline") + count(&svg, "<line") >= 2 * s.len(), "error bars");
    // Residuals scatter like the invented noise (0.03 mag), not like the 0.15 mag signal.
    let r = skyclock::fold::residuals_from_bins(&phase, s.value(), &bins);
    let rms = (r.iter().map(|x| x * x).sum::<f64>() / r.len() as f64).sqrt();
    assert!(rms < 0.045 && rms > 0.02, "residual rms {rms}");
    let _ = std::fs::remove_dir_all(&d);
}

#[test]
fn folded_figure_over_a_phase_range_shows_every_point_at_each_copy() {
    let s = invented_series(2.31);
    let period = 1.0 / 2.31;
    let phase = fold_times(s.time_d(), period, 0.0).expect("fold");
    let err: Vec<f64> = s.weight().iter().map(|w| 1.0 / w.sqrt()).collect();
    let bins = bin_folded(&phase, s.value(), Some(&err), 25, BinStatistic::Mean).expect("bins");
    let epoch = Instant::from_mjd_two_part(TimeScale::Tdb, 60_000.0, 0.0);
    let rows: Vec<usize> = (1..=s.len()).collect();
    let curve = FoldedCurve {
        phase: &phase,
        value: s.value(),
        error: Some(&err),
        bins: &bins,
        value_label: "V (mag)",
        invert_y: true,
        phase_range: PhaseRange::FOLDED,
        times: Some(FoldedTimes { epoch, days: s.time_d(), rows: Some(&rows) }),
    };
    let fig = folded_figure(&curve, "KX-Alpha folded (invented)");
    let Layer::Points { x, y, details, .. } = &fig.panels[0].layers[0] else { panic!("observations first") };
    // Phases in [0, 0.25] and [0.75, 1) appear twice over −0.25..1.25, the rest once.
    let twice = phase.iter().filter(|&&p| !(0.25 < p && p < 0.75)).count();
    assert_eq!(x.len(), phase.len() + twice, "copies of the points");
    assert!(x.iter().all(|&p| (-0.25..=1.25).contains(&p)));
    assert!(x.iter().any(|&p| p < 0.0) && x.iter().any(|&p| p > 1.0), "both edges filled");
    // Every copy carries its point's value and details (phase in [0, 1), input row).
    let details = details.as_ref().expect("details");
    assert_eq!(details.rows.len(), x.len());
    let row_col = details.names.iter().position(|n| n == "input row").expect("input row column");
    let phase_col = details.names.iter().position(|n| n == "phase (cycles)").expect("phase column");
    for (k, r) in details.rows.iter().enumerate() {
        let i: usize = r[row_col].parse::<usize>().unwrap() - 1;
        assert_eq!(y[k], s.value()[i]);
        assert!((x[k].rem_euclid(1.0) - phase[i]).abs() < 1e-9);
        assert_eq!(r[phase_col], format!("{:.4}", phase[i]));
    }
    assert_eq!(details.names[0], "BJD_TDB");
    // The binned curve is repeated too, and the zero line spans the range.
    let Layer::Points { x: bx, .. } = &fig.panels[0].layers[1] else { panic!("binned second") };
    assert!(bx.len() > bins.len());
    let Layer::Line { x: zx, .. } = &fig.panels[1].layers[1] else { panic!("zero line") };
    assert_eq!(zx, &vec![-0.25, 1.25]);
    // The SVG carries the same data, magnitudes flagged as drawn downwards.
    let data = figure_data_from_svg(&render_svg(&fig).expect("svg")).expect("figure data");
    assert_eq!(data["panels"][0]["invert_y"], true);
    assert_eq!(data["panels"][0]["layers"][0]["x"].as_array().unwrap().len(), x.len());
    assert_eq!(data["panels"][1]["layers"][0]["group"], "data − binned curve");
}
