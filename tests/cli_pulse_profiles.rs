//! `pulse-profile` → `event-arrival-times` → `fit-timing` end to end on an invented pulsar
//! (seeded photons, times already barycentric), and the messages for bad event tables.

use std::path::Path;
use std::process::Command;

use skyclock::fit::SeededRng;
use skyclock::pulsar::model::TimingModel;
use skyclock::pulsar::profile::event_phase_cycles;

const MODEL: &str = "name = \"invented pulsar Corvina Lantern\"\nepoch_mjd_day_tdb = 60300\nfreq_hz = 3.71\nfreq_deriv_hz_per_s = -2.0e-12\nfit = [\"freq_hz\", \"freq_deriv_hz_per_s\"]\n";

/// Events in 12 windows of 20 000 s over ±6e5 s, 700 photons each; 50 % pulsed with a
/// two-peaked invented profile f(φ) = 1 + 0.5 cos 2πφ + 0.3 cos 4πφ. Times as BMJD_TDB text.
fn write_events(dir: &Path, name: &str, swap_rows: bool) {
    let model = TimingModel::from_toml(MODEL, "m").unwrap();
    let mut rng = SeededRng::for_stream(21, 3);
    let mut t_s = vec![];
    for w in 0..12 {
        let start = -6e5 + 1e5 * w as f64;
        for _ in 0..700 {
            let t = start + 20_000.0 * rng.uniform();
            let frac = if rng.uniform() < 0.5 {
                loop {
                    let x = rng.uniform();
                    if rng.uniform() * 1.8
                        < 1.0 + 0.5 * (std::f64::consts::TAU * x).cos() + 0.3 * (2.0 * std::f64::consts::TAU * x).cos()
                    {
                        break x;
                    }
                }
            } else {
                rng.uniform()
            };
            let phi = event_phase_cycles(&model, t, "default");
            t_s.push(t + (frac - phi).rem_euclid(1.0) / model.freq_hz);
        }
    }
    t_s.sort_by(f64::total_cmp);
    if swap_rows {
        t_s.swap(4, 5);
    }
    let epoch = model.epoch();
    let mut s = String::from("time\n");
    for t in t_s {
        s.push_str(&format!(
            "{}\n",
            skyclock::time::format_time(&epoch.add_seconds(t), skyclock::time::TimeFormat::Mjd)
        ));
    }
    std::fs::write(dir.join(name), s).unwrap();
    std::fs::write(dir.join("m.toml"), MODEL).unwrap();
}

fn skyclock(dir: &Path, args: &[&str]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_skyclock")).current_dir(dir).args(args).output().unwrap()
}

#[test]
fn profile_template_arrival_times_and_timing_fit_chain() {
    let dir = std::env::temp_dir().join(format!("skyclock_cli_profiles_{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    write_events(&dir, "ev.csv", false);
    let common = ["--input", "ev.csv", "--clock", "bmjd_tdb", "--ra", "10", "--dec", "20", "--model", "m.toml"];
    let mut args = vec!["pulse-profile"];
    args.extend(common);
    args.extend([
        "--bins",
        "25",
        "--harmonics",
        "4",
        "--output",
        "profile.csv",
        "--template-output",
        "template.json",
        "--figure",
        "profile.svg",
        "--json",
    ]);
    let out = skyclock(&dir, &args);
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let json: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(json["events"].as_u64(), Some(8400));
    assert!(json["template_peak_phase_cycles"].as_f64().is_some());
    // with half the photons pulsed the density is 1 + 0.25 cos 2πφ + 0.15 cos 4πφ: every
    // coefficient of the written template within 4σ of it
    let doc: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("template.json")).unwrap()).unwrap();
    let t = &doc["template"];
    for k in 0..4 {
        let truth_a = [0.25, 0.15, 0.0, 0.0][k];
        let (a, ea) = (t["cos_coefficients"][k].as_f64().unwrap(), t["cos_errors"][k].as_f64().unwrap());
        let (b, eb) = (t["sin_coefficients"][k].as_f64().unwrap(), t["sin_errors"][k].as_f64().unwrap());
        assert!((a - truth_a).abs() < 4.0 * ea && b.abs() < 4.0 * eb, "harmonic {}: a {a} ± {ea}, b {b} ± {eb}", k + 1);
    }
    let profile = std::fs::read_to_string(dir.join("profile.csv")).unwrap();
    assert_eq!(profile.lines().count(), 26);
    assert!(std::fs::read_to_string(dir.join("profile.svg")).unwrap().contains("<svg"));

    let mut args = vec!["event-arrival-times"];
    args.extend(common);
    args.extend([
        "--template",
        "template.json",
        "--segment-duration-s",
        "50000",
        "--min-photons",
        "100",
        "--output",
        "toas.csv",
        "--json",
    ]);
    let out = skyclock(&dir, &args);
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let json: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(json["arrival_times"].as_u64(), Some(12));

    let out = skyclock(
        &dir,
        &[
            "fit-timing",
            "--input",
            "toas.csv",
            "--time-column",
            "arrival_bjd_tdb",
            "--clock",
            "bjd_tdb",
            "--ra",
            "10",
            "--dec",
            "20",
            "--model",
            "m.toml",
            "--output",
            "r.csv",
            "--model-output",
            "fitted.toml",
            "--figure",
            "residuals.svg",
            "--json",
        ],
    );
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let json: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let values = &json["fit"]["values"];
    let sigmas = &json["fit"]["uncertainties"];
    for (j, truth) in [(1, 3.71), (2, -2.0e-12)] {
        let (v, s) = (values[j].as_f64().unwrap(), sigmas[j].as_f64().unwrap());
        assert!((v - truth).abs() < 4.0 * s, "parameter {j}: {v} ± {s}, truth {truth}");
    }
    assert!(std::fs::read_to_string(dir.join("residuals.svg")).unwrap().contains("<svg"));
    // refusing to overwrite an input
    let mut args = vec!["pulse-profile"];
    args.extend(common);
    args.extend(["--output", "ev.csv"]);
    let out = skyclock(&dir, &args);
    assert_eq!(out.status.code(), Some(1));
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn unsorted_events_and_too_short_segments_are_named() {
    let dir = std::env::temp_dir().join(format!("skyclock_cli_profiles_bad_{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    write_events(&dir, "bad.csv", true);
    let out = skyclock(
        &dir,
        &[
            "pulse-profile",
            "--input",
            "bad.csv",
            "--clock",
            "bmjd_tdb",
            "--ra",
            "10",
            "--dec",
            "20",
            "--model",
            "m.toml",
            "--output",
            "p.csv",
        ],
    );
    assert_eq!(out.status.code(), Some(1));
    let e = String::from_utf8_lossy(&out.stderr);
    assert!(e.contains("bad.csv") && e.contains("row 6") && e.contains("column 'time'") && e.contains("sorted"), "{e}");
    // events outside the model's validity
    let out = skyclock(
        &dir,
        &[
            "pulse-profile",
            "--input",
            "bad.csv",
            "--clock",
            "bmjd_tdb",
            "--ra",
            "10",
            "--dec",
            "20",
            "--model",
            "m.toml",
            "--output",
            "p.csv",
            "--model-validity-days",
            "2",
        ],
    );
    let e = String::from_utf8_lossy(&out.stderr);
    assert!(e.contains("bad.csv") && e.contains("row 1") && e.contains("validity"), "{e}");
    let _ = std::fs::remove_dir_all(&dir);
}
