//! `skyclock barycentre`: correct a table of arrival times to BJD_TDB.

use std::path::PathBuf;

use anyhow::Result;
use clap::Args as ClapArgs;

use super::common::{ObserverArgs, ReferenceDataArgs, SourceArgs, write_text};
use skyclock::arrival::table::TableRequest;
use skyclock::arrival::{
    CorrectionPath, DEFAULT_BLOCK_ROWS, DelayOptions, barycentre_table_along, barycentre_text_table_in_blocks,
};
use skyclock::table::{Provenance, Summary, TableFormat, read_table, write_table};

const EXAMPLE: &str = "Example:
  skyclock barycentre --input minima.csv --time-column time --clock jd_utc \\
      --sites-file sites.toml --site-column observatory --source-file star.toml \\
      --output minima_bjd.csv

  Adds bjd_tdb (JD text, 14 decimals), bjd_tdb_jd1/jd2 (two-part), observer_tdb and one
  column per delay term (clock_to_tt_s, einstein_delay_s, roemer_delay_s,
  curvature_delay_s, shapiro_sun_delay_s, shapiro_planets_delay_s, heliocentric_removed_s,
  total_correction_s, input_clock). Clock labels: jd_utc, mjd_tt, rjd_utc, iso_utc, hjd_utc (legacy
  heliocentric, repaired), bjd_tdb (already barycentric), ...";

/// Arguments of `skyclock barycentre`.
#[derive(Debug, ClapArgs)]
#[command(after_help = EXAMPLE)]
pub struct Args {
    /// Input table (.csv, .tsv or .parquet).
    #[arg(long, value_name = "FILE")]
    pub input: PathBuf,
    /// Column holding the times.
    #[arg(long, value_name = "COLUMN")]
    pub time_column: String,
    /// Clock of all times: <kind>_<scale>, e.g. jd_utc, mjd_tt, hjd_utc, bjd_tdb, iso_utc.
    #[arg(long, value_name = "LABEL")]
    pub clock: Option<String>,
    /// Column holding a clock label per row (for tables in mixed clocks).
    #[arg(long, value_name = "COLUMN")]
    pub clock_column: Option<String>,
    #[command(flatten)]
    pub observer: ObserverArgs,
    #[command(flatten)]
    pub source: SourceArgs,
    #[command(flatten)]
    pub reference_data: ReferenceDataArgs,
    /// Leave out the Sun's Shapiro delay.
    #[arg(long)]
    pub without_solar_shapiro: bool,
    /// Add the Shapiro delays of Jupiter and Saturn.
    #[arg(long)]
    pub with_planet_shapiro: bool,
    /// Correct every row on its own instead of interpolating dense rows between exactly
    /// corrected nodes (the two agree to ≤ 1 ns; this is slower, for audits).
    #[arg(long)]
    pub exact_per_row: bool,
    /// Rows read, corrected and written at a time when both tables are CSV/TSV (memory
    /// grows with it; the output does not depend on it).
    #[arg(long, value_name = "ROWS", default_value_t = DEFAULT_BLOCK_ROWS)]
    pub block_rows: usize,
    /// Output table (.csv, .tsv or .parquet); a CSV gets a .provenance.json beside it.
    #[arg(long, value_name = "FILE")]
    pub output: PathBuf,
    /// Write the JSON summary (the text --json prints) to FILE.
    #[arg(long, value_name = "FILE")]
    pub summary: Option<PathBuf>,
    /// Print the JSON summary on stdout instead of the human-readable lines.
    #[arg(long)]
    pub json: bool,
    /// Print nothing but warnings and errors (no progress display, no result lines).
    #[arg(long)]
    pub quiet: bool,
}

/// Runs the command.
pub fn run(a: Args) -> Result<()> {
    let clock = super::common::clock_choice(&a.clock, &a.clock_column, "jd_utc")?;
    let description = a.observer.description()?;
    let source = a.source.load(description.as_ref())?;
    let barycentric = clock.is_some_and(|c| c.reference != skyclock::arrival::ReferencePoint::Observer);
    let observer = a.observer.observer_spec_noting(description.as_ref(), barycentric, a.quiet)?;
    let reference = a.reference_data.load()?;
    let delays = DelayOptions { shapiro_sun: !a.without_solar_shapiro, shapiro_planets: a.with_planet_shapiro };
    let request =
        TableRequest { time_column: a.time_column.clone(), clock, clock_column: a.clock_column.clone(), observer };
    if a.block_rows == 0 {
        anyhow::bail!("--block-rows must be at least 1");
    }
    let file = a.input.display().to_string();
    let path = if a.exact_per_row { CorrectionPath::ExactEveryRow } else { CorrectionPath::Automatic };
    let names = reference.names();
    let provenance = Provenance::new(&std::env::args().collect::<Vec<_>>().join(" "))
        .with("stage", "barycentre")
        .with("input", file.clone())
        .with("ephemeris", names.ephemeris.clone())
        .with("leap_seconds", names.leap_seconds.clone())
        .with("earth_orientation", names.earth_orientation.clone())
        .with("source", serde_json::to_string(&source).unwrap_or_default())
        .with("delays", delays.describe());
    let text = |p: &std::path::Path| matches!(TableFormat::from_path(p), Ok(TableFormat::Csv | TableFormat::Tsv));
    let result = if text(&a.input) && text(&a.output) {
        // Text in, text out: streamed block by block (the same bytes as the whole table).
        barycentre_text_table_in_blocks(
            &a.input,
            &a.output,
            &request,
            &reference,
            &source,
            delays,
            path,
            a.block_rows,
            &provenance,
        )?
    } else {
        let df = read_table(&a.input, &request.text_columns())?;
        let (mut out, result) = barycentre_table_along(&df, &file, &request, &reference, &source, delays, path)?;
        drop(df);
        write_table(&mut out, &a.output, &provenance, &[a.input.as_path()])?;
        result
    };
    for note in &result.notes {
        eprintln!("{note}");
    }
    super::common::print_time_warnings(&result.correction.warnings);
    let summary = Summary::new(result, provenance, vec![file], vec![a.output.display().to_string()]);
    if let Some(path) = &a.summary {
        write_text(path, &summary.to_json()?, &[a.input.as_path(), a.output.as_path()])?;
    }
    if a.json {
        println!("{}", summary.to_json()?);
    } else if !a.quiet {
        let r = &summary.result;
        println!(
            "corrected {} to BJD_TDB for {} → {}\n  total correction {:.6} … {:.6} s; ephemeris: {}\n  \
             {} interpolated between exactly corrected nodes (≤ 1 ns from the exact correction), {} corrected one by one \
             ({} of them with precession–nutation and TDB − TT from daily nodes)",
            super::common::counted(r.correction.rows, "row", "rows"),
            source.name,
            a.output.display(),
            r.correction.min_total_correction_s,
            r.correction.max_total_correction_s,
            r.reference.ephemeris,
            super::common::counted(r.correction.rows_interpolated, "row", "rows"),
            r.correction.rows - r.correction.rows_interpolated,
            r.correction.rows_with_interpolated_slow_terms,
        );
    }
    Ok(())
}
