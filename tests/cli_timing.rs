//! `timing-residuals` as a user runs it, on invented timings (invented star, seeded noise):
//! the period change injected is recovered within its interval, the O–C and light-time orbit
//! figures are written with their model band and residuals panel, and bad input gets a
//! message naming file, row and column. Expected values: the invented signals.

use std::path::{Path, PathBuf};
use std::process::Command;

use skyclock::fit::SeededRng;
use skyclock::oc::models::light_time_d;

const EPOCH_JD: f64 = 2_448_000.345_6;
const PERIOD_D: f64 = 0.612_345_6;
const QUADRATIC_D: f64 = 2.0e-10;
const LTTE: [f64; 5] = [0.003, 3_900.0, 0.3, 0.2, 1.0];

fn dir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("skyclock_cli_timing_{name}_{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).expect("temp dir");
    d
}

fn run(args: &[&str]) -> (i32, String, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_skyclock")).args(args).output().expect("run skyclock");
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// Invented timings over 28 seasons, BJD_TDB, two origins, primaries and secondaries.
fn write_timings(path: &Path, with_companion: bool) {
    let mut rng = SeededRng::new(20_261_202);
    let mut s = String::from("time,error_d,kind,origin\n");
    let mut used = std::collections::HashSet::new();
    for season in 0..28 {
        for _ in 0..8 {
            let day = season as f64 * 365.25 + 150.0 * rng.uniform();
            let secondary = rng.uniform() < 0.25;
            let e = (day / PERIOD_D).round() + if secondary { 0.5 } else { 0.0 };
            if !used.insert((2.0 * e) as i64) {
                continue;
            }
            let (origin, sigma) =
                if rng.uniform() < 0.5 { ("Larkspur Ridge", 0.0003) } else { ("Vale of Tenn", 0.0006) };
            let mut t = e * PERIOD_D + QUADRATIC_D * e * e + sigma * rng.normal();
            if with_companion {
                t += light_time_d(&LTTE, e * PERIOD_D);
            }
            s.push_str(&format!(
                "{:.7},{sigma},{},{origin}\n",
                EPOCH_JD + t,
                if secondary { "secondary" } else { "primary" }
            ));
        }
    }
    std::fs::write(path, s).unwrap();
}

fn base_args<'a>(input: &'a str, output: &'a str) -> Vec<&'a str> {
    vec![
        "timing-residuals",
        "--input",
        input,
        "--time-column",
        "time",
        "--clock",
        "bjd_tdb",
        "--error-column",
        "error_d",
        "--kind-column",
        "kind",
        "--origin-column",
        "origin",
        "--ra",
        "18:02:11.5",
        "--dec",
        "+33:14:50",
        "--epoch-bjd-tdb",
        "2448000.3456",
        "--period-d",
        "0.6123456",
        "--period-sigma-d",
        "1e-7",
        "--output",
        output,
    ]
}

#[test]
fn period_change_is_recovered_and_the_figure_has_band_and_residuals() {
    let d = dir("quadratic");
    let input = d.join("minima.csv");
    write_timings(&input, false);
    let (i, o, fig) = (input.to_str().unwrap(), d.join("oc.csv"), d.join("oc.svg"));
    let mut args = base_args(i, o.to_str().unwrap());
    args.extend(["--models", "linear,quadratic", "--figure", fig.to_str().unwrap(), "--json"]);
    let (code, stdout, stderr) = run(&args);
    assert_eq!(code, 0, "{stderr}");
    let v: serde_json::Value = serde_json::from_str(&stdout).unwrap();
    let quad = &v["models"][1];
    assert_eq!(quad["model"], "quadratic");
    let q = quad["parameters"].as_array().unwrap().iter().find(|p| p["name"] == "quadratic_d").unwrap();
    let (val, sig) = (q["value"].as_f64().unwrap(), q["sigma_covariance"].as_f64().unwrap());
    assert!((val - QUADRATIC_D).abs() < 3.0 * sig, "Q = {val} ± {sig}");
    assert!(v["verdicts"][0].as_str().unwrap().contains("quadratic"), "{}", v["verdicts"]);
    let svg = std::fs::read_to_string(&fig).unwrap();
    for label in ["O − C (d)", "O − C − model (d)", "quadratic model ±1σ", "Larkspur Ridge", "Vale of Tenn"] {
        assert!(svg.contains(label), "figure lacks '{label}'");
    }
    let table = std::fs::read_to_string(&o).unwrap();
    assert!(table.lines().next().unwrap().contains("model_sigma_quadratic_d"));
}

#[test]
fn the_light_time_orbit_figure_shows_the_companion() {
    let d = dir("orbit");
    let input = d.join("minima.csv");
    write_timings(&input, true);
    let (i, o) = (input.to_str().unwrap(), d.join("oc.csv"));
    let orbit = d.join("orbit.svg");
    let mut args = base_args(i, o.to_str().unwrap());
    args.extend([
        "--models",
        "quadratic,quadratic+light-time",
        "--orbit-figure",
        orbit.to_str().unwrap(),
        "--binary-mass-msun",
        "2.1",
        "--json",
    ]);
    let (code, stdout, stderr) = run(&args);
    assert_eq!(code, 0, "{stderr}");
    assert!(stderr.contains("caution"), "the light-time caution is printed");
    let v: serde_json::Value = serde_json::from_str(&stdout).unwrap();
    let derived = v["models"][1]["derived"].as_array().unwrap();
    let p3 = derived.iter().find(|p| p["name"] == "companion_period_d").unwrap();
    let (val, sig) = (p3["value"].as_f64().unwrap(), p3["sigma_covariance"].as_f64().unwrap());
    assert!((val - LTTE[1]).abs() < 3.0 * sig, "P3 = {val} ± {sig}");
    assert!(derived.iter().any(|p| p["name"] == "minimum_companion_mass_msun" && p["value"].as_f64().unwrap() > 0.0));
    let svg = std::fs::read_to_string(&orbit).unwrap();
    assert!(
        svg.contains("companion orbital phase") && svg.contains("light-time delay (s)") && svg.contains("Irwin 1952")
    );
}

#[test]
fn bad_timing_tables_get_messages_naming_file_row_and_column() {
    let d = dir("bad");
    let out = d.join("oc.csv");
    let o = out.to_str().unwrap();
    let cases: [(&str, &str, &[&str]); 5] = [
        // A zero error.
        (
            "zero_error.csv",
            "time,error_d,kind,origin\n2448000.3456,0.0003,primary,A\n2448000.9579,0,primary,A\n",
            &["row 2", "'error_d'", "> 0"],
        ),
        // The same timing twice.
        (
            "duplicate.csv",
            "time,error_d,kind,origin\n2448000.3456,0.0003,primary,A\n2448000.9580,0.0003,primary,A\n2448000.9579,0.0003,primary,B\n2448001.5703,0.0003,primary,A\n",
            &["rows", "same primary timing", "duplicate"],
        ),
        // An unknown event kind.
        (
            "kind.csv",
            "time,error_d,kind,origin\n2448000.3456,0.0003,primary,A\n2448000.9579,0.0003,tertiary,A\n",
            &["row 2", "'kind'", "tertiary"],
        ),
        // A time that is not a number.
        (
            "time.csv",
            "time,error_d,kind,origin\n2448000.3456,0.0003,primary,A\n2448000.95x9,0.0003,primary,A\n",
            &["row 2", "'time'"],
        ),
        // Decades between two timings with a period error that cannot bridge them.
        (
            "ambiguous.csv",
            "time,error_d,kind,origin\n2448000.3456,0.0003,primary,A\n2448000.9579,0.0003,primary,A\n2458000.3457,0.0003,primary,A\n",
            &["ambiguous", "row"],
        ),
    ];
    for (name, text, needles) in cases {
        let input = d.join(name);
        std::fs::write(&input, text).unwrap();
        let mut args = base_args(input.to_str().unwrap(), o);
        if name == "ambiguous.csv" {
            let k = args.iter().position(|a| *a == "1e-7").unwrap();
            args[k] = "1e-5";
        }
        let (code, _, stderr) = run(&args);
        assert_eq!(code, 1, "{name}: {stderr}");
        for n in needles {
            assert!(stderr.contains(n), "{name}: message lacks '{n}': {stderr}");
        }
    }
    // A clock label that does not exist, an unknown model, an orbit figure without a companion.
    let input = d.join("ok.csv");
    write_timings(&input, false);
    let i = input.to_str().unwrap();
    let mut args = base_args(i, o);
    let k = args.iter().position(|a| *a == "bjd_tdb").unwrap();
    args[k] = "bjd_sidereal";
    let (code, _, stderr) = run(&args);
    assert_eq!(code, 1);
    assert!(stderr.contains("bjd_sidereal") && stderr.contains("jd_utc"), "{stderr}");
    let mut args = base_args(i, o);
    args.extend(["--models", "linear,cubic"]);
    let (code, _, stderr) = run(&args);
    assert_eq!(code, 1);
    assert!(stderr.contains("cubic") && stderr.contains("quadratic+light-time"), "{stderr}");
    let orbit = d.join("orbit.svg");
    let mut args = base_args(i, o);
    args.extend(["--orbit-figure", orbit.to_str().unwrap()]);
    let (code, _, stderr) = run(&args);
    assert_eq!(code, 1);
    assert!(stderr.contains("--orbit-figure needs a light-time model"), "{stderr}");
    // The output may not replace the input.
    let args = base_args(i, i);
    let (code, _, stderr) = run(&args);
    assert_eq!(code, 1);
    assert!(stderr.contains("ok.csv"), "{stderr}");
    assert!(std::fs::read_to_string(&input).unwrap().starts_with("time,error_d"));
}
