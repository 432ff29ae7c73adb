//! `skyclock observer-time`: from BJD_TDB instants to the clock reading at which the
//! signal reaches an observer (the inverse of `barycentre`).

use anyhow::Result;
use clap::Args as ClapArgs;

use std::path::PathBuf;

use super::common::{ObserverArgs, ReferenceDataArgs, SourceArgs, write_text};
use skyclock::arrival::observer_times;
use skyclock::table::{Provenance, Summary};
use skyclock::time::{TimeFormat, TimeScale, parse_time};

const EXAMPLE: &str = "Example:
  skyclock observer-time 2461010.4321 --ra 05:12:33.2 --dec +21:07:44 \\
      --site-coordinates=-105.1,39.4,2150 --to-scale utc

  Prints the ISO time at the site (default UTC) and the same instant as a JD.";

/// Arguments of `skyclock observer-time`.
#[derive(Debug, ClapArgs)]
#[command(after_help = EXAMPLE)]
pub struct Args {
    /// One or more BJD_TDB instants (JD; two-part 2461010.5+0.4321 keeps every digit).
    #[arg(required = true)]
    pub bjd_tdb: Vec<String>,
    /// Scale of the clock at the observer.
    #[arg(long, default_value = "utc")]
    pub to_scale: String,
    #[command(flatten)]
    pub observer: ObserverArgs,
    #[command(flatten)]
    pub source: SourceArgs,
    #[command(flatten)]
    pub reference_data: ReferenceDataArgs,
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
    let scale = TimeScale::parse(&a.to_scale)
        .ok_or_else(|| anyhow::anyhow!("unknown time scale '{}'; use utc, tai, tt, tdb, tcb or gps", a.to_scale))?;
    let description = a.observer.description()?;
    let source = a.source.load(description.as_ref())?;
    let observer = a.observer.single_observer_noting(description.as_ref(), a.quiet)?;
    let reference = a.reference_data.load()?;
    let instants = a
        .bjd_tdb
        .iter()
        .map(|text| {
            parse_time(text, TimeFormat::Jd, TimeScale::Tdb, reference.converter.leap_seconds())
                .map_err(|e| anyhow::anyhow!("BJD_TDB '{text}': {e}"))
        })
        .collect::<Result<Vec<_>>>()?;
    let result = observer_times(&instants, &observer, scale, &reference, &source)?;
    let names = &result.reference;
    let provenance = Provenance::new(&std::env::args().collect::<Vec<_>>().join(" "))
        .with("stage", "observer-time")
        .with("ephemeris", names.ephemeris.clone())
        .with("leap_seconds", names.leap_seconds.clone())
        .with("earth_orientation", names.earth_orientation.clone());
    let summary = Summary::new(result, provenance, vec![], vec![]);
    if let Some(path) = &a.summary {
        write_text(path, &summary.to_json()?, &[])?;
    }
    if a.json {
        println!("{}", summary.to_json()?);
    } else if !a.quiet {
        for (text, r) in a.bjd_tdb.iter().zip(&summary.result.readings) {
            println!("BJD_TDB {text} → {} {scale} (JD {})", r.iso, r.jd);
        }
    }
    Ok(())
}
