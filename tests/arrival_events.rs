//! The fast (interpolated) event correction against its exact twin, and the streaming file
//! path: values, pass-through, errors naming row and column, no output over an input.

use skyclock::arrival::events::correct_event_file;
use skyclock::arrival::interpolated::{DEFAULT_NODE_SPACING_S, InterpolatedCorrector};
use skyclock::arrival::{BarycentricCorrector, DelayOptions, ReferencePoint, Source};
use skyclock::ephemeris::embedded;
use skyclock::fit::random::SeededRng;
use skyclock::observer::{EarthOrientation, Observer, Site};
use skyclock::time::{Instant, LeapSecondTable, ScaleConverter, TimeScale};

fn corrector() -> BarycentricCorrector {
    BarycentricCorrector::new(
        embedded(),
        ScaleConverter::new(LeapSecondTable::builtin()),
        EarthOrientation::Ignored,
        Source::fixed_degrees("invented pulsar", 127.418, -14.277).unwrap(),
        DelayOptions { shapiro_sun: true, shapiro_planets: true },
    )
}

#[test]
fn interpolated_matches_exact_within_a_nanosecond() {
    let exact = corrector();
    let site = Observer::Site(Site::from_degrees("Invented Ridge", 146.517, -30.406, 212.0).unwrap());
    let zero = Instant::from_mjd_parts(TimeScale::Tt, 59_000, 1234.5);
    let interp = InterpolatedCorrector::new(&exact, site.clone(), zero, DEFAULT_NODE_SPACING_S);
    let mut rng = SeededRng::new(99);
    let original: Vec<f64> = (0..3_000).map(|_| rng.uniform() * 3.0 * 86_400.0 - 3_600.0).collect();
    let mut times = original.clone();
    interp.correct_in_place(&mut times).unwrap();
    let mut worst = 0.0_f64;
    for (k, t) in original.iter().enumerate().step_by(3) {
        let tt = zero.add_seconds(*t);
        let out = exact.correct(&tt, &site, ReferencePoint::Observer).unwrap();
        let expected = out.bjd_tdb.seconds_since(&zero.relabel(TimeScale::Tdb));
        worst = worst.max((expected - times[k]).abs());
    }
    assert!(worst <= 1e-9, "worst {worst} s");
}

#[test]
fn event_file_streams_in_blocks_and_keeps_every_line() {
    let dir = std::env::temp_dir().join(format!("skyclock-events-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let input = dir.join("events.csv");
    let output = dir.join("events_bary.csv");
    let mut text = String::from("seconds,energy_kev\n");
    for k in 0..2_500 {
        text.push_str(&format!("{},{}\n", k as f64 * 61.7, 1.0 + (k % 7) as f64));
    }
    std::fs::write(&input, &text).unwrap();
    let exact = corrector();
    let converter = ScaleConverter::new(LeapSecondTable::builtin());
    // Event times counted on UTC from a zero one day before a leap second.
    let zero = Instant::from_mjd_parts(TimeScale::Utc, 57_753, 0.0);
    let zero_tt = converter.convert(&zero, TimeScale::Tt).unwrap();
    let interp = InterpolatedCorrector::new(&exact, Observer::Geocentre, zero_tt, DEFAULT_NODE_SPACING_S);
    let summary = correct_event_file(&input, &output, "seconds", &zero, &converter, &interp, 1_000).unwrap();
    assert_eq!(summary.events, 2_500);
    let out = std::fs::read_to_string(&output).unwrap();
    let lines: Vec<&str> = out.lines().collect();
    assert_eq!(lines[0], "seconds,energy_kev,barycentric_s");
    assert_eq!(lines.len(), 2_501);
    for k in (0..2_500).step_by(97) {
        let cells: Vec<&str> = lines[k + 1].split(',').collect();
        let value: f64 = cells[2].parse().unwrap();
        let utc_seconds: f64 = cells[0].parse().unwrap();
        // Exact twin: the UTC clock reading zero + v (uniform-day arithmetic, as the stream
        // reads "seconds on UTC"), corrected exactly, as seconds after zero read on TDB.
        let u = zero.add_seconds(utc_seconds);
        let exact_out = exact.correct(&u, &Observer::Geocentre, ReferencePoint::Observer).unwrap();
        let expected = exact_out.bjd_tdb.seconds_since(&zero.relabel(TimeScale::Tdb));
        assert!((value - expected).abs() < 2e-9, "row {k}: {value} vs {expected}");
    }
    // A bad cell names row and column; nothing is written.
    std::fs::write(&input, "seconds\n1.0\nabc\n").unwrap();
    let bad_out = dir.join("bad.csv");
    let e = correct_event_file(&input, &bad_out, "seconds", &zero, &converter, &interp, 10).unwrap_err();
    assert!(e.to_string().contains("row 2") && e.to_string().contains("'seconds'"), "{e}");
    assert!(!bad_out.exists());
    // Output over the input is refused.
    let e = correct_event_file(&input, &input, "seconds", &zero, &converter, &interp, 10).unwrap_err();
    assert!(e.to_string().contains("input"), "{e}");
    std::fs::remove_dir_all(&dir).ok();
}
