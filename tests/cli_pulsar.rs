//! The `fit-timing` command end to end on an invented pulsar (times already BJD_TDB).

use std::process::Command;

fn setup(dir: &std::path::Path, zero_error_row: Option<usize>) {
    std::fs::write(dir.join("m.toml"), "name = \"invented pulsar\"\nepoch_mjd_day_tdb = 60100\nfreq_hz = 2.0\nfit = [\"freq_hz\"]\n").unwrap();
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
        .args(["fit-timing", "--arrival-times", "toas.csv", "--clock", "bmjd_tdb", "--ra", "10", "--dec", "20", "--model", "m.toml", "--output-residuals", "r.csv", "--output-model", "out.toml", "--json"])
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
    assert!((f - 2.0).abs() < 1e-9, "{f}");
    assert!(std::fs::read_to_string(dir.join("out.toml")).unwrap().contains("freq_hz"));
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
    let mut s = String::from("time\n");
    let mut n = 0;
    while n < 1500 {
        let x = rng.uniform() * 20_000.0;
        if rng.uniform() * 1.6 < 1.0 + 0.6 * (std::f64::consts::TAU * 3.3 * x).cos() {
            s.push_str(&format!("{:.13}\n", 60200.0 + x / 86_400.0));
            n += 1;
        }
    }
    std::fs::write(dir.join("ev.csv"), s).unwrap();
    let out = Command::new(env!("CARGO_BIN_EXE_skyclock"))
        .current_dir(&dir)
        .args(["search-pulsations", "--events", "ev.csv", "--clock", "bmjd_tdb", "--ra", "10", "--dec", "20", "--min-freq-hz", "3.2", "--max-freq-hz", "3.4", "--output", "z.csv", "--json"])
        .output()
        .unwrap();
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let json: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let f = json["best"]["freq_hz"].as_f64().unwrap();
    assert!((f - 3.3).abs() < 1.0 / 20_000.0, "{f}");
    assert!(json["best"]["false_alarm"].as_f64().unwrap() < 1e-20);
    let _ = std::fs::remove_dir_all(&dir);
}
