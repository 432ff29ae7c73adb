//! The bad-input catalogue (see `tests/common/catalogue.rs`) for the commands that read a
//! light curve: find-periods, fold-curve, extract-frequencies, time-events, time-transits
//! and survey-batch. Tables: the first rows of the invented demo photometry
//! (`datasets/kx_inventa_photometry.csv`, JD UTC at an invented site;
//! `datasets/maren_vale_transits_photometry.csv`, BJD_TDB) and an invented survey table.

#[path = "common/catalogue.rs"]
mod catalogue;
#[path = "common/cli.rs"]
mod cli;

use catalogue::Expect::{Accepted, Refused, SameAsClean};
use catalogue::{Catalogue, Expect, dataset, dataset_head, owned, run_catalogue};

/// A JD of 1800-01-01 (UTC is not defined before 1960).
const JD_1800: &str = "2378496.5";

/// The photometry catalogue of one light-curve command: `command` and its own options.
fn photometry(name: &'static str, command: &str, own: &[&str]) -> Catalogue {
    let mut args = owned(&[
        command,
        "--input",
        "phot.csv",
        "--time-column",
        "time",
        "--value-column",
        "mag",
        "--error-column",
        "mag_err",
        "--clock",
        "jd_utc",
        "--sites-file",
        "sites.toml",
        "--site",
        "Ridge Hollow Observatory",
        "--source-file",
        "sites.toml",
        "--output",
        "o.csv",
    ]);
    args.extend(owned(own));
    Catalogue {
        name,
        table: "phot.csv",
        clean: dataset_head("kx_inventa_photometry.csv", 1200),
        time_column: "time",
        value_column: Some("mag"),
        out_of_span: JD_1800,
        other_files: vec![("sites.toml", dataset("kx_inventa_sites.toml"))],
        args,
        output: "o.csv",
    }
}

/// The cases every light-curve command shares (times carried from JD UTC at a site), with
/// the refusal of one and two rows given by `too_few`.
fn photometry_cases(too_few: &'static [&'static str]) -> Vec<(&'static str, Expect)> {
    vec![
        ("empty", Refused(&["no data rows"])),
        ("header_only", Refused(&["no data rows"])),
        ("missing_column", Refused(&["column 'time' is missing", "tyme"])),
        ("text_time", Refused(&["row 5", "column 'time'", "'soon'"])),
        ("text_value", Refused(&["row 6", "column 'mag'", "'bright' is not a number"])),
        ("nan_time", Refused(&["row 7", "column 'time'", "NaN"])),
        ("inf_value", Refused(&["row 8", "column 'mag'", "infinite"])),
        ("inf_time", Refused(&["row 8", "column 'time'", "-inf"])),
        ("unsorted", Refused(&["row 11", "column 'time'", "sort"])),
        ("duplicate", Refused(&["row 12", "column 'time'", "repeats row 11"])),
        ("one_row", Refused(too_few)),
        ("two_rows", Refused(too_few)),
        ("far_future", Refused(&["row 9", "column 'time'", "outside the times accepted"])),
        ("out_of_span", Refused(&["row 9", "column 'time'", "UTC before 1960"])),
        ("bom", SameAsClean),
        ("crlf", SameAsClean),
        ("semicolons", Refused(&["';' (semicolon)"])),
        ("ragged_long", Refused(&["row 13", "4 field(s)", "3 columns"])),
        ("ragged_short", Refused(&["row 14", "2 field(s)", "3 columns"])),
    ]
}

#[test]
fn find_periods_catalogue() {
    let c = photometry("lc_find", "find-periods", &["--max-freq-per-day", "5"]);
    run_catalogue(&c, &photometry_cases(&["a period search needs at least 3 usable points"]));
}

#[test]
fn fold_curve_catalogue() {
    let c = photometry("lc_fold", "fold-curve", &["--period-d", "0.83712345", "--epoch-bjd-tdb", "2459000.3456789"]);
    run_catalogue(&c, &photometry_cases(&["folding the light curve needs at least 3 usable points"]));
}

#[test]
fn extract_frequencies_catalogue() {
    let c = photometry("lc_extract", "extract-frequencies", &["--max-freq-per-day", "10", "--max-frequencies", "2"]);
    run_catalogue(&c, &photometry_cases(&["needs at least 3 usable points"]));
}

#[test]
fn time_events_catalogue() {
    let c = photometry(
        "lc_events",
        "time-events",
        &["--period-d", "0.83712345", "--epoch-bjd-tdb", "2459000.3456789", "--half-width-phase", "0.06"],
    );
    run_catalogue(
        &c,
        &photometry_cases(&["timing events (--min-points", "needs at least", "usable points, the file has"]),
    );
}

#[test]
fn time_transits_catalogue() {
    let args = owned(&[
        "time-transits",
        "--input",
        "transit.csv",
        "--time-column",
        "bjd_tdb",
        "--value-column",
        "flux",
        "--error-column",
        "flux_err",
        "--clock",
        "bjd_tdb",
        "--epoch-bjd-tdb",
        "2460612.38127",
        "--period-d",
        "3.7342196",
        "--radius-ratio",
        "0.105",
        "--semi-major-axis-stellar-radii",
        "10.8",
        "--impact-parameter",
        "0.32",
        "--limb-darkening",
        "0.44,0.21",
        "--output",
        "o.csv",
    ]);
    let c = Catalogue {
        name: "lc_transits",
        table: "transit.csv",
        clean: dataset_head("maren_vale_transits_photometry.csv", 1500),
        time_column: "bjd_tdb",
        value_column: Some("flux"),
        out_of_span: JD_1800,
        other_files: vec![],
        args,
        output: "o.csv",
    };
    let too_few: &[&str] = &["timing transits (--min-points", "usable points, the file has"];
    run_catalogue(
        &c,
        &[
            ("empty", Refused(&["no data rows"])),
            ("header_only", Refused(&["no data rows"])),
            ("missing_column", Refused(&["column 'bjd_tdb' is missing"])),
            ("text_time", Refused(&["row 5", "column 'bjd_tdb'", "'soon'"])),
            ("text_value", Refused(&["row 6", "column 'flux'", "'bright'"])),
            // Times already barycentric: an empty or NaN time drops the row (counted).
            ("nan_time", Accepted(&["timed 8 transits"])),
            ("inf_value", Refused(&["row 8", "column 'flux'", "infinite"])),
            ("inf_time", Refused(&["row 8", "column 'bjd_tdb'"])),
            ("unsorted", Refused(&["row 11", "sort"])),
            ("duplicate", Refused(&["row 12", "repeats row 11"])),
            ("one_row", Refused(too_few)),
            ("two_rows", Refused(too_few)),
            ("far_future", Refused(&["row 9", "outside the times accepted"])),
            // A BJD_TDB of 1800 needs no ephemeris; it breaks the time order.
            ("out_of_span", Refused(&["row 9", "time goes backwards"])),
            ("bom", SameAsClean),
            ("crlf", SameAsClean),
            ("semicolons", Refused(&["';' (semicolon)"])),
            ("ragged_long", Refused(&["row 13", "field(s)", "after the last column"])),
            ("ragged_short", Refused(&["row 14", "field(s)"])),
        ],
    );
}

/// An invented survey: three sources of 150 rows each (BJD_TDB, magnitudes, sinusoids).
fn survey_table() -> String {
    let mut s = String::from("source,bjd_tdb,mag,mag_err\n");
    for (k, (name, period)) in [("Alder-1", 0.61), ("Birch-2", 1.37), ("Cedar-3", 0.29)].iter().enumerate() {
        for i in 0..150 {
            let t = 2460100.0 + i as f64 * 0.173 + 0.05 * ((i * 7 + k * 3) % 11) as f64 / 11.0;
            let m = 12.0 + 0.2 * (std::f64::consts::TAU * t / period).sin();
            s.push_str(&format!("{name},{t:.6},{m:.5},0.01\n"));
        }
    }
    s
}

#[test]
fn survey_batch_catalogue() {
    let args = owned(&[
        "survey-batch",
        "--input",
        "survey.csv",
        "--source-column",
        "source",
        "--time-column",
        "bjd_tdb",
        "--value-column",
        "mag",
        "--error-column",
        "mag_err",
        "--max-freq-per-day",
        "5",
        "--peaks",
        "1",
        "--output",
        "o.csv",
    ]);
    let c = Catalogue {
        name: "survey",
        table: "survey.csv",
        clean: survey_table(),
        time_column: "bjd_tdb",
        value_column: Some("mag"),
        out_of_span: JD_1800,
        other_files: vec![],
        args,
        output: "o.csv",
    };
    // A bad row skips its source (status and message in the output, with file, row and
    // column) and the batch goes on: the documented result of survey-batch.
    run_catalogue(
        &c,
        &[
            ("empty", Refused(&["no data rows"])),
            ("header_only", Refused(&["no data rows"])),
            ("missing_column", Refused(&["column 'bjd_tdb' is missing"])),
            ("text_time", Accepted(&["2 searched, 1 skipped", "survey.csv, row 5, column 'bjd_tdb'"])),
            ("text_value", Accepted(&["2 searched, 1 skipped", "survey.csv, row 6, column 'mag'"])),
            ("nan_time", Accepted(&["3 sources (3 searched, 0 skipped)"])),
            ("inf_value", Accepted(&["1 skipped", "row 8, column 'mag'", "infinite"])),
            ("inf_time", Accepted(&["1 skipped", "row 8, column 'bjd_tdb'"])),
            ("unsorted", Accepted(&["1 skipped", "row 11, column 'bjd_tdb'", "sort"])),
            ("duplicate", Accepted(&["1 skipped", "row 12, column 'bjd_tdb'", "repeats row 11"])),
            ("one_row", Accepted(&["1 source (0 searched, 1 skipped) from 1 row "])),
            ("two_rows", Accepted(&["1 source (0 searched, 1 skipped) from 2 rows"])),
            ("far_future", Accepted(&["1 skipped", "row 9, column 'bjd_tdb'", "outside the times accepted"])),
            ("out_of_span", Accepted(&["1 skipped", "row 9, column 'bjd_tdb'"])),
            ("bom", SameAsClean),
            ("crlf", SameAsClean),
            ("semicolons", Refused(&["';' (semicolon)"])),
            ("ragged_long", Refused(&["row 13", "field(s)", "after the last column"])),
            ("ragged_short", Refused(&["row 14", "field(s)"])),
        ],
    );
}
