//! `skyclock convert-time`: convert single times between scales and formats.

use anyhow::{Result, bail};
use clap::Args as ClapArgs;

use super::common::{ObserverArgs, ReferenceDataArgs};
use skyclock::time::{TimeFormat, TimeScale, format_time, parse_time};

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
    let mut records = Vec::new();
    for text in &a.times {
        let t = parse_time(text, format, scale, converter.leap_seconds())
            .map_err(|e| anyhow::anyhow!("time '{text}': {e}"))?;
        let mut row = serde_json::Map::new();
        row.insert("input".into(), text.clone().into());
        for target in &targets {
            let converted = converter.convert(&t, *target).map_err(|e| anyhow::anyhow!("time '{text}': {e}"))?;
            if converted.scale() == TimeScale::Utc
                && converter.leap_seconds().days_beyond_horizon(converted.mjd_day()).is_some()
            {
                eprintln!(
                    "warning: {text} is beyond the leap-second table ({}); UTC may be off by 1 s",
                    converter.leap_seconds().source()
                );
            }
            row.insert(target.name().into(), format_time(&converted, to_format).into());
        }
        records.push(serde_json::Value::Object(row));
    }
    if records.is_empty() {
        bail!("no times given");
    }
    if a.json {
        println!("{}", serde_json::to_string_pretty(&records)?);
    } else {
        for r in &records {
            println!("{}", r["input"].as_str().unwrap_or_default());
            for target in &targets {
                println!("  {:<4} {}", target.to_string(), r[target.name()].as_str().unwrap_or_default());
            }
        }
    }
    Ok(())
}
