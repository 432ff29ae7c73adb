//! `skyclock predict-events`: upcoming events of a linear or quadratic ephemeris (optionally with companions' light time) in a date
//! range, with their uncertainty, the UTC at a site and whether they can be observed there.

use std::path::{Path, PathBuf};

use anyhow::{Context, Result, bail};
use clap::Args as ClapArgs;

use super::common::{ObserverArgs, ReferenceDataArgs, SourceArgs};
use skyclock::arrival::DelayOptions;
use skyclock::oc::{EventKind, FittedEphemeris, ModelKind, OcAnalysis};
use skyclock::predict::{Forecast, ForecastRequest, PredictionOptions, SUN_CAUTION_DEG, SkyGeometry, forecast};
use skyclock::table::{Provenance, Summary, write_table};
use skyclock::time::{TimeFormat, TimeScale, parse_time};

const EXAMPLE: &str = "Example (invented star and site):
  skyclock predict-events --ra 07:41:12.5 --dec +28:14:03 \\
      --site-coordinates=-7.625,38.418,740 \\
      --epoch-bjd-tdb 2460123.41873 --period-d 0.8231456 \\
      --epoch-sigma-d 0.00012 --period-sigma-d 3e-7 \\
      --kinds primary,secondary --from 2027-01-10 --until 2027-02-10 \\
      --event-duration-hours 2.5 --output upcoming.csv

  or, with the fitted model of a timing-residuals summary:
  skyclock predict-events --source-file fenwick-star.toml \\
      --sites-file sites.toml --site quarry-hill \\
      --ephemeris-summary residuals.json --summary-model quadratic \\
      --from 2027-01-10 --until 2027-02-10 --json

  Dates are UTC (YYYY-MM-DD or YYYY-MM-DDThh:mm) and select events by their BJD_TDB.
  Altitudes are geometric (no refraction). Twilight classes: day (Sun above -0.833°),
  civil (to -6°), nautical (to -12°), astronomical (to -18°), night. An event is
  observable when the target is at least --min-target-altitude-deg high, the Sun at most
  --max-sun-altitude-deg, the Moon at least --min-moon-separation-deg away (default: no
  limit; the Moon is computed to ~0.3°), and the target at least 15° from the Sun. Events with the target
  closer than 15° to the Sun carry a caution in the table and on stderr: they cannot be
  observed safely and no optics should be pointed near the Sun.

  Table columns: kind, cycle, bjd_tdb, bjd_tdb_jd1, bjd_tdb_jd2, sigma_d, utc_iso,
  target_altitude_deg, target_azimuth_deg, sun_altitude_deg, sky_condition,
  sun_separation_deg, moon_altitude_deg, moon_separation_deg, moon_illuminated_fraction,
  observable, window_observable (with --event-duration-hours), caution.";

/// Arguments of `skyclock predict-events`.
#[derive(Debug, ClapArgs)]
#[command(after_help = EXAMPLE)]
pub struct Args {
    /// JSON summary written by `timing-residuals --summary` (its reference ephemeris and one fitted model).
    #[arg(long, value_name = "FILE")]
    pub ephemeris_summary: Option<PathBuf>,
    /// Which model of the summary to use: linear, quadratic, or one with light-time
    /// companions (their delays and covariance are carried into the predictions).
    #[arg(long, value_name = "MODEL", default_value = "linear")]
    pub summary_model: String,
    /// Epoch of a primary event (cycle 0), BJD_TDB as a Julian Date (instead of a summary).
    #[arg(long, value_name = "JD")]
    pub epoch_bjd_tdb: Option<String>,
    /// Period, days.
    #[arg(long, value_name = "DAYS")]
    pub period_d: Option<f64>,
    /// 1σ of the epoch, days.
    #[arg(long, value_name = "DAYS", default_value_t = 0.0)]
    pub epoch_sigma_d: f64,
    /// 1σ of the period, days.
    #[arg(long, value_name = "DAYS", default_value_t = 0.0)]
    pub period_sigma_d: f64,
    /// Period change per cycle dP/dE, days per cycle (quadratic ephemeris).
    #[arg(long, value_name = "DAYS", default_value_t = 0.0, allow_hyphen_values = true)]
    pub period_change_per_cycle_d: f64,
    /// 1σ of dP/dE, days per cycle.
    #[arg(long, value_name = "DAYS", default_value_t = 0.0)]
    pub period_change_per_cycle_sigma_d: f64,
    /// Event kinds, comma-separated: primary, secondary, maximum.
    #[arg(long, value_name = "LIST", default_value = "primary")]
    pub kinds: String,
    /// Start of the range, UTC (YYYY-MM-DD or YYYY-MM-DDThh:mm[:ss]).
    #[arg(long, value_name = "DATE")]
    pub from: String,
    /// End of the range, UTC.
    #[arg(long, value_name = "DATE")]
    pub until: String,
    /// Lowest useful target altitude, degrees.
    #[arg(long, value_name = "DEG", default_value_t = 30.0, allow_hyphen_values = true)]
    pub min_target_altitude_deg: f64,
    /// Highest acceptable Sun altitude, degrees (-12: end of nautical twilight).
    #[arg(long, value_name = "DEG", default_value_t = -12.0, allow_hyphen_values = true)]
    pub max_sun_altitude_deg: f64,
    /// Smallest acceptable distance between target and Moon, degrees (0: no limit).
    #[arg(long, value_name = "DEG", default_value_t = 0.0)]
    pub min_moon_separation_deg: f64,
    /// Full duration of the event, hours: the whole window centred on the event is checked.
    #[arg(long, value_name = "HOURS")]
    pub event_duration_hours: Option<f64>,
    /// Distance from the Sun inside which events carry the caution, degrees (15 or more).
    #[arg(long, value_name = "DEG", default_value_t = SUN_CAUTION_DEG)]
    pub sun_caution_deg: f64,
    /// Keep only observable events in the table and the listing.
    #[arg(long)]
    pub only_observable: bool,
    #[command(flatten)]
    pub observer: ObserverArgs,
    #[command(flatten)]
    pub source: SourceArgs,
    #[command(flatten)]
    pub reference_data: ReferenceDataArgs,
    /// Output table (.csv, .tsv or .parquet).
    #[arg(long, value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Print JSON on stdout instead of the listing.
    #[arg(long)]
    pub json: bool,
}

/// Runs the command.
pub fn run(a: Args) -> Result<()> {
    let kinds: Vec<EventKind> = a
        .kinds
        .split(',')
        .map(|k| k.parse::<EventKind>().map_err(|e| anyhow::anyhow!("--kinds: {e}")))
        .collect::<Result<_>>()?;
    let description = a.observer.description()?;
    let site = a
        .observer
        .single_site(description.as_ref())?
        .context("no site given: predictions need a ground site (--site-coordinates LON,LAT,HEIGHT, or --sites-file FILE with --site NAME)")?;
    let source = a.source.load(description.as_ref())?;
    let reference = a.reference_data.load()?;
    let leap = reference.converter.leap_seconds().clone();
    let start = parse_time(&a.from, TimeFormat::Iso, TimeScale::Utc, &leap)
        .map_err(|e| anyhow::anyhow!("--from '{}': {e}", a.from))?;
    let end = parse_time(&a.until, TimeFormat::Iso, TimeScale::Utc, &leap)
        .map_err(|e| anyhow::anyhow!("--until '{}': {e}", a.until))?;
    let (ephemeris, ephemeris_origin) = load_ephemeris(&a, &leap)?;
    let options = PredictionOptions {
        min_target_altitude_deg: a.min_target_altitude_deg,
        max_sun_altitude_deg: a.max_sun_altitude_deg,
        event_duration_d: a.event_duration_hours.map(|h| h / 24.0),
        sun_caution_deg: a.sun_caution_deg,
        min_moon_separation_deg: a.min_moon_separation_deg,
    };
    let corrector = reference.corrector(source.clone(), DelayOptions::default());
    let sky = SkyGeometry::from_reference(&reference);
    let request = ForecastRequest {
        ephemeris: &ephemeris,
        ephemeris_origin,
        kinds: &kinds,
        start,
        end,
        site: &site,
        options,
        only_observable: a.only_observable,
    };
    let result = forecast(&request, &corrector, &sky)?;
    for c in result.cautions.iter().chain(&result.warnings) {
        eprintln!("{c}");
    }

    let mut inputs: Vec<&Path> = Vec::new();
    for p in [
        &a.ephemeris_summary,
        &a.source.source_file,
        &a.observer.sites_file,
        &a.reference_data.ephemeris_kernel,
        &a.reference_data.leap_seconds,
        &a.reference_data.earth_orientation,
    ]
    .into_iter()
    .flatten()
    {
        inputs.push(p.as_path());
    }
    let provenance = Provenance::new(&std::env::args().collect::<Vec<_>>().join(" "))
        .with("stage", "predict-events")
        .with("ephemeris", reference.ephemeris.name())
        .with("leap_seconds", leap.source().to_string())
        .with("earth_orientation", reference.orientation.describe())
        .with("event_ephemeris", describe_ephemeris(&result))
        .with(
            "site",
            format!(
                "{} ({:.6}°E, {:.6}°N, {} m)",
                site.name,
                site.east_longitude_rad.to_degrees(),
                site.latitude_rad.to_degrees(),
                site.height_m
            ),
        )
        .with("altitudes", "geometric, no refraction; Moon from low-precision formulae (~0.3°)");
    let events = &result.events;
    if let Some(path) = &a.output {
        let mut df = result.table().context("building the output table")?;
        write_table(&mut df, path, &provenance, &inputs)?;
    }

    if a.json {
        let summary = Summary::new(
            result.clone(),
            provenance,
            inputs.iter().map(|p| p.display().to_string()).collect(),
            a.output.iter().map(|p| p.display().to_string()).collect(),
        );
        println!("{}", summary.to_json()?);
    } else {
        println!(
            "{} event(s) of {} from {} to {} UTC at {}",
            events.len(),
            result.source,
            a.from,
            a.until,
            result.site
        );
        println!(
            "{:<9} {:>10} {:<19} {:>8} {:>7} {:>7} {:<21} {:>6}  verdict",
            "kind", "cycle", "UTC", "±σ min", "alt°", "Sun°", "sky", "Moon°"
        );
        for e in events {
            let verdict = if e.caution.is_some() {
                "CAUTION: near the Sun, do not observe"
            } else if e.fully_observable() {
                "observable"
            } else if e.observable {
                "event only (window not fully)"
            } else {
                "-"
            };
            let utc_minutes: String = e.utc_iso.chars().take(19).collect();
            println!(
                "{:<9} {:>10.1} {:<19} {:>8.2} {:>7.1} {:>7.1} {:<21} {:>6.0}  {}",
                e.kind.name(),
                e.cycle,
                utc_minutes.replacen('T', " ", 1),
                e.sigma_d * 1440.0,
                e.target.altitude_deg,
                e.sun.altitude_deg,
                e.sky_condition,
                e.moon_separation_deg,
                verdict
            );
        }
        if let Some(p) = &a.output {
            println!("→ {}", p.display());
        }
    }
    Ok(())
}

/// The ephemeris in words, for provenance.
fn describe_ephemeris(f: &Forecast) -> String {
    let e = &f.ephemeris;
    format!(
        "{} model ({}): T0 = {} BJD_TDB, P = {} d, Q = {} d",
        e.model, e.origin, e.epoch_bjd_tdb, e.period_d, e.quadratic_d
    )
}

/// The fitted ephemeris from the summary file or the command line, and where it came from.
fn load_ephemeris(a: &Args, leap: &skyclock::time::LeapSecondTable) -> Result<(FittedEphemeris, String)> {
    if let Some(path) = &a.ephemeris_summary {
        if a.epoch_bjd_tdb.is_some() || a.period_d.is_some() {
            bail!("give either --ephemeris-summary or --epoch-bjd-tdb with --period-d, not both");
        }
        let file = path.display().to_string();
        let text = std::fs::read_to_string(path).with_context(|| format!("reading {file}"))?;
        let summary: Summary<OcAnalysis> = serde_json::from_str(&text).with_context(|| {
            format!("{file}: not a timing-residuals summary with a reference_ephemeris and its models (write one with timing-residuals --summary)")
        })?;
        let kind: ModelKind = a.summary_model.parse().map_err(|e| anyhow::anyhow!("--summary-model: {e}"))?;
        let e = summary.result.ephemeris(kind).map_err(|e| anyhow::anyhow!("{file}: {e}"))?;
        return Ok((e, format!("{kind} model of {file}")));
    }
    let (Some(epoch_text), Some(period)) = (&a.epoch_bjd_tdb, a.period_d) else {
        bail!("no ephemeris given: use --epoch-bjd-tdb JD with --period-d DAYS, or --ephemeris-summary FILE");
    };
    let epoch = parse_time(epoch_text, TimeFormat::Jd, TimeScale::Tdb, leap)
        .map_err(|e| anyhow::anyhow!("--epoch-bjd-tdb '{epoch_text}': {e}"))?;
    if !(a.period_change_per_cycle_sigma_d.is_finite() && a.period_change_per_cycle_sigma_d >= 0.0)
        || !a.period_change_per_cycle_d.is_finite()
    {
        bail!("--period-change-per-cycle-d and its sigma must be finite (the sigma non-negative)");
    }
    // Q = ½ dP/dE, σ_Q = ½ σ(dP/dE).
    let e = if a.period_change_per_cycle_d == 0.0 && a.period_change_per_cycle_sigma_d == 0.0 {
        FittedEphemeris::linear(epoch, period, a.epoch_sigma_d, a.period_sigma_d)
    } else {
        FittedEphemeris::quadratic(
            epoch,
            period,
            0.5 * a.period_change_per_cycle_d,
            [a.epoch_sigma_d, a.period_sigma_d, 0.5 * a.period_change_per_cycle_sigma_d],
        )
    }
    .map_err(|e| anyhow::anyhow!("{e}"))?;
    Ok((e, "command line".to_string()))
}
