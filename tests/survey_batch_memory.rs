//! A survey batch streams a table with many Parquet row groups while holding a bounded
//! number of rows (the reader's slice plus the sources waiting to be searched), and one bad
//! source (all values NaN; a constant light curve) is reported and skipped while all the
//! others finish. Data: an invented field of periodic stars with seeded noise (the
//! expected periods are the invented ones); the bound follows from the batch design
//! (slice rows; 3 × (batch points + the longest source)), not from a measurement.

use std::path::PathBuf;

use polars::prelude::*;
use skyclock::arrival::table::ClockSpec;
use skyclock::fit::SeededRng;
use skyclock::survey::batch::{BatchColumns, BatchOptions, SourceReport, open_rows, run_batch};
use skyclock::survey::search::SearchPlan;
use skyclock::time::LeapSecondTable;

const SOURCES: usize = 300;
const POINTS: usize = 250;
const ROW_GROUP: usize = 2000;
const SLICE_ROWS: usize = 2000;
const BATCH_POINTS: usize = 3000;

fn dir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("skyclock_batch_memory_{name}_{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).expect("temp dir");
    d
}

fn period_of(k: usize) -> f64 {
    0.4 + 0.005 * k as f64
}

/// Invented field: source k has period `period_of(k)` d; "bad-nan" has only NaN values
/// and "bad-flat" a constant curve, placed among the good ones.
fn invented_field() -> DataFrame {
    let mut rng = SeededRng::new(2027);
    let (mut id, mut t, mut y, mut e) = (Vec::new(), Vec::new(), Vec::new(), Vec::new());
    let mut push_source = |name: String, value: &dyn Fn(f64, &mut SeededRng) -> f64, rng: &mut SeededRng| {
        // survey-like sampling: random instants over 50 days, in time order
        let mut xs: Vec<f64> = (0..POINTS).map(|_| 50.0 * rng.uniform()).collect();
        xs.sort_by(|a, b| a.total_cmp(b));
        for x in xs {
            id.push(name.clone());
            t.push(format!("{:.8}", 2460200.5 + x));
            y.push(value(x, rng));
            e.push(0.02);
        }
    };
    for k in 0..SOURCES {
        if k == 30 {
            push_source("bad-nan".into(), &|_, _| f64::NAN, &mut rng);
        }
        if k == 77 {
            push_source("bad-flat".into(), &|_, _| 11.5, &mut rng);
        }
        let f = 1.0 / period_of(k);
        push_source(
            format!("inv-{k:03}"),
            &|x, r| 13.0 + 0.1 * (std::f64::consts::TAU * f * x).sin() + 0.02 * r.normal(),
            &mut rng,
        );
    }
    DataFrame::new_infer_height(vec![
        Column::new("star".into(), id),
        Column::new("bjd".into(), t),
        Column::new("mag".into(), y),
        Column::new("mag_err".into(), e),
    ])
    .expect("frame")
}

#[test]
fn parquet_batch_holds_bounded_rows_and_skips_bad_sources() {
    let d = dir("parquet");
    let path = d.join("field_invented.parquet");
    let mut df = invented_field();
    let total_rows = df.height();
    ParquetWriter::new(std::fs::File::create(&path).expect("create"))
        .with_row_group_size(Some(ROW_GROUP))
        .finish(&mut df)
        .expect("write parquet");
    let groups = ParquetReader::new(std::fs::File::open(&path).expect("open"))
        .get_metadata()
        .expect("metadata")
        .row_groups
        .len();
    assert!(groups >= 10, "the table must span many row groups, got {groups}");

    let columns = BatchColumns {
        source: "star".into(),
        time: "bjd".into(),
        value: "mag".into(),
        error: Some("mag_err".into()),
        band: None,
        ra_deg: None,
        dec_deg: None,
    };
    let options = BatchOptions { clock: ClockSpec::parse_label("bjd_tdb").expect("label"), batch_points: BATCH_POINTS };
    let mut plan = SearchPlan::sinusoid_up_to(3.0);
    plan.peaks = 1;
    plan.refine_peaks = false;
    plan.window_sidelobes = 0;
    let leap = LeapSecondTable::builtin();
    let mut rows = open_rows(&path, &columns, SLICE_ROWS).expect("open rows");
    let mut reports: Vec<SourceReport> = Vec::new();
    let mut largest_delivery = 0usize;
    let summary = run_batch(
        rows.as_mut(),
        "field_invented.parquet",
        &columns,
        &options,
        &plan,
        &leap,
        &mut |r| {
            largest_delivery = largest_delivery.max(r.len());
            reports.extend(r);
            Ok(())
        },
        &|_, _| {},
    )
    .expect("batch");

    // Bounded memory: the reader never held more than one slice, the batch never more
    // than three batches of sources — far less than the table.
    assert_eq!(summary.rows, total_rows);
    assert!(
        summary.peak_reader_rows > 0 && summary.peak_reader_rows <= SLICE_ROWS,
        "reader held {}",
        summary.peak_reader_rows
    );
    // one batch searched, one queued, one filling (each ≤ batch points + one source)
    let bound = 3 * (BATCH_POINTS + POINTS);
    assert!(summary.peak_points_held <= bound, "grouper held {} > {bound}", summary.peak_points_held);
    assert!(summary.peak_reader_rows + summary.peak_points_held < total_rows / 4);
    assert!(largest_delivery < SOURCES, "sources must be searched in several batches");

    // One bad source never stops the batch: both are reported with their reason, every
    // good source is searched and gets its invented period back.
    assert_eq!(summary.sources, SOURCES + 2);
    assert_eq!(summary.skipped, 2);
    assert_eq!(summary.searched, SOURCES);
    let nan = reports.iter().find(|r| r.id == "bad-nan").expect("bad-nan reported");
    let msg = nan.outcome.as_ref().expect_err("bad-nan skipped");
    assert!(msg.contains("bad-nan") && (msg.contains("NaN") || msg.contains("points")), "{msg}");
    let flat = reports.iter().find(|r| r.id == "bad-flat").expect("bad-flat reported");
    let msg = flat.outcome.as_ref().expect_err("bad-flat skipped");
    assert!(msg.contains("bad-flat") && msg.contains("constant"), "{msg}");
    let mut order = Vec::new();
    for r in &reports {
        order.push(r.id.clone());
        if let Some(k) = r.id.strip_prefix("inv-") {
            let k: usize = k.parse().expect("index");
            let out = r.outcome.as_ref().expect("good source searched");
            let p = out.peaks[0].peak.period_d;
            assert!((p - period_of(k)).abs() < 0.01 * period_of(k), "{}: period {p} vs {}", r.id, period_of(k));
        }
    }
    // Reports come in file order.
    assert_eq!(order[30], "bad-nan");
    assert_eq!(order[0], "inv-000");
    let _ = std::fs::remove_dir_all(&d);
}
