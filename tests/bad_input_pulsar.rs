//! The bad-input catalogue (see `tests/common/catalogue.rs`) for the pulsar commands —
//! fit-timing, pulse-profile, event-arrival-times, search-pulsations — and for
//! barycentre-events; then fit-timing's model-file mistakes, reported by file, line and
//! key. Tables: the invented demo pulsar (`datasets/veyra_beacon_*`).

#[path = "common/catalogue.rs"]
mod catalogue;
#[path = "common/cli.rs"]
mod cli;

use catalogue::Expect::{Accepted, Refused, SameAsClean};
use catalogue::{Catalogue, Expect, dataset, folder, owned, run_catalogue};

/// An MJD of 1800-01-01 (UTC is not defined before 1960; a BMJD_TDB of 1800 lies far
/// outside the model's validity).
const MJD_1800: &str = "-21502.5";

fn toas_catalogue() -> Catalogue {
    Catalogue {
        name: "ps_fit",
        table: "toas.csv",
        clean: dataset("veyra_beacon_radio_toas.csv"),
        time_column: "time",
        value_column: Some("error_us"),
        out_of_span: MJD_1800,
        other_files: vec![
            ("pulsar.toml", dataset("veyra_beacon.toml")),
            ("model.toml", dataset("veyra_beacon_start_model.toml")),
        ],
        args: owned(&[
            "fit-timing",
            "--input",
            "toas.csv",
            "--clock",
            "mjd_utc",
            "--sites-file",
            "pulsar.toml",
            "--site",
            "Harrow Moss Radio Array",
            "--source-file",
            "pulsar.toml",
            "--model",
            "model.toml",
            "--output",
            "o.csv",
            "--model-output",
            "om.toml",
        ]),
        output: "o.csv",
    }
}

#[test]
fn fit_timing_catalogue() {
    run_catalogue(
        &toas_catalogue(),
        &[
            ("empty", Refused(&["no data rows"])),
            ("header_only", Refused(&["no data rows"])),
            ("missing_column", Refused(&["column 'time' is missing"])),
            ("text_time", Refused(&["row 5", "column 'time'", "'soon'"])),
            ("text_value", Refused(&["row 6", "column 'error_us'", "'bright'"])),
            ("nan_time", Refused(&["row 7", "column 'time'", "NaN"])),
            ("inf_value", Refused(&["row 8", "column 'error_us'", "infinite"])),
            ("inf_time", Refused(&["row 8", "column 'time'"])),
            // Arrival times are fitted together: their order does not matter.
            ("unsorted", Accepted(&["fitted 6 parameters to 110 arrival times"])),
            ("duplicate", Refused(&["model.toml", "arrival times 11 and 12 are duplicates"])),
            ("one_row", Refused(&["1 arrival times cannot determine 6 parameters"])),
            ("two_rows", Refused(&["2 arrival times cannot determine 6 parameters"])),
            ("far_future", Refused(&["row 9", "column 'time'", "outside the times accepted"])),
            ("out_of_span", Refused(&["row 9", "column 'time'", "UTC before 1960"])),
            ("bom", SameAsClean),
            ("crlf", SameAsClean),
            ("semicolons", Refused(&["';' (semicolon)"])),
            ("ragged_long", Refused(&["row 13", "5 field(s)", "4 columns"])),
            ("ragged_short", Refused(&["row 14", "3 field(s)", "4 columns"])),
        ],
    );
}

/// The photon-event catalogue of `command` (events already BMJD_TDB).
fn events_catalogue(name: &'static str, command: &[&str], extra_files: Vec<(&'static str, String)>) -> Catalogue {
    let mut args = owned(command);
    args.extend(owned(&[
        "--input",
        "xev.csv",
        "--clock",
        "bmjd_tdb",
        "--source-file",
        "pulsar.toml",
        "--output",
        "o.csv",
    ]));
    let mut other_files =
        vec![("pulsar.toml", dataset("veyra_beacon.toml")), ("model.toml", dataset("veyra_beacon_start_model.toml"))];
    other_files.extend(extra_files);
    Catalogue {
        name,
        table: "xev.csv",
        clean: dataset("veyra_beacon_xray_events.csv"),
        time_column: "time",
        value_column: None,
        out_of_span: MJD_1800,
        other_files,
        args,
        output: "o.csv",
    }
}

/// The cases the photon-event commands share (a one-column table: semicolons change
/// nothing, and a short row cannot be written).
fn event_cases(own: Vec<(&'static str, Expect)>) -> Vec<(&'static str, Expect)> {
    let mut v = vec![
        ("empty", Refused(&["no data rows"])),
        ("header_only", Refused(&["no data rows"])),
        ("missing_column", Refused(&["column 'time' is missing"])),
        ("text_time", Refused(&["row 5", "column 'time'", "'soon'"])),
        ("nan_time", Refused(&["row 7", "column 'time'", "NaN"])),
        ("inf_time", Refused(&["row 8", "column 'time'"])),
        ("far_future", Refused(&["row 9", "column 'time'", "outside the times accepted"])),
        ("bom", SameAsClean),
        ("crlf", SameAsClean),
        ("semicolons", SameAsClean),
        ("ragged_long", Refused(&["row 13", "2 field(s)", "1 columns"])),
    ];
    v.extend(own);
    v
}

const PROFILE: &[&str] = &["pulse-profile", "--model", "model.toml", "--bins", "32", "--harmonics", "3"];

#[test]
fn pulse_profile_catalogue() {
    let c = events_catalogue("ps_profile", PROFILE, vec![]);
    run_catalogue(
        &c,
        &event_cases(vec![
            ("unsorted", Refused(&["row 11", "column 'time'", "must be sorted by time"])),
            ("duplicate", Accepted(&["6000 events folded", "1 event(s) have the same barycentric time", "row 12"])),
            ("one_row", Refused(&["1 photon(s)", "at least 10 photons"])),
            ("two_rows", Refused(&["2 photon(s)", "at least 10 photons"])),
            ("out_of_span", Refused(&["row 9", "outside the model's validity of ±1100.0 days"])),
        ]),
    );
}

#[test]
fn event_arrival_times_catalogue() {
    // The template comes from a pulse-profile run on the clean events.
    let d = folder(
        "ps_template",
        &[
            ("xev.csv", dataset("veyra_beacon_xray_events.csv")),
            ("pulsar.toml", dataset("veyra_beacon.toml")),
            ("model.toml", dataset("veyra_beacon_start_model.toml")),
        ],
    );
    let mut args = owned(PROFILE);
    args.extend(owned(&[
        "--input",
        "xev.csv",
        "--clock",
        "bmjd_tdb",
        "--source-file",
        "pulsar.toml",
        "--output",
        "p.csv",
        "--template-output",
        "tpl.json",
    ]));
    cli::stdout_of(&cli::skyclock().current_dir(&d).args(&args).output().unwrap());
    let template = std::fs::read_to_string(d.join("tpl.json")).unwrap();
    let c = events_catalogue(
        "ps_arrivals",
        &[
            "event-arrival-times",
            "--model",
            "model.toml",
            "--template",
            "tpl.json",
            "--segment-duration-s",
            "2000",
            "--min-photons",
            "100",
        ],
        vec![("tpl.json", template)],
    );
    run_catalogue(
        &c,
        &event_cases(vec![
            ("unsorted", Refused(&["row 11", "column 'time'", "must be sorted by time"])),
            ("duplicate", Accepted(&["arrival times from 6000 events", "same barycentric time", "row 12"])),
            ("one_row", Refused(&["1 photons, fewer than the minimum of 100"])),
            ("two_rows", Refused(&["2 photons, fewer than the minimum of 100"])),
            ("out_of_span", Refused(&["row 9", "outside the model's validity"])),
        ]),
    );
}

#[test]
fn search_pulsations_catalogue() {
    let c = events_catalogue(
        "ps_search",
        &["search-pulsations", "--min-freq-hz", "46.38", "--max-freq-hz", "46.39"],
        vec![],
    );
    run_catalogue(
        &c,
        &event_cases(vec![
            ("unsorted", Refused(&["row 11", "column 'time'", "sort the events by time"])),
            // A repeated photon is a photon: the search runs (the profile commands warn).
            ("duplicate", Accepted(&["best trial 46.388"])),
            ("one_row", Refused(&["1 photon(s)", "at least 10 photons"])),
            ("two_rows", Refused(&["2 photon(s)", "at least 10 photons"])),
            ("out_of_span", Refused(&["row 9", "earlier than the one before it"])),
        ]),
    );
}

#[test]
fn barycentre_events_catalogue() {
    let mut text = String::from("time\n");
    for i in 0..400 {
        text.push_str(&format!("{:.6}\n", i as f64 * 13.7 + 0.25));
    }
    let c = Catalogue {
        name: "ps_bary_events",
        table: "ev.csv",
        clean: text,
        time_column: "time",
        value_column: None,
        out_of_span: "1e12",
        other_files: vec![],
        args: owned(&[
            "barycentre-events",
            "--input",
            "ev.csv",
            "--time-column",
            "time",
            "--time-zero",
            "2460420.5",
            "--ra",
            "10",
            "--dec",
            "20",
            "--output",
            "o.csv",
        ]),
        output: "o.csv",
    };
    // Events are streamed row for row: order and repeats are kept as given, any number of
    // events (one or more) is corrected, and times within ±1e11 s of the time zero are
    // accepted (1e9 s is 32 years).
    run_catalogue(
        &c,
        &[
            ("empty", Refused(&["the file is empty"])),
            ("header_only", Refused(&["no data rows"])),
            ("missing_column", Refused(&["column 'time' is missing"])),
            ("text_time", Refused(&["row 5", "column 'time'", "'soon' is not a number of seconds"])),
            ("nan_time", Refused(&["row 7", "column 'time'", "'nan'"])),
            ("inf_time", Refused(&["row 8", "column 'time'", "'-inf'"])),
            ("unsorted", Accepted(&["corrected 400 events"])),
            ("duplicate", Accepted(&["corrected 400 events"])),
            ("one_row", Accepted(&["corrected 1 event"])),
            ("two_rows", Accepted(&["corrected 2 events"])),
            ("far_future", Accepted(&["corrected 400 events"])),
            ("out_of_span", Refused(&["row 9", "column 'time'", "outside the valid range ±1e11 s"])),
            ("bom", SameAsClean),
            ("crlf", SameAsClean),
            ("semicolons", SameAsClean),
            ("ragged_long", Refused(&["row 13", "2 fields", "1 columns"])),
        ],
    );
}

/// The demo's start model with `edits` (old text → new text) applied.
fn edited_model(edits: &[(&str, &str)]) -> String {
    let mut m = dataset("veyra_beacon_start_model.toml");
    for (old, new) in edits {
        assert!(m.contains(old), "the start model lacks {old}");
        m = m.replacen(old, new, 1);
    }
    m
}

#[test]
fn fit_timing_names_the_model_file_key_and_line_of_each_mistake() {
    let c = toas_catalogue();
    let cases: Vec<(&str, String, Vec<&str>)> = vec![
        (
            "unknown_key",
            format!("spin_rate = 3\n{}", edited_model(&[])),
            vec!["line 1", "key 'spin_rate'", "unknown key", "freq_hz"],
        ),
        (
            "wrong_type",
            edited_model(&[("freq_hz = 46.382917304", "freq_hz = \"fast\"")]),
            vec!["line 5", "key 'freq_hz'", "expected a number"],
        ),
        (
            "whole_number",
            edited_model(&[("epoch_mjd_day_tdb = 60400", "epoch_mjd_day_tdb = 60400.5")]),
            vec!["line 2", "key 'epoch_mjd_day_tdb'", "whole number"],
        ),
        ("missing_key", edited_model(&[("freq_hz = 46.382917304\n", "")]), vec!["key 'freq_hz'", "required"]),
        (
            "missing_orbit_key",
            edited_model(&[("periastron_time_s = 35020.0\n", "")]),
            vec!["line 23", "key 'orbit.periastron_time_s'", "required"],
        ),
        (
            "zero_frequency",
            edited_model(&[("freq_hz = 46.382917304", "freq_hz = 0")]),
            vec!["line 5", "key 'freq_hz'", "> 0 Hz"],
        ),
        (
            "negative_frequency",
            edited_model(&[("freq_hz = 46.382917304", "freq_hz = -46.38")]),
            vec!["line 5", "key 'freq_hz'", "-46.38"],
        ),
        ("nan_frequency", edited_model(&[("freq_hz = 46.382917304", "freq_hz = nan")]), vec!["key 'freq_hz'", "NaN"]),
        (
            "eccentricity_out_of_range",
            edited_model(&[("eccentricity = 0.08", "eccentricity = 1.5")]),
            vec!["line 26", "key 'orbit.eccentricity'", "in [0, 1)"],
        ),
        (
            "orbital_period_zero",
            edited_model(&[("orbital_period_d = 1.7332", "orbital_period_d = 0")]),
            vec!["line 24", "key 'orbit.orbital_period_d'", "> 0"],
        ),
        (
            "unknown_fit_name",
            edited_model(&[("\"freq_hz\",", "\"freq_dot\",")]),
            vec!["line 13", "key 'fit'", "unknown parameter 'freq_dot'", "freq_deriv_hz_per_s"],
        ),
        ("syntax", edited_model(&[("freq_hz = 46.382917304", "freq_hz = 46.38.29")]), vec!["line 5", "key 'freq_hz'"]),
        (
            // ν̇ = −1e-5 Hz/s stops a 46 Hz spin within 54 days of the epoch: the frequency is
            // negative at later arrival times (not a lost phase connection).
            "derivative_makes_frequency_negative",
            edited_model(&[("freq_deriv_hz_per_s = -0.0000000000000208", "freq_deriv_hz_per_s = -1e-5")]),
            vec!["key 'freq_deriv_hz_per_s'", "not positive", "arrival time"],
        ),
        (
            // An epoch 640 000 days from the data: refused with the accepted range.
            "epoch_far_from_the_data",
            edited_model(&[("epoch_mjd_day_tdb = 60400", "epoch_mjd_day_tdb = 700000")]),
            vec!["toas.csv", "row 1", "outside the model's validity of ±7305.0 days", "MJD 692695.0 … 707305.0"],
        ),
    ];
    for (case, model, expect) in cases {
        let mut files = c.other_files.clone();
        files.retain(|(n, _)| *n != "model.toml");
        files.push(("model.toml", model));
        files.push(("toas.csv", c.clean.clone()));
        let d = folder(&format!("ps_model_{case}"), &files);
        let before = catalogue::snapshot(&d);
        let out = cli::skyclock().current_dir(&d).args(&c.args).output().unwrap();
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(!out.status.success(), "{case}: expected a refusal");
        assert!(!err.contains("panicked"), "{case}: {err}");
        assert!(
            !err.contains("phase connection") && !err.contains("condition number"),
            "{case}: reported as a fit failure: {err}"
        );
        if case != "epoch_far_from_the_data" {
            assert!(err.contains("model.toml"), "{case}: the model file is not named: {err}");
        }
        for e in expect {
            assert!(err.contains(e), "{case}: stderr lacks '{e}':\n{err}");
        }
        assert_eq!(before, catalogue::snapshot(&d), "{case}: the folder changed");
    }
}

#[test]
fn fit_timing_validity_can_be_widened() {
    // An epoch 1000 days after the data: refused with --model-validity-days 100, read
    // with the default validity (20 years).
    let c = toas_catalogue();
    let mut files = c.other_files.clone();
    files.retain(|(n, _)| *n != "model.toml");
    files.push(("model.toml", edited_model(&[("epoch_mjd_day_tdb = 60400", "epoch_mjd_day_tdb = 61400")])));
    files.push(("toas.csv", c.clean.clone()));
    let d = folder("ps_validity", &files);
    let mut args = c.args.clone();
    args.extend(owned(&["--model-validity-days", "100"]));
    let out = cli::skyclock().current_dir(&d).args(&args).output().unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(!out.status.success() && err.contains("outside the model's validity of ±100.0 days"), "{err}");
    args.truncate(args.len() - 2);
    let out = cli::skyclock().current_dir(&d).args(&args).output().unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(!err.contains("validity"), "an epoch 1000 d from the data is inside the default validity: {err}");
}
