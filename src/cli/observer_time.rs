//! `skyclock observer-time`: from BJD_TDB instants to the clock reading at which the
//! signal reaches an observer (the inverse of `barycentre`).

use anyhow::Result;
use clap::Args as ClapArgs;

use super::common::{ObserverArgs, ReferenceDataArgs, SourceArgs};
use skyclock::arrival::{BarycentricCorrector, DelayOptions};
use skyclock::observer::Observer;
use skyclock::time::{TimeFormat, TimeScale, format_time, parse_time};

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
    /// Print JSON on stdout.
    #[arg(long)]
    pub json: bool,
}

/// Runs the command.
pub fn run(a: Args) -> Result<()> {
    let scale = TimeScale::parse(&a.to_scale)
        .ok_or_else(|| anyhow::anyhow!("unknown time scale '{}'; use utc, tai, tt, tdb, tcb or gps", a.to_scale))?;
    let description = a.observer.description()?;
    let source = a.source.load(description.as_ref())?;
    let observer = match a.observer.single_site(description.as_ref())? {
        Some(s) => Observer::Site(s),
        None => Observer::Geocentre,
    };
    let reference = a.reference_data.load()?;
    let corrector = BarycentricCorrector::new(
        reference.ephemeris.clone(),
        reference.converter.clone(),
        reference.orientation.clone(),
        source,
        DelayOptions::default(),
    );
    let mut out = Vec::new();
    for text in &a.bjd_tdb {
        let bjd = parse_time(text, TimeFormat::Jd, TimeScale::Tdb, reference.converter.leap_seconds())
            .map_err(|e| anyhow::anyhow!("BJD_TDB '{text}': {e}"))?;
        let t = corrector.arrival_at_observer(&bjd, &observer, scale)?;
        out.push(serde_json::json!({
            "bjd_tdb": text,
            "scale": scale.name(),
            "iso": format_time(&t, TimeFormat::Iso),
            "jd": format_time(&t, TimeFormat::Jd),
        }));
    }
    if a.json {
        println!("{}", serde_json::to_string_pretty(&out)?);
    } else {
        for r in &out {
            println!(
                "BJD_TDB {} → {} {} (JD {})",
                r["bjd_tdb"].as_str().unwrap_or(""),
                r["iso"].as_str().unwrap_or(""),
                scale,
                r["jd"].as_str().unwrap_or("")
            );
        }
    }
    Ok(())
}
