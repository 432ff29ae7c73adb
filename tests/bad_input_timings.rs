//! The bad-input catalogue (see `tests/common/catalogue.rs`) for the commands that read a
//! table of times with a clock label and a site per row: barycentre, timing-residuals and
//! measure-light-time. Tables: the first rows of the invented demo minima
//! (`datasets/kx_inventa_minima.csv`: JD/HJD/ISO UTC, BJD and MJD TT at three invented
//! sites).

#[path = "common/catalogue.rs"]
mod catalogue;
#[path = "common/cli.rs"]
mod cli;

use catalogue::Expect::{Accepted, Refused, SameAsClean};
use catalogue::{Catalogue, Expect, dataset, dataset_head, dataset_rows, owned, run_catalogue};

/// A JD of 1800-01-01 (UTC is not defined before 1960).
const JD_1800: &str = "2378496.5";

fn minima(name: &'static str, table: &'static str, clean: String, command: &[&str]) -> Catalogue {
    let mut args = owned(command);
    args.extend(owned(&[
        "--input",
        table,
        "--time-column",
        "time",
        "--clock-column",
        "clock",
        "--sites-file",
        "sites.toml",
        "--site-column",
        "site",
        "--source-file",
        "sites.toml",
        "--output",
        "o.csv",
    ]));
    Catalogue {
        name,
        table,
        clean,
        time_column: "time",
        value_column: Some("error_d"),
        out_of_span: JD_1800,
        other_files: vec![("sites.toml", dataset("kx_inventa_sites.toml"))],
        args,
        output: "o.csv",
    }
}

/// The cases the three commands share; `fits` gives the cases that differ between a
/// row-by-row correction and a fit of all rows.
fn shared(mut own: Vec<(&'static str, Expect)>) -> Vec<(&'static str, Expect)> {
    own.extend([
        ("empty", Refused(&["no data rows"])),
        ("header_only", Refused(&["no data rows"])),
        ("missing_column", Refused(&["column 'time' is missing", "tyme"])),
        ("text_time", Refused(&["row 5", "column 'time'", "'soon'"])),
        ("nan_time", Refused(&["row 7", "column 'time'", "NaN"])),
        ("inf_time", Refused(&["row 8", "column 'time'", "-inf"])),
        ("far_future", Refused(&["row 9", "column 'time'", "outside the times accepted"])),
        ("out_of_span", Refused(&["row 9", "column 'time'", "UTC before 1960"])),
        ("bom", SameAsClean),
        ("crlf", SameAsClean),
        ("semicolons", Refused(&["';' (semicolon)"])),
        ("ragged_long", Refused(&["row 13", "7 field(s)", "6 columns"])),
        ("ragged_short", Refused(&["row 14", "5 field(s)", "6 columns"])),
        ("unknown_clock_label", Refused(&["row 4", "column 'clock'", "'jd_martian' is not a clock label"])),
        ("unknown_site", Refused(&["row 3", "column 'site'", "unknown site 'Nowhere Hill'", "Kestrel Downs"])),
    ]);
    own
}

#[test]
fn barycentre_catalogue() {
    let c = minima("tm_barycentre", "minima.csv", dataset_head("kx_inventa_minima.csv", 40), &["barycentre"]);
    // Rows are corrected one by one: order, duplicates and columns the command does not
    // read (error_d is passed through as text) do not matter.
    run_catalogue(
        &c,
        &shared(vec![
            ("text_value", Accepted(&["corrected 40 rows", "bright"])),
            ("inf_value", Accepted(&["corrected 40 rows"])),
            ("unsorted", Accepted(&["corrected 40 rows"])),
            ("duplicate", Accepted(&["corrected 40 rows"])),
            ("one_row", Accepted(&["corrected 1 row"])),
            ("two_rows", Accepted(&["corrected 2 rows"])),
        ]),
    );
}

#[test]
fn timing_residuals_catalogue() {
    let c = minima(
        "tm_residuals",
        "minima.csv",
        dataset_head("kx_inventa_minima.csv", 40),
        &[
            "timing-residuals",
            "--error-column",
            "error_d",
            "--kind-column",
            "kind",
            "--epoch-bjd-tdb",
            "2459000.3456789",
            "--period-d",
            "0.83712345",
        ],
    );
    run_catalogue(
        &c,
        &shared(vec![
            ("text_value", Refused(&["row 6", "column 'error_d'", "'bright' is not a number"])),
            ("inf_value", Refused(&["row 8", "column 'error_d'", "infinite"])),
            // Timings are fitted together: their order does not matter.
            ("unsorted", Accepted(&["40 timings on cycles -10359 … -6181.5"])),
            ("duplicate", Refused(&["rows 11 and 12 hold the same primary timing"])),
            ("one_row", Refused(&["needs at least 3 timings, got 1"])),
            ("two_rows", Refused(&["needs at least 3 timings, got 2"])),
        ]),
    );
}

#[test]
fn measure_light_time_catalogue() {
    // Times as seen by the observer (JD UTC rows only: the light-time method refuses
    // heliocentric and barycentric clocks, as its own test checks).
    let clean = dataset_rows("kx_inventa_minima.csv", |l| l.contains(",jd_utc,"), 60);
    let c = minima(
        "tm_light_time",
        "lt.csv",
        clean,
        &[
            "measure-light-time",
            "--error-column",
            "error_d",
            "--kind-column",
            "kind",
            "--epoch-jd",
            "2459000.3456789",
            "--period-d",
            "0.83712345",
        ],
    );
    run_catalogue(
        &c,
        &shared(vec![
            ("text_value", Refused(&["row 6", "column 'error_d'", "'bright' is not a number"])),
            ("inf_value", Refused(&["row 8", "column 'error_d'", "infinite"])),
            ("unsorted", Accepted(&["60 timings"])),
            ("duplicate", Refused(&["rows 11 and 12 hold the same"])),
            ("one_row", Refused(&["needs at least 5 timings, got 1"])),
            ("two_rows", Refused(&["needs at least 5 timings, got 2"])),
        ]),
    );
}
