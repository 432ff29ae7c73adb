//! `skyclock time-events`: cut a light curve into events around a linear ephemeris and
//! measure each event's time of minimum (or maximum) with its error; the table it writes
//! is read directly by `timing-residuals`.

use std::path::PathBuf;

use anyhow::{Result, bail};
use clap::Args as ClapArgs;

use super::common::{BrightnessArg, write_text};
use super::light_curve_input::LightCurveArgs;
use skyclock::minima::{
    Brightness, EventCurve, EventTimingRequest, EventWindow, SegmentOptions, SymmetricOptions, SymmetricShape,
    TimingMethod, time_light_curve,
};
use skyclock::oc::{EventKind, ReferenceEphemeris};
use skyclock::table::{Provenance, Summary, write_table};
use skyclock::time::{TimeFormat, TimeScale, parse_time};

const EXAMPLE: &str = "Example (invented star):
  skyclock time-events --input kq_invented.csv --time-column bjd --value-column mag \\
      --error-column mag_err --epoch-bjd-tdb 2460200.31842 --period-d 0.8123456 \\
      --event-kind primary --half-width-phase 0.06 --method kwee-van-woerden \\
      --output kq_minima.csv --skipped-output kq_skipped.csv --summary kq_minima.json

  Every predicted primary minimum T = epoch + E·P with points within ±0.06 cycles is timed.
  The output table has, per timed event: time (BJD_TDB Julian Date, 14 decimals), error_d,
  kind, cycle, method, points, error_formal_d, error_bootstrap_d, predicted_bjd_tdb,
  first_row, last_row. Feed it to timing-residuals with --time-column time --clock bjd_tdb
  --error-column error_d --kind-column kind. Events with a branch missing or too few points
  are listed with their reason in the skipped table and the summary, never dropped silently.
  For a pulsator use --event-kind maximum (the epoch is then a time of maximum).";

/// Timing method.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum MethodArg {
    /// Kwee & van Woerden (1956) reflection method with its own standard error.
    KweeVanWoerden,
    /// Even polynomial in (t − T0), degree 2 (or 4 with --polynomial-degree 4), bootstrap errors.
    SymmetricPolynomial,
    /// Gaussian profile, bootstrap errors.
    SymmetricGaussian,
}

/// Event kind.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum KindArg {
    /// Primary minima at epoch + E·P.
    Primary,
    /// Secondary minima at epoch + (E + ½)·P.
    Secondary,
    /// Maxima of a pulsator at epoch + E·P.
    Maximum,
}

/// Arguments of `skyclock time-events`.
#[derive(Debug, ClapArgs)]
#[command(after_help = EXAMPLE)]
pub struct Args {
    #[command(flatten)]
    pub light_curve: LightCurveArgs,
    /// Values are magnitudes or fluxes (which way is faint).
    #[arg(long, value_enum, default_value_t = BrightnessArg::Magnitude)]
    pub brightness: BrightnessArg,
    /// Epoch of cycle 0 (a primary minimum, or a maximum), BJD_TDB as a Julian Date.
    #[arg(long, value_name = "JD")]
    pub epoch_bjd_tdb: String,
    /// Period, days.
    #[arg(long, value_name = "DAYS")]
    pub period_d: f64,
    /// Which events to time.
    #[arg(long, value_enum, default_value_t = KindArg::Primary)]
    pub event_kind: KindArg,
    /// Window half-width around each predicted time, in cycles (at most 0.5).
    #[arg(long, value_name = "CYCLES", conflicts_with = "half_width_d", required_unless_present = "half_width_d")]
    pub half_width_phase: Option<f64>,
    /// Window half-width around each predicted time, in days.
    #[arg(long, value_name = "DAYS")]
    pub half_width_d: Option<f64>,
    /// Timing method.
    #[arg(long, value_enum, default_value_t = MethodArg::KweeVanWoerden)]
    pub method: MethodArg,
    /// Degree of the even polynomial (2 or 4).
    #[arg(long, value_name = "DEGREE", default_value_t = 2)]
    pub polynomial_degree: u32,
    /// Fewest points in a window.
    #[arg(long, value_name = "N", default_value_t = 12)]
    pub min_points: usize,
    /// Fewest points on each side of the predicted centre.
    #[arg(long, value_name = "N", default_value_t = 3)]
    pub min_points_per_side: usize,
    /// Bootstrap resamples of the symmetric fits (0: covariance error only).
    #[arg(long, value_name = "N", default_value_t = 200)]
    pub bootstrap: usize,
    /// Seed of the bootstrap.
    #[arg(long, value_name = "SEED", default_value_t = 1)]
    pub seed: u64,
    /// Timing table (.csv, .tsv or .parquet).
    #[arg(long, value_name = "FILE")]
    pub output: PathBuf,
    /// Table of skipped events with their reasons (.csv, .tsv or .parquet).
    #[arg(long, value_name = "FILE")]
    pub skipped_output: Option<PathBuf>,
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
    if a.light_curve.band_column.is_some() {
        bail!("--band-column: time-events times one band at a time; select one band's rows into their own table first");
    }
    if !(a.period_d.is_finite() && a.period_d > 0.0) {
        bail!("--period-d must be a positive number of days, got {}", a.period_d);
    }
    let window = match (a.half_width_phase, a.half_width_d) {
        (Some(p), None) => EventWindow::HalfWidthPhase(p),
        (None, Some(d)) => EventWindow::HalfWidthDays(d),
        _ => bail!("give exactly one of --half-width-phase and --half-width-d"),
    };
    let method = match a.method {
        MethodArg::KweeVanWoerden => TimingMethod::KweeVanWoerden,
        MethodArg::SymmetricPolynomial => {
            let shape = match a.polynomial_degree {
                2 => SymmetricShape::Polynomial2,
                4 => SymmetricShape::Polynomial4,
                d => bail!("--polynomial-degree must be 2 or 4, got {d}"),
            };
            TimingMethod::Symmetric(SymmetricOptions { shape, bootstrap_resamples: a.bootstrap, seed: a.seed })
        }
        MethodArg::SymmetricGaussian => TimingMethod::Symmetric(SymmetricOptions {
            shape: SymmetricShape::Gaussian,
            bootstrap_resamples: a.bootstrap,
            seed: a.seed,
        }),
    };
    let kind = match a.event_kind {
        KindArg::Primary => EventKind::Primary,
        KindArg::Secondary => EventKind::Secondary,
        KindArg::Maximum => EventKind::Maximum,
    };
    let brightness = match a.brightness {
        BrightnessArg::Magnitude => Brightness::Magnitude,
        BrightnessArg::Flux => Brightness::Flux,
    };
    let (lc, note) = a.light_curve.load()?;
    let series = lc.series_for(&format!("timing events (--min-points {})", a.min_points), a.min_points.max(3))?;
    let file = lc.file.clone();
    let epoch =
        parse_time(&a.epoch_bjd_tdb, TimeFormat::Jd, TimeScale::Tdb, &skyclock::time::LeapSecondTable::builtin())
            .map_err(|e| anyhow::anyhow!("--epoch-bjd-tdb '{}': {e}", a.epoch_bjd_tdb))?;
    let errors = series.errors();
    let input_rows = lc.input_rows(&series);
    let request = EventTimingRequest {
        curve: EventCurve {
            reference: lc.epoch,
            time_d: series.time_d(),
            value: series.value(),
            error: errors.as_deref(),
            brightness,
        },
        input_rows: &input_rows,
        ephemeris: ReferenceEphemeris { epoch, period_d: a.period_d, period_sigma_d: 0.0 },
        kind,
        window,
        segmenting: SegmentOptions { min_points: a.min_points, min_points_per_branch: a.min_points_per_side },
        method,
    };
    let report = time_light_curve(&request)
        .map_err(|e| anyhow::anyhow!("{file}: column '{}': {e}", a.light_curve.value_column))?;
    let input = a.light_curve.input.as_path();
    let provenance = Provenance::new(&std::env::args().collect::<Vec<_>>().join(" "))
        .with("stage", "time-events")
        .with("input", input.display().to_string())
        .with("method", method.name())
        .with("epoch_bjd_tdb", a.epoch_bjd_tdb.clone())
        .with("period_d", a.period_d.to_string())
        .with("times", note.clone())
        .with("rows_dropped_nan", series.n_dropped().to_string());
    let mut df = report.timed_table()?;
    write_table(&mut df, &a.output, &provenance, &[input])?;
    let mut outputs = vec![a.output.display().to_string()];
    if let Some(path) = &a.skipped_output {
        let mut df = report.skipped_table()?;
        write_table(&mut df, path, &provenance, &[input, a.output.as_path()])?;
        outputs.push(path.display().to_string());
    }
    if let Some(path) = &a.summary {
        outputs.push(path.display().to_string());
    }
    let summary = Summary::new(report, provenance, vec![input.display().to_string()], outputs);
    let text = summary.to_json()?;
    if let Some(path) = &a.summary {
        write_text(path, &text, &[input, a.output.as_path()])?;
    }
    let report = &summary.result;
    if a.json {
        println!("{text}");
    } else if !a.quiet {
        println!(
            "timed {} {} events with {} ({} skipped, {} predicted events without data)",
            report.timed.len(),
            kind.name(),
            method.name(),
            report.skipped.len(),
            report.predicted_events_without_data
        );
        for s in &report.skipped {
            println!("  skipped {}", s.describe());
        }
        for n in &report.notes {
            println!("{n}");
        }
    }
    Ok(())
}
