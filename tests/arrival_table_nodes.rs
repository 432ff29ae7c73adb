//! The table path through interpolation nodes against its exact twin, row by row.
//!
//! Reference: the exact per-row correction (`CorrectionPath::ExactEveryRow`), which is
//! itself checked against astropy 8.0.2 in tests/arrival_references.rs. The claim under test
//! (docs/arrival.md, src/arrival/interpolated.rs): every column the table path adds agrees
//! with the exact path to ≤ 1 ns on every row, for mixed clocks (UTC, TT, TAI, GPS, TDB, TCB
//! as JD, MJD, reduced JD and ISO text), several sites and the geocentre, legacy HJD rows
//! repaired, rows already barycentric, a source with proper motion and parallax, the planets'
//! Shapiro delay, UTC rows across a leap second (2016-12-31 23:59:60, from the IERS
//! Bulletin C table built in), rows across the edge of an Earth-orientation table (the IERS
//! finals2000A excerpt in tests/reference/), sparse rows and spacecraft rows. Invented sites
//! and source; times chosen for the cases above.

use std::collections::BTreeMap;

use polars::prelude::*;
use skyclock::arrival::table::{
    ClockSpec, ObserverSpec, TableRequest, TableSummary, correct_table_along, correct_table_with_geometry,
};
use skyclock::arrival::{BarycentricCorrector, CorrectionPath, DelayOptions, Source};
use skyclock::ephemeris::embedded;
use skyclock::fit::random::SeededRng;
use skyclock::observer::{EarthOrientation, EarthOrientationTable, PositionOrigin, Site};
use skyclock::time::{Instant, LeapSecondTable, ScaleConverter, TimeScale, format_time};

const CLOCKS: [&str; 11] = [
    "jd_utc", "mjd_tt", "iso_utc", "hjd_utc", "bjd_tdb", "bmjd_tcb", "jd_tai", "mjd_gps", "rjd_utc", "jd_tdb",
    "hmjd_tt",
];
const SITES: [&str; 3] = ["Invented Ridge", "Invented Atoll", "geocentre"];

fn converter() -> ScaleConverter {
    ScaleConverter::new(LeapSecondTable::builtin())
}

fn corrector() -> BarycentricCorrector {
    let orientation = EarthOrientationTable::from_file(std::path::Path::new(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/reference/finals2000A_excerpt.all"
    )))
    .unwrap();
    let mut source = Source::fixed_degrees("invented binary", 281.25, -29.75).unwrap();
    source.proper_motion_ra_mas_per_yr = 120.0;
    source.proper_motion_dec_mas_per_yr = -340.0;
    source.parallax_mas = 25.0;
    source.radial_velocity_km_per_s = 12.0;
    BarycentricCorrector::new(
        embedded(),
        converter(),
        EarthOrientation::Table(orientation),
        source,
        DelayOptions { shapiro_sun: true, shapiro_planets: true },
    )
}

fn sites() -> BTreeMap<String, Site> {
    [
        Site::from_degrees("Invented Ridge", -105.123, 39.456, 2150.0).unwrap(),
        Site::from_degrees("Invented Atoll", 170.2, -14.3, 5.0).unwrap(),
    ]
    .into_iter()
    .map(|s| (s.name.clone(), s))
    .collect()
}

/// The reading of TAI instant `tai` on the clock `label`, as text.
fn reading(tai: &Instant, label: &str) -> String {
    let clock = ClockSpec::parse_label(label).unwrap();
    let t = converter().convert(tai, clock.scale).unwrap();
    format_time(&t, clock.format)
}

/// Nights of dense rows (TAI start MJD, seconds of day, length s) and sparse rows.
fn instants() -> Vec<Instant> {
    let mut out = Vec::new();
    let nights = [
        (57_753, 75_600.0, 21_600.0), // across the leap second at the end of 2016-12-31
        (59_172, 70_000.0, 21_600.0), // across the end of the Earth-orientation excerpt (MJD 59173)
        (59_170, 72_000.0, 21_600.0), // inside it, across a tabulated day
        (60_100, 3_600.0, 21_600.0),  // an ordinary night
    ];
    for (day, start, length) in nights {
        let first = Instant::from_mjd_parts(TimeScale::Tai, day, start);
        out.extend((0..720).map(|k| first.add_seconds(k as f64 * length / 720.0)));
    }
    // One row inside the leap second itself: 23:59:60.5 UTC is 00:00:36.5 TAI on MJD 57754.
    out.push(Instant::from_mjd_parts(TimeScale::Tai, 57_754, 36.5));
    let mut rng = SeededRng::new(17);
    out.extend((0..40).map(|_| {
        Instant::from_mjd_parts(TimeScale::Tai, 47_900 + (rng.uniform() * 17_000.0) as i64, rng.uniform() * 86_400.0)
    }));
    out
}

fn mixed_table() -> DataFrame {
    let times = instants();
    let mut text = Vec::new();
    let mut clocks = Vec::new();
    let mut observers = Vec::new();
    for (i, t) in times.iter().enumerate() {
        let clock = CLOCKS[i % CLOCKS.len()];
        text.push(reading(t, clock));
        clocks.push(clock.to_string());
        observers.push(SITES[(i / CLOCKS.len()) % SITES.len()].to_string());
    }
    DataFrame::new_infer_height(vec![
        Column::new("time".into(), text),
        Column::new("clock".into(), clocks),
        Column::new("observatory".into(), observers),
    ])
    .unwrap()
}

fn floats(df: &DataFrame, name: &str) -> Vec<f64> {
    df.column(name).unwrap().f64().unwrap().into_no_null_iter().collect()
}

fn texts(df: &DataFrame, name: &str) -> Vec<String> {
    skyclock::table::text_column(df, "out.csv", name).unwrap().into_iter().map(Option::unwrap).collect()
}

/// Difference of two JD texts, s (whole and fractional parts subtracted separately).
fn jd_text_difference_s(a: &str, b: &str) -> f64 {
    let split = |s: &str| {
        let (w, f) = s.split_once('.').unwrap();
        (w.parse::<f64>().unwrap(), format!("0.{f}").parse::<f64>().unwrap())
    };
    let (aw, af) = split(a);
    let (bw, bf) = split(b);
    ((aw - bw) + (af - bf)) * 86_400.0
}

/// Largest differences between the two outputs: the two-part BJD_TDB columns, s, and every
/// delay column, s. The JD texts (14 decimals, 0.864 ns a unit) must round to the same
/// digits or to neighbouring ones.
fn compare(fast: &DataFrame, exact: &DataFrame) -> (f64, f64) {
    let (a1, a2) = (floats(fast, "bjd_tdb_jd1"), floats(fast, "bjd_tdb_jd2"));
    let (b1, b2) = (floats(exact, "bjd_tdb_jd1"), floats(exact, "bjd_tdb_jd2"));
    let mut worst = 0.0_f64;
    for i in 0..a1.len() {
        worst = worst.max((((a1[i] - b1[i]) + (a2[i] - b2[i])) * 86_400.0).abs());
    }
    for name in ["bjd_tdb", "observer_tdb"] {
        for (a, b) in texts(fast, name).iter().zip(texts(exact, name)) {
            assert!(jd_text_difference_s(a, &b).abs() < 0.87e-9, "{name}: {a} vs {b}");
        }
    }
    let mut worst_term = 0.0_f64;
    for name in [
        "clock_to_tt_s",
        "einstein_delay_s",
        "roemer_delay_s",
        "curvature_delay_s",
        "shapiro_sun_delay_s",
        "shapiro_planets_delay_s",
        "heliocentric_removed_s",
        "total_correction_s",
    ] {
        for (a, b) in floats(fast, name).iter().zip(floats(exact, name)) {
            worst_term = worst_term.max((a - b).abs());
        }
    }
    assert_eq!(texts(fast, "input_clock"), texts(exact, "input_clock"));
    (worst, worst_term)
}

fn same_counts(a: &TableSummary, b: &TableSummary) {
    assert_eq!(a.rows, b.rows);
    assert_eq!(a.rows_with_earth_orientation_table, b.rows_with_earth_orientation_table);
    assert_eq!(a.rows_beyond_leap_second_horizon, b.rows_beyond_leap_second_horizon);
}

#[test]
fn mixed_clocks_and_sites_agree_with_the_exact_path_within_1_ns_on_every_row() {
    let df = mixed_table();
    let request = TableRequest {
        time_column: "time".into(),
        clock: None,
        clock_column: Some("clock".into()),
        observer: ObserverSpec::SiteColumn { column: "observatory".into(), sites: sites() },
    };
    let c = corrector();
    let (fast, fast_summary, fast_geometry) =
        correct_table_along(&df, "mixed.csv", &request, &c, CorrectionPath::Automatic).unwrap();
    let (exact, exact_summary, exact_geometry) =
        correct_table_along(&df, "mixed.csv", &request, &c, CorrectionPath::ExactEveryRow).unwrap();
    same_counts(&fast_summary, &exact_summary);
    let n = df.height();
    eprintln!("{} of {n} rows interpolated", fast_summary.rows_interpolated);
    // Most rows go through the nodes; the sparse rows, the TDB readings at sites and the
    // rows whose nodes straddle the leap second or the table edge do not.
    assert!(fast_summary.rows_interpolated > n * 2 / 3, "{}", fast_summary.rows_interpolated);
    assert!(fast_summary.rows_interpolated < n - 40);
    assert_eq!(exact_summary.rows_interpolated, 0);
    assert!(exact_summary.rows_with_earth_orientation_table > 500, "the table edge must be exercised");
    let (worst, worst_term) = compare(&fast, &exact);
    eprintln!("largest |fast − exact|: times {worst:.2e} s, terms {worst_term:.2e} s");
    assert!(worst <= 1e-9, "{worst}");
    assert!(worst_term <= 1e-9, "{worst_term}");
    let mut worst_km = 0.0_f64;
    for (a, b) in fast_geometry.iter().zip(&exact_geometry) {
        assert_eq!(a.observer_barycentric_km.is_some(), b.observer_barycentric_km.is_some());
        if let (Some(p), Some(q)) = (a.observer_barycentric_km, b.observer_barycentric_km) {
            worst_km = worst_km.max((0..3).map(|k| (p[k] - q[k]).abs()).fold(0.0, f64::max));
        }
        for k in 0..3 {
            assert!((a.source_unit[k] - b.source_unit[k]).abs() < 1e-15);
        }
    }
    // 1 cm is 3e-11 s of light time.
    assert!(worst_km < 1e-5, "{worst_km} km");
}

#[test]
fn the_default_entry_point_takes_the_node_path() {
    let df = mixed_table();
    let request = TableRequest {
        time_column: "time".into(),
        clock: None,
        clock_column: Some("clock".into()),
        observer: ObserverSpec::SiteColumn { column: "observatory".into(), sites: sites() },
    };
    let (_, summary, _) = correct_table_with_geometry(&df, "mixed.csv", &request, &corrector()).unwrap();
    assert!(summary.rows_interpolated > df.height() / 2);
}

#[test]
fn sparse_rows_are_corrected_exactly() {
    // One row a night: each would need 8 nodes, so none is interpolated.
    let start = Instant::from_mjd_parts(TimeScale::Tai, 60_000, 10_000.0);
    let text: Vec<String> = (0..200).map(|k| reading(&start.add_seconds(k as f64 * 86_400.0), "jd_utc")).collect();
    let df = DataFrame::new_infer_height(vec![Column::new("time".into(), text)]).unwrap();
    let request = TableRequest {
        time_column: "time".into(),
        clock: Some(ClockSpec::parse_label("jd_utc").unwrap()),
        clock_column: None,
        observer: ObserverSpec::Site(sites()["Invented Ridge"].clone()),
    };
    let c = corrector();
    let (fast, summary, _) = correct_table_along(&df, "sparse.csv", &request, &c, CorrectionPath::Automatic).unwrap();
    let (exact, _, _) = correct_table_along(&df, "sparse.csv", &request, &c, CorrectionPath::ExactEveryRow).unwrap();
    assert_eq!(summary.rows_interpolated, 0);
    // Nor do the slow-term nodes pay (207 daily nodes for 200 rows).
    assert_eq!(summary.rows_with_interpolated_slow_terms, 0);
    let (worst, worst_term) = compare(&fast, &exact);
    assert!(worst == 0.0 && worst_term == 0.0, "{worst} {worst_term}");
}

#[test]
fn sparse_mixed_rows_take_the_two_speed_exact_path_within_1_ns() {
    // 8000 rows at random instants over 2015-07 … 2021-03 (≈ 3.8 a day: too sparse for the
    // table nodes, dense enough for the slow-term daily nodes), every clock of the
    // mixed table, two sites and the geocentre; the span holds the 2016-12-31 leap second
    // and the end of the Earth-orientation excerpt.
    let mut rng = SeededRng::new(4242);
    let mut text = Vec::new();
    let mut clocks = Vec::new();
    let mut observers = Vec::new();
    for i in 0..8000 {
        let t = Instant::from_mjd_parts(
            TimeScale::Tai,
            57_200 + (rng.uniform() * 2_100.0) as i64,
            rng.uniform() * 86_400.0,
        );
        let clock = CLOCKS[i % CLOCKS.len()];
        text.push(reading(&t, clock));
        clocks.push(clock.to_string());
        observers.push(SITES[(i / CLOCKS.len()) % SITES.len()].to_string());
    }
    let df = DataFrame::new_infer_height(vec![
        Column::new("time".into(), text),
        Column::new("clock".into(), clocks),
        Column::new("observatory".into(), observers),
    ])
    .unwrap();
    let request = TableRequest {
        time_column: "time".into(),
        clock: None,
        clock_column: Some("clock".into()),
        observer: ObserverSpec::SiteColumn { column: "observatory".into(), sites: sites() },
    };
    let c = corrector();
    let (fast, fast_summary, _) =
        correct_table_along(&df, "sparse.csv", &request, &c, CorrectionPath::Automatic).unwrap();
    let (exact, exact_summary, _) =
        correct_table_along(&df, "sparse.csv", &request, &c, CorrectionPath::ExactEveryRow).unwrap();
    same_counts(&fast_summary, &exact_summary);
    assert_eq!(exact_summary.rows_with_interpolated_slow_terms, 0);
    // Every row but the TDB/TCB readings at a site or the geocentre (jd_tdb, bmjd_tcb is
    // barycentric and takes the nodes) goes through the slow-term nodes.
    let two_speed = fast_summary.rows_with_interpolated_slow_terms;
    eprintln!("{two_speed} of 8000 rows on the two-speed path, {} interpolated", fast_summary.rows_interpolated);
    assert!(two_speed > 8000 * 8 / 11, "{two_speed}");
    let (worst, worst_term) = compare(&fast, &exact);
    eprintln!("largest |two-speed − exact|: times {worst:.2e} s, terms {worst_term:.2e} s");
    assert!(worst <= 1e-9 && worst_term <= 1e-9, "{worst} {worst_term}");
}

#[test]
fn spacecraft_rows_agree_with_the_exact_path() {
    // A low orbit (invented): positions change in minutes, so every row is exact.
    let start = Instant::from_mjd_parts(TimeScale::Tai, 60_200, 0.0);
    let n = 300;
    let text: Vec<String> = (0..n).map(|k| reading(&start.add_seconds(k as f64 * 20.0), "mjd_tt")).collect();
    let phase: Vec<f64> = (0..n).map(|k| k as f64 * 20.0 * 2.0 * std::f64::consts::PI / 5_600.0).collect();
    let df = DataFrame::new_infer_height(vec![
        Column::new("time".into(), text),
        Column::new("x".into(), phase.iter().map(|p| 6_900.0 * p.cos()).collect::<Vec<f64>>()),
        Column::new("y".into(), phase.iter().map(|p| 6_900.0 * p.sin() * 0.8).collect::<Vec<f64>>()),
        Column::new("z".into(), phase.iter().map(|p| 6_900.0 * p.sin() * 0.6).collect::<Vec<f64>>()),
    ])
    .unwrap();
    let request = TableRequest {
        time_column: "time".into(),
        clock: Some(ClockSpec::parse_label("mjd_tt").unwrap()),
        clock_column: None,
        observer: ObserverSpec::Spacecraft {
            columns: ["x".into(), "y".into(), "z".into()],
            origin: PositionOrigin::Geocentric,
        },
    };
    let c = corrector();
    let (fast, summary, _) = correct_table_along(&df, "orbit.csv", &request, &c, CorrectionPath::Automatic).unwrap();
    let (exact, _, _) = correct_table_along(&df, "orbit.csv", &request, &c, CorrectionPath::ExactEveryRow).unwrap();
    assert_eq!(summary.rows_interpolated, 0);
    // Precession–nutation and TDB − TT come from the slow-term nodes (8 nodes, 300 rows).
    assert_eq!(summary.rows_with_interpolated_slow_terms, n);
    let (worst, worst_term) = compare(&fast, &exact);
    assert!(worst <= 1e-9 && worst_term <= 1e-9, "{worst} {worst_term}");
}

#[test]
fn the_first_bad_row_is_reported_on_the_node_path_too() {
    let start = Instant::from_mjd_parts(TimeScale::Tai, 60_100, 3_600.0);
    let mut text: Vec<String> = (0..500).map(|k| reading(&start.add_seconds(k as f64 * 30.0), "jd_utc")).collect();
    text[321] = "not a time".into();
    let df = DataFrame::new_infer_height(vec![Column::new("time".into(), text)]).unwrap();
    let request = TableRequest {
        time_column: "time".into(),
        clock: Some(ClockSpec::parse_label("jd_utc").unwrap()),
        clock_column: None,
        observer: ObserverSpec::Site(sites()["Invented Atoll"].clone()),
    };
    let err = correct_table_along(&df, "bad.csv", &request, &corrector(), CorrectionPath::Automatic).unwrap_err();
    let message = err.to_string();
    assert!(message.contains("bad.csv") && message.contains("row 322") && message.contains("time"), "{message}");
}
