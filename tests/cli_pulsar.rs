//! The `fit-timing` command end to end on an invented pulsar (times already BJD_TDB).

use std::process::Command;

/// The invented pulsar spins at exactly 2 Hz; the start model is 3e-7 Hz away from that
/// (0.14 turns of drift over the 5.5-day span, so the phase connection stays unambiguous),
/// so a fit that returns its start value fails the 1e-9 Hz check below.
const TRUE_FREQ_HZ: f64 = 2.0;
const START_FREQ_HZ: f64 = 2.000_000_3;

fn setup(dir: &std::path::Path, zero_error_row: Option<usize>) {
    std::fs::write(
        dir.join("m.toml"),
        format!(
            "name = \"invented pulsar\"\nepoch_mjd_day_tdb = 60100\nfreq_hz = {START_FREQ_HZ}\nfit = [\"freq_hz\"]\n"
        ),
    )
    .unwrap();
    let mut s = String::from("time,error_us,freq_mhz,instrument\n");
    for i in 0..12 {
        // half-day steps: whole turns of a 2 Hz spin (invented)
        let e = if Some(i) == zero_error_row { 0 } else { 100 };
        s.push_str(&format!("{:.12},{e},1400,rx\n", 60100.0 + i as f64 * 0.5));
    }
    std::fs::write(dir.join("toas.csv"), s).unwrap();
}

fn run(dir: &std::path::Path) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_skyclock"))
        .current_dir(dir)
        .args([
            "fit-timing",
            "--input",
            "toas.csv",
            "--clock",
            "bmjd_tdb",
            "--ra",
            "10",
            "--dec",
            "20",
            "--model",
            "m.toml",
            "--output",
            "r.csv",
            "--model-output",
            "out.toml",
            "--json",
        ])
        .output()
        .unwrap()
}

#[test]
fn fits_and_writes_outputs_and_names_bad_cells() {
    let dir = std::env::temp_dir().join(format!("skyclock_cli_pulsar_{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    setup(&dir, None);
    let out = run(&dir);
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let json: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let f = json["fit"]["values"][1].as_f64().unwrap();
    // Truth: the invented 2 Hz spin the arrival times were made from (whole turns). The fit
    // starts 3e-7 Hz away; catches a fit that does not move (off by 3e-7), a step of the
    // wrong sign (6e-7) or a wrong phase derivative (a fraction of 3e-7 left).
    assert!((f - TRUE_FREQ_HZ).abs() < 1e-9, "fitted {f} Hz from a start at {START_FREQ_HZ} Hz");
    let written = std::fs::read_to_string(dir.join("out.toml")).unwrap();
    let model = skyclock::pulsar::model::TimingModel::from_toml(&written, "out.toml").unwrap();
    assert!((model.freq_hz - TRUE_FREQ_HZ).abs() < 1e-9, "written model keeps {} Hz", model.freq_hz);
    setup(&dir, Some(3));
    let out = run(&dir);
    assert_eq!(out.status.code(), Some(1));
    let e = String::from_utf8_lossy(&out.stderr);
    assert!(e.contains("row 4") && e.contains("error_us"), "{e}");
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn search_pulsations_finds_an_invented_pulsar() {
    let dir = std::env::temp_dir().join(format!("skyclock_cli_search_{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let mut rng = skyclock::fit::SeededRng::new(4);
    // Events in time order, as event lists are (unsorted lists are refused).
    let mut times = Vec::new();
    while times.len() < 1500 {
        let x = rng.uniform() * 20_000.0;
        if rng.uniform() * 1.6 < 1.0 + 0.6 * (std::f64::consts::TAU * 3.3 * x).cos() {
            times.push(x);
        }
    }
    times.sort_by(f64::total_cmp);
    let mut s = String::from("time\n");
    for x in &times {
        s.push_str(&format!("{:.13}\n", 60200.0 + x / 86_400.0));
    }
    std::fs::write(dir.join("ev.csv"), s).unwrap();
    let out = Command::new(env!("CARGO_BIN_EXE_skyclock"))
        .current_dir(&dir)
        .args([
            "search-pulsations",
            "--input",
            "ev.csv",
            "--clock",
            "bmjd_tdb",
            "--ra",
            "10",
            "--dec",
            "20",
            "--min-freq-hz",
            "3.2",
            "--max-freq-hz",
            "3.4",
            "--output",
            "z.csv",
            "--figure",
            "z.svg",
            "--json",
        ])
        .output()
        .unwrap();
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let json: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let f = json["best"]["freq_hz"].as_f64().unwrap();
    assert!((f - 3.3).abs() < 1.0 / 20_000.0, "{f}");
    assert!(json["best"]["false_alarm"].as_f64().unwrap() < 1e-20);
    let svg = std::fs::read_to_string(dir.join("z.svg")).expect("the statistic-against-frequency figure");
    assert!(
        svg.contains("mean of pure noise") && svg.contains("best trial") && svg.contains("(mHz)"),
        "figure lacks its layers or axis label"
    );
    let _ = std::fs::remove_dir_all(&dir);
}

/// Position fitting needs times at an observer: with times already at the barycentre the
/// command must say so, naming the clock.
#[test]
fn position_fit_with_barycentric_times_is_refused_clearly() {
    let dir = std::env::temp_dir().join(format!("skyclock_cli_position_bad_{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    setup(&dir, None);
    std::fs::write(dir.join("m.toml"), "name = \"invented pulsar\"\nepoch_mjd_day_tdb = 60100\nfreq_hz = 2.0\nfit = [\"freq_hz\", \"position_offset_ra_mas\"]\n").unwrap();
    let out = run(&dir);
    assert_eq!(out.status.code(), Some(1));
    let e = String::from_utf8_lossy(&out.stderr);
    assert!(e.contains("observer's barycentric position") && e.contains("bjd_tdb") && e.contains("toas.csv"), "{e}");
    assert!(!dir.join("r.csv").exists() && !dir.join("out.toml").exists());
    let _ = std::fs::remove_dir_all(&dir);
}

/// End to end: an invented pulsar truly 300 mas east and 200 mas south of the position given
/// on the command line; its pulses (integer phase of a 2 Hz spin at the barycentre along the
/// true direction) are carried to the geocentre by the library's inverse correction and
/// written as MJD (TDB) at the observer. fit-timing barycentres them towards the given
/// position and must find the true position in the summary.
#[test]
fn fits_position_end_to_end_from_geocentric_times() {
    use skyclock::arrival::{BarycentricCorrector, DelayOptions, Source};
    use skyclock::observer::{EarthOrientation, Observer};
    use skyclock::time::format::format_whole_and_fraction;
    use skyclock::time::{Instant, LeapSecondTable, ScaleConverter, TimeScale};
    let dir = std::env::temp_dir().join(format!("skyclock_cli_position_{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let (ra0, dec0) = (131.7_f64, 52.3_f64);
    let mas = 1.0 / 3.6e6;
    let (ra_true, dec_true) = (ra0 + 300.0 * mas / dec0.to_radians().cos(), dec0 - 200.0 * mas);
    let truth = Source::fixed_degrees("invented true position", ra_true, dec_true).unwrap();
    let corrector = BarycentricCorrector::new(
        skyclock::ephemeris::embedded(),
        ScaleConverter::new(LeapSecondTable::builtin()),
        EarthOrientation::Ignored,
        truth,
        DelayOptions::default(),
    );
    let epoch = Instant::from_mjd_parts(TimeScale::Tdb, 60100, 0.0);
    let mut s = String::from("time,error_us\n");
    for k in 0..30 {
        // pulses every ~25 days over 2 years: whole turns of 2 Hz (half seconds)
        let t_s = ((k as f64 - 14.5) * 25.3 * 86_400.0 * 2.0).round() / 2.0;
        let at_observer =
            corrector.arrival_at_observer(&epoch.add_seconds(t_s), &Observer::Geocentre, TimeScale::Tdb).unwrap();
        s.push_str(&format!(
            "{},1\n",
            format_whole_and_fraction(at_observer.mjd_day(), at_observer.seconds_of_day() / 86_400.0, 14)
        ));
    }
    std::fs::write(dir.join("toas.csv"), s).unwrap();
    std::fs::write(
        dir.join("m.toml"),
        // Started away from the truth in every fitted parameter: position offsets 0 (truth
        // +300, −200 mas), proper motions 0 (truth 0, fitted), spin 2e-9 Hz off (0.06 turns
        // of drift over ±1 year, so the phase connection holds).
        "name = \"invented pulsar\"\nepoch_mjd_day_tdb = 60100\nfreq_hz = 2.000000002\nfit = [\"freq_hz\", \"position_offset_ra_mas\", \"position_offset_dec_mas\", \"proper_motion_ra_mas_per_yr\", \"proper_motion_dec_mas_per_yr\"]\n",
    )
    .unwrap();
    let out = Command::new(env!("CARGO_BIN_EXE_skyclock"))
        .current_dir(&dir)
        .args([
            "fit-timing",
            "--input",
            "toas.csv",
            "--clock",
            "mjd_tdb",
            "--ra",
            &ra0.to_string(),
            "--dec",
            &dec0.to_string(),
            "--model",
            "m.toml",
            "--output",
            "r.csv",
            "--model-output",
            "out.toml",
            "--summary",
            "fit.json",
            "--json",
        ])
        .output()
        .unwrap();
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let json: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let p = &json["position"];
    let get = |k: &str| p[k].as_f64().unwrap_or_else(|| panic!("no position.{k} in {p}"));
    let (sr, sd) = (get("ra_uncertainty_mas"), get("dec_uncertainty_mas"));
    let dra_mas = (get("ra_deg") - ra_true) / mas * dec0.to_radians().cos();
    let ddec_mas = (get("dec_deg") - dec_true) / mas;
    eprintln!(
        "position error {dra_mas:.4} mas east (σ {sr:.4}), {ddec_mas:.4} mas north (σ {sd:.4}); proper motion {} {}",
        get("proper_motion_ra_mas_per_yr"),
        get("proper_motion_dec_mas_per_yr")
    );
    assert!(sr > 0.0 && sr < 1.0 && sd > 0.0 && sd < 1.0, "σ {sr} {sd} mas");
    assert!(dra_mas.abs() < 3.0 * sr && ddec_mas.abs() < 3.0 * sd, "position off by {dra_mas} / {ddec_mas} mas");
    assert!(get("proper_motion_ra_mas_per_yr").abs() < 3.0 * get("proper_motion_ra_uncertainty_mas_per_yr"));
    assert!(get("proper_motion_dec_mas_per_yr").abs() < 3.0 * get("proper_motion_dec_uncertainty_mas_per_yr"));
    let written = std::fs::read_to_string(dir.join("out.toml")).unwrap();
    assert!(written.contains("position_offset_ra_mas"));
    // The spin: truth 2 Hz exactly; a fit that left it at its start would be 2e-9 Hz off.
    let model = skyclock::pulsar::model::TimingModel::from_toml(&written, "out.toml").unwrap();
    assert!((model.freq_hz - 2.0).abs() < 1e-11, "fitted spin {} Hz", model.freq_hz);
    let _ = std::fs::remove_dir_all(&dir);
}
