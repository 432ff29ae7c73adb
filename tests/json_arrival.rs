//! The `--json` output of the arrival commands is exactly `Summary<T>` of their library
//! result types (checked by deserialising and re-serialising). Input times are invented.

#[path = "common/cli.rs"]
mod cli;
#[path = "common/json.rs"]
mod json;

use cli::{skyclock, stdout_of, workdir};
use skyclock::arrival::{BarycentreRun, ObserverTimes};

#[test]
fn barycentre_json_is_its_library_type() {
    let d = std::env::temp_dir().join(format!("skyclock_json_arrival_{}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    let input = d.join("in.csv");
    std::fs::write(&input, "time,mag\n2459000.5,12.1\n2459001.25,12.3\n").unwrap();
    let output = d.join("out.csv");
    let summary_file = d.join("summary.json");
    let o = skyclock()
        .args(["barycentre", "--input"])
        .arg(&input)
        .args(["--time-column", "time", "--clock", "jd_utc", "--ra", "83.5", "--dec", "21.1", "--output"])
        .arg(&output)
        .arg("--summary")
        .arg(&summary_file)
        .arg("--json")
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let stdout = String::from_utf8(o.stdout).unwrap();
    let s = json::assert_summary_round_trip::<BarycentreRun>(&stdout);
    assert_eq!(s.result.correction.rows, 2);
    assert_eq!(s.result.clocks_seen, vec!["jd_utc".to_string()]);
    assert!(s.result.delays.shapiro_sun);
    // The summary file holds the same text as --json.
    assert_eq!(std::fs::read_to_string(&summary_file).unwrap().trim(), stdout.trim());
    // No site was given: the geocentre is assumed, and said once on stderr.
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert_eq!(stderr.matches("geocentre").count(), 1, "{stderr}");
    // Delay options in provenance are readable text, not a debug string.
    let prov = std::fs::read_to_string(d.join("out.csv.provenance.json")).unwrap();
    assert!(prov.contains("Shapiro delay of the Sun: on") && !prov.contains("DelayOptions"), "{prov}");
}

#[test]
fn observer_time_json_is_its_library_type() {
    let o = skyclock()
        .args(["observer-time", "2461010.4321", "--ra", "05:12:33.2", "--dec", "+21:07:44", "--json", "--quiet"])
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let s = json::assert_summary_round_trip::<ObserverTimes>(&String::from_utf8(o.stdout).unwrap());
    assert_eq!(s.result.readings.len(), 1);
    assert!(s.result.geocentre);
    // --quiet: the geocentre note is not printed.
    assert!(!String::from_utf8_lossy(&o.stderr).contains("geocentre"));
}

/// A short invented event list (seconds after a TT time zero), an invented source direction.
#[test]
fn barycentre_events_json_is_its_result_type() {
    let d = workdir("json_arrival", "events");
    let input = d.join("events.csv");
    let mut text = String::from("seconds\n");
    for k in 0..50 {
        text.push_str(&format!("{}\n", k as f64 * 97.3));
    }
    std::fs::write(&input, text).unwrap();
    let output = d.join("events_bary.csv");
    let o = skyclock()
        .args(["barycentre-events", "--input"])
        .arg(&input)
        .args(["--time-column", "seconds", "--time-zero", "2459000.5", "--time-zero-scale", "tt"])
        .args(["--ra", "141.7", "--dec", "-37.4", "--json", "--output"])
        .arg(&output)
        .output()
        .unwrap();
    let s = json::assert_summary_round_trip::<skyclock::arrival::BarycentreEventsResult>(&stdout_of(&o));
    assert_eq!(s.result.events.events, 50);
}

#[test]
fn convert_time_json_is_its_result_type() {
    // 2016-12-31T23:59:60.5 UTC = 2017-01-01T00:00:36.5 TAI (TAI−UTC 36 s that day, IERS Bulletin C).
    let o = skyclock()
        .args(["convert-time", "2016-12-31T23:59:60.5", "--format", "iso", "--scale", "utc", "--json"])
        .output()
        .unwrap();
    let s = json::assert_summary_round_trip::<skyclock::arrival::ConvertTimeResult>(&stdout_of(&o));
    assert_eq!(s.result.times[0].scales["tai"], "2017-01-01T00:00:36.500000000");
    assert_eq!(s.result.times[0].scales.len(), 6);
}
