//! `skyclock convert-time`: convert single times between scales and formats.

use anyhow::{Result, bail};
use clap::Args as ClapArgs;

use super::common::{ObserverArgs, ReferenceDataArgs};
use skyclock::arrival::convert_times;
use skyclock::table::{Provenance, Summary};
use skyclock::time::{TimeFormat, TimeScale, parse_time};

const EXAMPLE: &str = "Example:
  skyclock convert-time 2016-12-31T23:59:60.5 --format iso --scale utc
  skyclock convert-time 2460000.25 --format jd --scale utc --to-scale tdb --to-format mjd \\
      --site-coordinates=-105.1,39.4,2150

  Without --to-scale every scale is printed. TDB includes the site's topocentric term when a
  site is given (otherwise geocentric).";

/// Arguments of `skyclock convert-time`.
#[derive(Debug, ClapArgs)]
#[command(after_help = EXAMPLE)]
pub struct Args {
    /// One or more times, written in --format.
    #[arg(required = true)]
    pub times: Vec<String>,
    /// Format of the given times: jd, mjd, reduced-jd, iso.
    #[arg(long, default_value = "jd")]
    pub format: String,
    /// Scale of the given times: utc, tai, tt, tdb, tcb, gps.
    #[arg(long)]
    pub scale: String,
    /// Scale to convert to (default: all).
    #[arg(long)]
    pub to_scale: Option<String>,
    /// Format to write (default: the input format).
    #[arg(long)]
    pub to_format: Option<String>,
    #[command(flatten)]
    pub observer: ObserverArgs,
    #[command(flatten)]
    pub reference_data: ReferenceDataArgs,
    /// Print JSON on stdout.
    #[arg(long)]
    pub json: bool,
}

fn parse_format(text: &str) -> Result<TimeFormat> {
    TimeFormat::parse(text)
        .ok_or_else(|| anyhow::anyhow!("unknown time format '{text}'; use jd, mjd, reduced-jd or iso"))
}

fn parse_scale(text: &str) -> Result<TimeScale> {
    TimeScale::parse(text)
        .ok_or_else(|| anyhow::anyhow!("unknown time scale '{text}'; use utc, tai, tt, tdb, tcb or gps"))
}

/// Runs the command.
pub fn run(a: Args) -> Result<()> {
    let format = parse_format(&a.format)?;
    let scale = parse_scale(&a.scale)?;
    let to_format = match &a.to_format {
        Some(f) => parse_format(f)?,
        None => format,
    };
    let targets: Vec<TimeScale> = match &a.to_scale {
        Some(s) => vec![parse_scale(s)?],
        None => TimeScale::ALL.to_vec(),
    };
    let reference = a.reference_data.load()?;
    let description = a.observer.description()?;
    let site = a.observer.single_site(description.as_ref())?;
    let converter = reference.converter.at_site(site.as_ref().map(|s| s.dtdb_site()));
    if a.times.is_empty() {
        bail!("no times given");
    }
    let mut instants = Vec::with_capacity(a.times.len());
    for text in &a.times {
        let t = parse_time(text, format, scale, converter.leap_seconds())
            .map_err(|e| anyhow::anyhow!("time '{text}': {e}"))?;
        instants.push((text.clone(), t));
    }
    let result = convert_times(&instants, &converter, &targets, to_format, site.is_some())?;
    for note in &result.notes {
        eprintln!("{note}");
    }
    if a.json {
        let provenance = Provenance::new(&std::env::args().collect::<Vec<_>>().join(" "))
            .with("stage", "convert-time")
            .with("leap_seconds", result.leap_seconds.clone());
        println!("{}", Summary::new(result, provenance, vec![], vec![]).to_json()?);
    } else {
        for r in &result.times {
            println!("{}", r.input);
            for target in &targets {
                let value = r.scales.get(target.name()).map(String::as_str).unwrap_or_default();
                println!("  {:<4} {value}", target.to_string());
            }
        }
    }
    Ok(())
}
