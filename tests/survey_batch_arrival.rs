//! A survey batch in an observer clock (JD UTC at one site) carries each source's times to
//! BJD_TDB at the position in its first row, and then finds exactly what a search on the
//! true BJD_TDB times finds. The UTC times are made from invented BJD_TDB times by the
//! arrival stage's inverse correction; the forward and inverse corrections are checked
//! against astropy elsewhere (tests/arrival_references.rs: round trip ≤ 1 ns, delays
//! against astropy 8). Invented stars and an invented site; seeded noise.

use std::path::PathBuf;

use skyclock::arrival::table::ClockSpec;
use skyclock::arrival::{BarycentricCorrector, DelayOptions, Source};
use skyclock::ephemeris::embedded;
use skyclock::fit::SeededRng;
use skyclock::observer::{EarthOrientation, Observer, Site};
use skyclock::periodogram::Series;
use skyclock::survey::batch::{
    BatchColumns, BatchOptions, ObserverArrival, SourceArrival, SourceReport, open_rows, run_batch,
    run_batch_with_arrival,
};
use skyclock::survey::search::{SearchPlan, search_series};
use skyclock::time::{Instant, LeapSecondTable, ScaleConverter, TimeFormat, TimeScale, format_time};

/// Invented stars: id, RA, Dec (degrees), period (d).
const STARS: [(&str, f64, f64, f64); 2] = [("inv-north", 45.0, 30.0, 0.731), ("inv-south", 200.0, -40.0, 1.37)];

fn site() -> Site {
    Site::from_degrees("invented ridge", -41.2345, -31.5432, 1480.0).expect("site")
}

fn dir() -> PathBuf {
    let d = std::env::temp_dir().join(format!("skyclock_batch_arrival_{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).expect("temp dir");
    d
}

/// True BJD_TDB times (random over 60 d) and values of one invented star.
fn star(seed: u64, period_d: f64) -> (Vec<Instant>, Vec<f64>) {
    let mut rng = SeededRng::new(seed);
    let mut x: Vec<f64> = (0..400).map(|_| 60.0 * rng.uniform()).collect();
    x.sort_by(|a, b| a.total_cmp(b));
    let t = x.iter().map(|&d| Instant::from_jd_two_part(TimeScale::Tdb, 2460200.5, d)).collect();
    let y =
        x.iter().map(|&d| 12.0 + 0.1 * (std::f64::consts::TAU * d / period_d).sin() + 0.01 * rng.normal()).collect();
    (t, y)
}

fn plan() -> SearchPlan {
    let mut p = SearchPlan::sinusoid_up_to(3.0);
    p.peaks = 1;
    p.window_sidelobes = 0;
    p
}

#[test]
fn utc_survey_table_is_carried_per_source_and_matches_the_bjd_search() {
    let converter = ScaleConverter::new(LeapSecondTable::builtin());
    let observer = Observer::Site(site());
    let d = dir();
    let path = d.join("field_utc_invented.csv");
    let mut text = String::from("star,jd,mag,ra_deg,dec_deg\n");
    let mut truth = Vec::new();
    for (k, (id, ra, dec, period)) in STARS.iter().enumerate() {
        let (bjd, y) = star(100 + k as u64, *period);
        // the values as the table holds them (6 decimals)
        let y: Vec<f64> = y.iter().map(|v| format!("{v:.6}").parse().expect("number")).collect();
        let source = Source::fixed_degrees(id, *ra, *dec).expect("source");
        let c = BarycentricCorrector::new(
            embedded(),
            converter.clone(),
            EarthOrientation::Ignored,
            source,
            DelayOptions::default(),
        );
        for (b, v) in bjd.iter().zip(&y) {
            let utc = c.arrival_at_observer(b, &observer, TimeScale::Utc).expect("inverse");
            text.push_str(&format!("{id},{},{v:.6},{ra},{dec}\n", format_time(&utc, TimeFormat::Jd)));
        }
        // The reference: the same search on the true BJD_TDB times (days since the same noon).
        let epoch = Instant::from_jd_two_part(TimeScale::Tdb, 2460200.0, 0.0);
        let t: Vec<f64> = bjd.iter().map(|b| b.seconds_since(&epoch) / 86400.0).collect();
        let s = Series::from_arrays(&t, &y, None).expect("series");
        truth.push(search_series(&s, &plan()).expect("reference search"));
    }
    // A third source without a position cannot be carried: reported and skipped.
    text.push_str("inv-lost,2460210.5,12.0,,\ninv-lost,2460211.5,12.1,,\n");
    std::fs::write(&path, text).expect("write csv");

    let columns = BatchColumns {
        source: "star".into(),
        time: "jd".into(),
        value: "mag".into(),
        error: None,
        band: None,
        ra_deg: Some("ra_deg".into()),
        dec_deg: Some("dec_deg".into()),
    };
    let options = BatchOptions { clock: ClockSpec::parse_label("jd_utc").expect("label"), batch_points: 1000 };
    let leap = LeapSecondTable::builtin();
    let arrival = ObserverArrival {
        ephemeris: embedded().into(),
        converter: converter.clone(),
        orientation: EarthOrientation::Ignored,
        observer: observer.clone(),
    };

    // Without a way to carry the times, the batch refuses the clock up front.
    let mut rows = open_rows(&path, &columns, 1000).expect("open");
    let refused = run_batch(
        rows.as_mut(),
        "field_utc_invented.csv",
        &columns,
        &options,
        &plan(),
        &leap,
        &mut |_| Ok(()),
        &|_, _| {},
    );
    assert!(refused.expect_err("must refuse").to_string().contains("barycentric"));

    let mut rows = open_rows(&path, &columns, 1000).expect("open");
    let mut reports: Vec<SourceReport> = Vec::new();
    let summary = run_batch_with_arrival(
        rows.as_mut(),
        "field_utc_invented.csv",
        &columns,
        &options,
        &plan(),
        &leap,
        Some(&arrival as &dyn SourceArrival),
        &mut |r| {
            reports.extend(r);
            Ok(())
        },
        &|_, _| {},
    )
    .expect("batch");
    assert_eq!((summary.sources, summary.searched, summary.skipped), (3, 2, 1));
    for (k, (id, _, _, period)) in STARS.iter().enumerate() {
        let r = reports.iter().find(|r| r.id == *id).expect("reported");
        assert_eq!(r.epoch_jd, 2460200.0, "{id}: epoch");
        let got = &r.outcome.as_ref().expect("searched").peaks[0].peak;
        let want = &truth[k].peaks[0].peak;
        // Times agree to ~1 ns after the round trip: the same peak, the same power.
        assert_eq!(got.grid_index, want.grid_index, "{id}");
        assert!(
            (got.freq_per_day - want.freq_per_day).abs() < 1e-9,
            "{id}: {} vs {}",
            got.freq_per_day,
            want.freq_per_day
        );
        assert!((got.power - want.power).abs() < 1e-9, "{id}: power {} vs {}", got.power, want.power);
        assert!((got.period_d - period).abs() < 3.0 * got.period_err_d.max(1e-5), "{id}: {} vs {period}", got.period_d);
    }
    let lost = reports.iter().find(|r| r.id == "inv-lost").expect("reported");
    let msg = lost.outcome.as_ref().expect_err("skipped");
    assert!(msg.contains("ra_deg") && msg.contains("position"), "{msg}");
    let _ = std::fs::remove_dir_all(&d);
}
