//! `skyclock barycentre-events`: stream a photon-event list of any length to the barycentre.

use std::path::PathBuf;

use anyhow::{Result, bail};
use clap::Args as ClapArgs;

use super::common::{ObserverArgs, ReferenceDataArgs, SourceArgs};
use skyclock::arrival::events::correct_event_file;
use skyclock::arrival::interpolated::{DEFAULT_NODE_SPACING_S, InterpolatedCorrector};
use skyclock::arrival::{BarycentreEventsResult, DelayOptions};
use skyclock::observer::Observer;
use skyclock::table::{Provenance, Summary};
use skyclock::time::{TimeFormat, TimeScale, parse_time};

const EXAMPLE: &str = "Example:
  skyclock barycentre-events --input events.csv --time-column seconds \\
      --time-zero 2024-03-01T00:00:00 --time-zero-scale tt --ra 127.418 --dec -14.277 \\
      --output events_bary.csv

  Event times are seconds after --time-zero on its scale. The output repeats every input line
  and appends barycentric_s: seconds after the same zero, read on TDB at the barycentre.
  Files of any length stream through in blocks (memory stays bounded).";

/// Arguments of `skyclock barycentre-events`.
#[derive(Debug, ClapArgs)]
#[command(after_help = EXAMPLE)]
pub struct Args {
    /// Input event list (.csv or .tsv).
    #[arg(long, value_name = "FILE")]
    pub input: PathBuf,
    /// Column of event times (seconds after --time-zero).
    #[arg(long, value_name = "COLUMN")]
    pub time_column: String,
    /// Zero of the event times: ISO 8601 or JD.
    #[arg(long, value_name = "TIME")]
    pub time_zero: String,
    /// Scale of the event times: utc, tai, tt, gps, tdb, tcb.
    #[arg(long, default_value = "tt")]
    pub time_zero_scale: String,
    #[command(flatten)]
    pub observer: ObserverArgs,
    #[command(flatten)]
    pub source: SourceArgs,
    #[command(flatten)]
    pub reference_data: ReferenceDataArgs,
    /// Spacing of the exactly computed nodes, s (interpolation error ≤ 1 ns at 300 s).
    #[arg(long, default_value_t = DEFAULT_NODE_SPACING_S)]
    pub node_spacing_s: f64,
    /// Rows per block (memory use grows with it).
    #[arg(long, default_value_t = 1_000_000)]
    pub block_rows: usize,
    /// Output event list (.csv or .tsv); a .provenance.json is written beside it.
    #[arg(long, value_name = "FILE")]
    pub output: PathBuf,
    /// Print a JSON summary on stdout.
    #[arg(long)]
    pub json: bool,
    /// Print nothing but warnings and errors (no result line).
    #[arg(long)]
    pub quiet: bool,
}

/// Runs the command.
pub fn run(a: Args) -> Result<()> {
    if !(1.0..=3600.0).contains(&a.node_spacing_s) {
        bail!("--node-spacing-s must be between 1 and 3600 s, got {}", a.node_spacing_s);
    }
    if a.block_rows == 0 {
        bail!("--block-rows must be at least 1");
    }
    let scale = TimeScale::parse(&a.time_zero_scale).ok_or_else(|| {
        anyhow::anyhow!("unknown time scale '{}'; use utc, tai, tt, gps, tdb or tcb", a.time_zero_scale)
    })?;
    let reference = a.reference_data.load()?;
    let format = if a.time_zero.contains('-') && a.time_zero.len() >= 10 { TimeFormat::Iso } else { TimeFormat::Jd };
    let zero = parse_time(&a.time_zero, format, scale, reference.converter.leap_seconds())
        .map_err(|e| anyhow::anyhow!("--time-zero: {e}"))?;
    let description = a.observer.description()?;
    let source = a.source.load(description.as_ref())?;
    if a.observer.spacecraft_columns.is_some() {
        bail!(
            "barycentre-events handles ground sites and the geocentre; for spacecraft positions per row use `skyclock barycentre`"
        );
    }
    let observer = match a.observer.single_site(description.as_ref())? {
        Some(s) => Observer::Site(s),
        None => Observer::Geocentre,
    };
    let exact = reference.corrector(source.clone(), DelayOptions::default());
    let zero_tt = reference.converter.convert(&zero, TimeScale::Tt)?;
    let interpolator = InterpolatedCorrector::new(&exact, observer, zero_tt, a.node_spacing_s);
    let summary = correct_event_file(
        &a.input,
        &a.output,
        &a.time_column,
        &zero,
        &reference.converter,
        &interpolator,
        a.block_rows,
    )?;
    let provenance = Provenance::new(&std::env::args().collect::<Vec<_>>().join(" "))
        .with("stage", "barycentre-events")
        .with("input", a.input.display().to_string())
        .with("ephemeris", reference.ephemeris.name())
        .with("leap_seconds", reference.converter.leap_seconds().source())
        .with("earth_orientation", reference.orientation.describe())
        .with("time_zero", format!("{} {}", a.time_zero, scale))
        .with("node_spacing_s", a.node_spacing_s.to_string());
    let sidecar = skyclock::table::write::sidecar_path(&a.output);
    skyclock::table::write::write_atomically(&sidecar, |f| {
        use std::io::Write;
        f.write_all(provenance.to_json().as_bytes())
    })?;
    let result = BarycentreEventsResult {
        source: source.name.clone(),
        events: summary,
        time_zero: format!("{} {}", a.time_zero, scale),
        node_spacing_s: a.node_spacing_s,
        reference: reference.names(),
    };
    if a.json {
        let inputs = vec![a.input.display().to_string()];
        let outputs = vec![a.output.display().to_string()];
        println!("{}", Summary::new(result, provenance, inputs, outputs).to_json()?);
    } else if !a.quiet {
        println!(
            "corrected {} → {} (correction {:.6} … {:.6} s)",
            super::common::counted(result.events.events, "event", "events"),
            a.output.display(),
            result.events.min_correction_s,
            result.events.max_correction_s
        );
    }
    Ok(())
}
