//! The timing commands' `--json` output is exactly the serialisation of their library result
//! types (`Summary<OcAnalysis>` for `timing-residuals`), and timings already in BJD_TDB need
//! no site and no source. Data: invented timings of an invented star (a linear ephemeris plus
//! a steady period change, seeded noise); the values checked are the invented ones.

#[path = "common/cli.rs"]
mod cli;
#[path = "common/json.rs"]
mod json;

use cli::skyclock;

use skyclock::fit::SeededRng;
use skyclock::oc::OcAnalysis;

fn run(args: &[&str]) -> (i32, String, String) {
    let out = skyclock().args(args).output().expect("run skyclock");
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

#[test]
fn timing_residuals_json_is_summary_of_oc_analysis_and_needs_no_source_for_bjd_tdb() {
    let d = std::env::temp_dir().join(format!("skyclock_json_timing_{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    let (epoch, period, quadratic) = (2_455_000.25, 0.8123457, 3.0e-10);
    let mut rng = SeededRng::new(4242);
    let mut text = String::from("time,error_d\n");
    for k in 0..120 {
        let e = (k * 97) as f64;
        let t = epoch + e * period + quadratic * e * e + 0.0002 * rng.normal();
        text.push_str(&format!("{t:.7},0.0002\n"));
    }
    let input = d.join("minima.csv");
    std::fs::write(&input, text).unwrap();
    let output = d.join("oc.csv");
    let summary = d.join("oc.json");
    let (code, stdout, stderr) = run(&[
        "timing-residuals",
        "--input",
        input.to_str().unwrap(),
        "--time-column",
        "time",
        "--clock",
        "bjd_tdb",
        "--error-column",
        "error_d",
        "--epoch-bjd-tdb",
        "2455000.25",
        "--period-d",
        "0.8123457",
        "--models",
        "linear,quadratic",
        "--bootstrap",
        "20",
        "--output",
        output.to_str().unwrap(),
        "--summary",
        summary.to_str().unwrap(),
        "--json",
    ]);
    assert_eq!(code, 0, "BJD_TDB timings without a source must be accepted: {stderr}");
    let typed = json::assert_summary_round_trip::<OcAnalysis>(&stdout);
    assert_eq!(std::fs::read_to_string(&summary).unwrap().trim(), stdout.trim());
    let r = typed.result;
    assert_eq!(r.timings, 120);
    assert_eq!(r.models.len(), 2);
    let q = r.models[1].parameters.iter().find(|p| p.name == "quadratic_d").expect("quadratic_d");
    let sigma = q.sigma_covariance.unwrap();
    assert!((q.value - quadratic).abs() < 5.0 * sigma, "{} ± {sigma}", q.value);
    assert!(r.models[1].bootstrap.as_ref().is_some_and(|b| b.resamples == 20));
    // One verdict per comparison, naming its criteria; a p-value below the floor is a bound.
    assert_eq!(r.verdicts.len(), 1);
    let v = &r.verdicts[0];
    assert!(v.contains("F-test") && v.contains("ΔBIC"), "{v}");
    assert!(!v.contains("0.00e0"), "{v}");
    if r.comparisons[0].p_value < 1e-16 {
        assert!(v.contains("p < 1e-16"), "{v}");
    }
}
