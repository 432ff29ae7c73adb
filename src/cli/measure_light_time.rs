//! `skyclock measure-light-time`: from timings of a periodic source that were never carried
//! to the barycentre, fit the annual light-time term of the observer's orbit alongside the
//! ephemeris and report the light time per astronomical unit and the speed of light.

use skyclock::constants::SECONDS_PER_DAY;
use std::path::PathBuf;

use anyhow::{Context, Result, bail};
use clap::Args as ClapArgs;
use polars::prelude::{Column, DataFrame};

use super::timing_table::TimingTableArgs;
use skyclock::arrival::ReferencePoint;
use skyclock::arrival::table::ClockSpec;
use skyclock::oc::ReferenceEphemeris;
use skyclock::oc::light_time_method::{LIGHT_TIME_PER_AU_S, LightTimeOptions, UncorrectedTiming, measure_light_time};
use skyclock::table::{Provenance, float_column, text_column, write_table};
use skyclock::time::{Instant, TimeFormat, TimeScale, parse_time};

const EXAMPLE: &str = "Example (invented star, times written at the telescope, never corrected):
  skyclock measure-light-time --input raw_minima.csv --time-column time --clock jd_utc \\
      --error-column error_d --kind-column kind --ra 08:45:00.0 --dec +17:30:00 \\
      --site-coordinates=14.25,47.10,520 \\
      --epoch-jd 2459000.3145 --period-d 0.87654321 \\
      --output light_time_residuals.csv --summary light_time.json

  The times must be in an observer's clock (jd_*, mjd_*, rjd_*, iso_*): heliocentric or
  barycentric times have had the very term removed that this command measures and are
  refused. Every other correction (leap seconds, TT, TDB, the Shapiro terms) is applied;
  only the Rømer delay is left in and fitted as
      t = T0 + P·E [+ Q·E²] − A·(r·n)      (r·n: observer position towards the source, au)
  The light time per au A and c = au/A are printed with their 1σ; the expected values are
  499.004784 s and 299 792 458 m/s. The timings should cover at least several months.";

/// Arguments of `skyclock measure-light-time`.
#[derive(Debug, ClapArgs)]
#[command(after_help = EXAMPLE)]
pub struct Args {
    /// The timings: times in an observer's clock such as jd_utc, mjd_tt, iso_utc.
    #[command(flatten)]
    pub table: TimingTableArgs,
    /// Epoch of a primary event (cycle 0) as seen by the observer, a JD in the input clock's
    /// scale (the scale of --clock; TDB with --clock-column). An observed time of minimum is
    /// good enough: the fit refines it.
    #[arg(long, value_name = "JD")]
    pub epoch_jd: String,
    /// Period, days.
    #[arg(long, value_name = "DAYS")]
    pub period_d: f64,
    /// 1σ of the period, days (for the cycle-count ambiguity check).
    #[arg(long, value_name = "DAYS", default_value_t = 0.0)]
    pub period_sigma_d: f64,
    /// Fit a period change (quadratic term) as well.
    #[arg(long)]
    pub quadratic: bool,
    /// Keep going when the cycle count is ambiguous (a warning instead of an error).
    #[arg(long)]
    pub allow_ambiguous_cycles: bool,
    /// Output residual table (.csv, .tsv or .parquet).
    #[arg(long, value_name = "FILE")]
    pub output: PathBuf,
    /// JSON summary file.
    #[arg(long, value_name = "FILE")]
    pub summary: Option<PathBuf>,
    /// Print the JSON summary on stdout.
    #[arg(long)]
    pub json: bool,
    /// Print nothing but warnings and errors: no progress display, no notes, no result lines
    /// (--json still prints).
    #[arg(long)]
    pub quiet: bool,
}

/// Runs the command.
pub fn run(a: Args) -> Result<()> {
    let table = a.table.read("jd_utc", None)?;
    if let Some(spec) = &table.clock
        && spec.reference != ReferencePoint::Observer
    {
        bail!(
            "--clock: the light-time method needs times as seen by the observer (jd_utc, mjd_tt, iso_utc, …); \
             heliocentric and barycentric times have already had the light-time term removed"
        );
    }
    let (file, reference, rows) = (&table.file, &table.reference, &table.rows);
    if let Some(column) = &a.table.clock_column {
        let labels = text_column(&table.df, file, column)?;
        for (i, label) in labels.iter().enumerate() {
            let text = label.as_deref().unwrap_or("");
            if let Ok(spec) = ClockSpec::parse_label(text)
                && spec.reference != ReferencePoint::Observer
            {
                bail!(
                    "{file}, row {}, column '{column}': clock '{text}' is heliocentric or barycentric; the light-time method needs times as seen by the observer (jd_utc, mjd_tt, …)",
                    i + 1
                );
            }
        }
    }
    let jd1 = float_column(&table.corrected, file, "bjd_tdb_jd1")?;
    let jd2 = float_column(&table.corrected, file, "bjd_tdb_jd2")?;
    let roemer = float_column(&table.corrected, file, "roemer_delay_s")?;
    // Everything but the Rømer term: BJD_TDB minus the Rømer delay. The delay is r·n/c with
    // the defined c; r·n in au follows with the defined au (exact constants).
    let timings: Vec<UncorrectedTiming> = rows
        .iter()
        .enumerate()
        .map(|(i, &(kind, error_d))| {
            let bjd = Instant::from_jd_two_part(TimeScale::Tdb, jd1[i], jd2[i]);
            UncorrectedTiming {
                observer_tdb: bjd.add_seconds(-roemer[i]),
                projection_au: roemer[i] / LIGHT_TIME_PER_AU_S,
                error_d,
                kind,
                row: i + 1,
            }
        })
        .collect();
    let epoch_scale = table.clock.map_or(TimeScale::Tdb, |c| c.scale);
    let epoch = parse_time(&a.epoch_jd, TimeFormat::Jd, epoch_scale, reference.converter.leap_seconds())
        .and_then(|t| reference.converter.convert(&t, TimeScale::Tdb))
        .map_err(|e| anyhow::anyhow!("--epoch-jd '{}': {e}", a.epoch_jd))?;
    if !(a.period_d.is_finite() && a.period_d > 0.0) {
        bail!("--period-d {}: the period must be a positive number of days", a.period_d);
    }
    let eph = ReferenceEphemeris { epoch, period_d: a.period_d, period_sigma_d: a.period_sigma_d };
    let options = LightTimeOptions { quadratic: a.quadratic, allow_ambiguous_cycles: a.allow_ambiguous_cycles };
    let m = measure_light_time(&timings, &eph, &options).map_err(|e| anyhow::anyhow!("{file}: {e}"))?;

    let columns = vec![
        Column::new("row".into(), m.residuals.iter().map(|r| r.0 as u64).collect::<Vec<_>>()),
        Column::new("cycle".into(), m.residuals.iter().map(|r| r.1).collect::<Vec<_>>()),
        Column::new("time_since_epoch_d".into(), m.residuals.iter().map(|r| r.2).collect::<Vec<_>>()),
        Column::new("residual_d".into(), m.residuals.iter().map(|r| r.3).collect::<Vec<_>>()),
        Column::new("residual_s".into(), m.residuals.iter().map(|r| r.3 * SECONDS_PER_DAY).collect::<Vec<_>>()),
    ];
    let mut out = DataFrame::new(m.residuals.len(), columns).context("building the output table")?;
    let provenance = Provenance::new(&std::env::args().collect::<Vec<_>>().join(" "))
        .with("stage", "measure-light-time")
        .with("input", file.clone())
        .with("ephemeris", reference.ephemeris.name());
    write_table(&mut out, &a.output, &provenance, &[a.table.input.as_path()])?;
    let deviation_sigma = m.deviation_from_defined_sigma;
    let mut outputs = vec![a.output.display().to_string()];
    outputs.extend(a.summary.iter().map(|p| p.display().to_string()));
    let text = skyclock::table::Summary::new(m.clone(), provenance, vec![file.clone()], outputs).to_json()?;
    if let Some(path) = &a.summary {
        super::common::write_text(path, &text, &[a.table.input.as_path()])?;
    }
    for w in &m.warnings {
        eprintln!("warning: {w}");
    }
    if m.reduced_chi2 > 2.0 {
        eprintln!(
            "warning: reduced χ² = {:.2}: the stated errors look too small; the scaled 1σ is the one to quote",
            m.reduced_chi2
        );
    }
    if a.json {
        println!("{text}");
    } else if !a.quiet {
        println!(
            "{} timings, projections r·n from {:.3} to {:.3} au → {}",
            m.n,
            m.projection_range_au.0,
            m.projection_range_au.1,
            a.output.display()
        );
        println!(
            "  light time per au  {:.4} ± {:.4} s  (defined value {:.6} s; {:+.1}σ)",
            m.light_time_per_au_s, m.light_time_per_au_sigma_scaled_s, LIGHT_TIME_PER_AU_S, deviation_sigma
        );
        println!(
            "  speed of light     {:.0} ± {:.0} m/s",
            m.speed_of_light_m_per_s,
            m.speed_of_light_sigma_m_per_s * m.reduced_chi2.max(1.0).sqrt()
        );
        println!(
            "  period             {:.9} ± {:.9} d; χ² = {:.1} for {} dof",
            m.period_d, m.period_sigma_d, m.chi2, m.dof
        );
    }
    Ok(())
}
