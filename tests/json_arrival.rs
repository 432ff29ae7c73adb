//! The `--json` output of the arrival commands is exactly `Summary<T>` of their library
//! result types (checked by deserialising and re-serialising). Input times are invented.

#[path = "common/json.rs"]
mod json;

use std::process::Command;

use skyclock::arrival::{BarycentreRun, ObserverTimes};

fn skyclock() -> Command {
    Command::new(env!("CARGO_BIN_EXE_skyclock"))
}

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
