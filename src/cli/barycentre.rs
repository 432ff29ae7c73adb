//! `skyclock barycentre`: correct a table of arrival times to BJD_TDB.

use std::path::PathBuf;

use anyhow::Result;
use clap::Args as ClapArgs;

use super::common::{ObserverArgs, ReferenceDataArgs, SourceArgs, leap_second_warning};
use skyclock::arrival::table::{TableRequest, correct_table};
use skyclock::arrival::{BarycentricCorrector, DelayOptions};
use skyclock::table::{Provenance, read_table, write_table};

const EXAMPLE: &str = "Example:
  skyclock barycentre --input minima.csv --time-column time --clock jd_utc \\
      --sites-file sites.toml --site-column observatory --source-file star.toml \\
      --output minima_bjd.csv

  Adds bjd_tdb (JD text, 14 decimals), bjd_tdb_jd1/jd2 (two-part), observer_tdb and one
  column per delay term (clock_to_tt_s, einstein_delay_s, roemer_delay_s,
  curvature_delay_s, shapiro_sun_delay_s, shapiro_planets_delay_s, heliocentric_removed_s,
  total_correction_s). Clock labels: jd_utc, mjd_tt, rjd_utc, iso_utc, hjd_utc (legacy
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
    /// Output table (.csv, .tsv or .parquet); a CSV gets a .provenance.json beside it.
    #[arg(long, value_name = "FILE")]
    pub output: PathBuf,
    /// Print a machine-readable summary as JSON on stdout.
    #[arg(long)]
    pub json: bool,
    /// Print nothing but errors.
    #[arg(long)]
    pub quiet: bool,
}

/// Runs the command.
pub fn run(a: Args) -> Result<()> {
    let clock = super::common::clock_choice(&a.clock, &a.clock_column, "jd_utc")?;
    let description = a.observer.description()?;
    let source = a.source.load(description.as_ref())?;
    let observer = a.observer.observer_spec(description.as_ref())?;
    let reference = a.reference_data.load()?;
    let options = DelayOptions { shapiro_sun: !a.without_solar_shapiro, shapiro_planets: a.with_planet_shapiro };
    let corrector = BarycentricCorrector::new(
        reference.ephemeris.clone(),
        reference.converter.clone(),
        reference.orientation.clone(),
        source.clone(),
        options,
    );
    let request =
        TableRequest { time_column: a.time_column.clone(), clock, clock_column: a.clock_column.clone(), observer };
    let file = a.input.display().to_string();
    let df = read_table(&a.input, &request.text_columns())?;
    let (mut out, summary) = correct_table(&df, &file, &request, &corrector)?;
    let provenance = Provenance::new(&std::env::args().collect::<Vec<_>>().join(" "))
        .with("stage", "barycentre")
        .with("input", file.clone())
        .with("ephemeris", reference.ephemeris.name())
        .with("leap_seconds", reference.converter.leap_seconds().source())
        .with("earth_orientation", reference.orientation.describe())
        .with("source", serde_json::to_string(&source_summary(&source)).unwrap_or_default())
        .with("delays", format!("{options:?}"));
    write_table(&mut out, &a.output, &provenance, &[a.input.as_path()])?;
    let warning = leap_second_warning(
        summary.rows_beyond_leap_second_horizon,
        summary.max_days_beyond_leap_second_horizon,
        reference.converter.leap_seconds(),
    );
    if let Some(w) = &warning {
        eprintln!("{w}");
    }
    if a.json {
        let json = serde_json::json!({
            "output": a.output.display().to_string(),
            "summary": summary,
            "ephemeris": reference.ephemeris.name(),
            "leap_seconds": reference.converter.leap_seconds().source(),
            "earth_orientation": reference.orientation.describe(),
            "warnings": warning.into_iter().collect::<Vec<_>>(),
        });
        println!("{}", serde_json::to_string_pretty(&json)?);
    } else if !a.quiet {
        println!(
            "corrected {} rows to BJD_TDB for {} → {}\n  total correction {:.6} … {:.6} s; ephemeris: {}",
            summary.rows,
            source.name,
            a.output.display(),
            summary.min_total_correction_s,
            summary.max_total_correction_s,
            reference.ephemeris.name()
        );
    }
    Ok(())
}

fn source_summary(s: &skyclock::arrival::Source) -> serde_json::Value {
    serde_json::json!({
        "name": s.name,
        "ra_deg": s.ra_rad.to_degrees(),
        "dec_deg": s.dec_rad.to_degrees(),
        "proper_motion_ra_mas_per_yr": s.proper_motion_ra_mas_per_yr,
        "proper_motion_dec_mas_per_yr": s.proper_motion_dec_mas_per_yr,
        "parallax_mas": s.parallax_mas,
        "radial_velocity_km_per_s": s.radial_velocity_km_per_s,
    })
}
