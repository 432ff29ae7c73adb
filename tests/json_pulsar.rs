//! The pulsar commands' `--json` output is exactly `Summary<T>` of their library result
//! types, the `--summary` file holds the same text, `--quiet` prints nothing, and a timing
//! model naming an unknown parameter is refused with the known names. Data: an invented
//! pulsar (seeded photons, times already barycentric); no outside reference is involved —
//! these are checks of the program's own contract.

#[path = "common/json.rs"]
mod json;

use std::path::Path;
use std::process::Command;

use skyclock::fit::SeededRng;
use skyclock::pulsar::event_toas::EventArrivalTimes;
use skyclock::pulsar::model::{FitParameter, TimingModel, TimingParameter};
use skyclock::pulsar::profile::{PulseProfile, event_phase_cycles};
use skyclock::pulsar::search::PulsationSearch;
use skyclock::pulsar::timing_fit::TimingSolution;

const MODEL: &str =
    "name = \"invented pulsar Lumen Drift\"\nepoch_mjd_day_tdb = 60500\nfreq_hz = 2.37\nfit = [\"freq_hz\"]\n";

/// 10 windows of 15 000 s over ±5e5 s, 500 photons each, 60 % pulsed with the invented
/// profile f(φ) = 1 + 0.7 cos 2πφ; times as BMJD_TDB text.
fn write_events(dir: &Path) {
    let model = TimingModel::from_toml(MODEL, "m").unwrap();
    let mut rng = SeededRng::for_stream(77, 1);
    let mut t_s = vec![];
    for w in 0..10 {
        let start = -5e5 + 1e5 * w as f64;
        for _ in 0..500 {
            let t = start + 15_000.0 * rng.uniform();
            let frac = if rng.uniform() < 0.6 {
                loop {
                    let x = rng.uniform();
                    if rng.uniform() * 1.7 < 1.0 + 0.7 * (std::f64::consts::TAU * x).cos() {
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
    let epoch = model.epoch();
    let mut s = String::from("time\n");
    for t in t_s {
        let text = skyclock::time::format_time(&epoch.add_seconds(t), skyclock::time::TimeFormat::Mjd);
        s.push_str(&format!("{text}\n"));
    }
    std::fs::write(dir.join("ev.csv"), s).unwrap();
    std::fs::write(dir.join("m.toml"), MODEL).unwrap();
}

fn skyclock(dir: &Path, args: &[&str]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_skyclock")).current_dir(dir).args(args).output().unwrap()
}

fn ok(out: &std::process::Output) -> String {
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    String::from_utf8(out.stdout.clone()).unwrap()
}

#[test]
fn every_pulsar_command_prints_its_typed_summary() {
    let dir = std::env::temp_dir().join(format!("skyclock_json_pulsar_{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    write_events(&dir);
    let source = ["--clock", "bmjd_tdb", "--ra", "10", "--dec", "20"];

    // search-pulsations
    let mut args = vec!["search-pulsations", "--input", "ev.csv"];
    args.extend(source);
    args.extend(["--min-freq-hz", "2.365", "--max-freq-hz", "2.375", "--oversampling", "3", "--output", "z.csv"]);
    let mut with_json = args.clone();
    with_json.extend(["--json", "--summary", "search.json"]);
    let text = ok(&skyclock(&dir, &with_json));
    let s = json::assert_summary_round_trip::<PulsationSearch>(&text);
    assert_eq!(s.result.events, 5000);
    assert!((s.result.best.freq_hz - 2.37).abs() < 2.0 * s.result.grid.step_freq_hz, "{:?}", s.result.best);
    assert_eq!(std::fs::read_to_string(dir.join("search.json")).unwrap().trim(), text.trim());
    let mut quiet = args.clone();
    quiet.push("--quiet");
    assert_eq!(ok(&skyclock(&dir, &quiet)), "", "--quiet prints nothing");

    // pulse-profile
    let common = ["--input", "ev.csv", "--clock", "bmjd_tdb", "--ra", "10", "--dec", "20", "--model", "m.toml"];
    let mut args = vec!["pulse-profile"];
    args.extend(common);
    args.extend(["--bins", "20", "--harmonics", "3", "--output", "profile.csv", "--template-output", "template.json"]);
    let mut with_json = args.clone();
    with_json.extend(["--json", "--summary", "profile.json"]);
    let text = ok(&skyclock(&dir, &with_json));
    let p = json::assert_summary_round_trip::<PulseProfile>(&text);
    assert_eq!((p.result.events, p.result.bins, p.result.profile.counts.len()), (5000, 20, 20));
    assert_eq!(p.result.template_density.len(), 20);
    assert_eq!(std::fs::read_to_string(dir.join("profile.json")).unwrap().trim(), text.trim());
    let mut quiet = args.clone();
    quiet.push("--quiet");
    assert_eq!(ok(&skyclock(&dir, &quiet)), "");

    // event-arrival-times
    let mut args = vec!["event-arrival-times"];
    args.extend(common);
    args.extend(["--template", "template.json", "--segment-duration-s", "50000", "--output", "toas.csv", "--json"]);
    let text = ok(&skyclock(&dir, &args));
    let e = json::assert_summary_round_trip::<EventArrivalTimes>(&text);
    assert_eq!(e.result.arrival_time_count, 10);
    assert_eq!(e.result.arrival_times.len(), 10);
    assert!(e.result.median_error_us.is_some_and(|m| m > 0.0));

    // fit-timing
    let args = [
        "fit-timing",
        "--input",
        "toas.csv",
        "--time-column",
        "arrival_bjd_tdb",
        "--clock",
        "bjd_tdb",
        "--model",
        "m.toml",
        "--output",
        "r.csv",
        "--model-output",
        "fitted.toml",
        "--summary",
        "fit.json",
        "--json",
    ];
    let text = ok(&skyclock(&dir, &args));
    let f = json::assert_summary_round_trip::<TimingSolution>(&text);
    assert_eq!(f.result.arrival_times, 10);
    assert_eq!(
        f.result.fit.parameters,
        vec![FitParameter::Model(TimingParameter::PhaseOffsetCycles), FitParameter::Model(TimingParameter::FreqHz)]
    );
    assert!(f.result.weighted_rms_residual_us > 0.0 && f.result.position.is_none());
    assert_eq!(std::fs::read_to_string(dir.join("fit.json")).unwrap().trim(), text.trim());
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn an_unknown_parameter_name_is_refused_with_the_known_ones() {
    let dir = std::env::temp_dir().join(format!("skyclock_json_pulsar_bad_{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(dir.join("toas.csv"), "time,error_us\n60500.0,10\n60500.5,10\n60501.0,10\n").unwrap();
    std::fs::write(dir.join("bad.toml"), "epoch_mjd_day_tdb = 60500\nfreq_hz = 2.0\nfit = [\"spin_frequency\"]\n")
        .unwrap();
    let out = skyclock(
        &dir,
        &[
            "fit-timing",
            "--input",
            "toas.csv",
            "--clock",
            "bmjd_tdb",
            "--model",
            "bad.toml",
            "--output",
            "r.csv",
            "--model-output",
            "out.toml",
        ],
    );
    assert_eq!(out.status.code(), Some(1));
    let e = String::from_utf8_lossy(&out.stderr);
    assert!(
        e.contains("bad.toml")
            && e.contains("spin_frequency")
            && e.contains("freq_hz")
            && e.contains("instrument_delay_s:NAME"),
        "{e}"
    );
    let _ = std::fs::remove_dir_all(&dir);
}
