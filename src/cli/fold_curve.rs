//! `skyclock fold-curve`: phase-fold a light curve at a period and epoch, optionally
//! refine the period by least squares, and write the folded points and the binned curve.

use std::path::PathBuf;

use anyhow::{Result, bail};
use clap::Args as ClapArgs;

use super::common::{BrightnessArg, write_text};
use super::light_curve_input::LightCurveArgs;
use skyclock::fold::{BinStatistic, FoldRequest, fold_light_curve};
use skyclock::plot::PhaseRange;
use skyclock::survey::input::days_since;
use skyclock::table::{Provenance, Summary, write_table};
use skyclock::time::{LeapSecondTable, TimeFormat, TimeScale, parse_time};

const EXAMPLE: &str = "Example (invented star):
  skyclock fold-curve --input vx_invented.csv --time-column bjd --value-column mag \\
      --error-column mag_err --period-d 0.3712841 --epoch-bjd-tdb 2460123.4567 \\
      --bins 50 --output vx_folded.csv --binned-output vx_binned.csv
  Phase 0 is at the epoch (a BJD_TDB Julian Date; default: the first time). Folded rows
  keep the input row number; binned rows give phase centre, mean or median, error, count.
  The figure shows phases -0.25 to 1.25 (--phase-range), so an event at phase 0 is seen
  whole; magnitudes are drawn increasing downwards.";

/// Statistic per phase bin.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum BinArg {
    /// Weighted mean (1/σ²) with its error.
    Mean,
    /// Median with error √(π/2)·s/√n.
    Median,
}

/// Arguments of `skyclock fold-curve`.
#[derive(Debug, ClapArgs)]
#[command(after_help = EXAMPLE)]
pub struct Args {
    #[command(flatten)]
    pub light_curve: LightCurveArgs,
    /// Folding period, days.
    #[arg(long)]
    pub period_d: f64,
    /// Epoch of phase zero, BJD_TDB as a Julian Date (text keeps every digit).
    #[arg(long, value_name = "JD")]
    pub epoch_bjd_tdb: Option<String>,
    /// Refine the period by least squares with this many harmonics before folding.
    #[arg(long, value_name = "HARMONICS")]
    pub refine_harmonics: Option<usize>,
    /// Number of phase bins.
    #[arg(long, default_value_t = 50)]
    pub bins: usize,
    /// Statistic per bin.
    #[arg(long, value_enum, default_value_t = BinArg::Mean)]
    pub bin_statistic: BinArg,
    /// Folded points (.csv, .tsv or .parquet).
    #[arg(long, value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Binned curve (.csv, .tsv or .parquet).
    #[arg(long, value_name = "FILE")]
    pub binned_output: Option<PathBuf>,
    /// Summary JSON file.
    #[arg(long, value_name = "FILE")]
    pub summary: Option<PathBuf>,
    /// Figure of the folded points and the binned curve (.svg or .png).
    #[arg(long, value_name = "FILE")]
    pub figure: Option<PathBuf>,
    /// Phases the figure shows, cycles: START,END (each point at every copy of its phase
    /// inside; at most 4 cycles wide).
    #[arg(long, value_name = "START,END", default_value = "-0.25,1.25", allow_hyphen_values = true)]
    pub phase_range: PhaseRange,
    /// What the values are; magnitudes are drawn increasing downwards (default: magnitude,
    /// or flux when the value column's name contains "flux").
    #[arg(long, value_enum)]
    pub brightness: Option<BrightnessArg>,
    /// Print a machine-readable summary as JSON on stdout.
    #[arg(long)]
    pub json: bool,
    /// Print nothing but warnings and errors (no progress display, no result lines).
    #[arg(long)]
    pub quiet: bool,
}

/// What the values are: as given, else flux when the column's name says so, else
/// magnitude (the default of every light-curve command).
fn brightness_of(given: Option<BrightnessArg>, value_column: &str) -> BrightnessArg {
    given.unwrap_or_else(|| {
        if value_column.to_ascii_lowercase().contains("flux") { BrightnessArg::Flux } else { BrightnessArg::Magnitude }
    })
}

/// Runs the command.
pub fn run(a: Args) -> Result<()> {
    if !(a.period_d.is_finite() && a.period_d > 0.0) {
        bail!("--period-d must be a positive number of days, got {}", a.period_d);
    }
    let (lc, note) = a.light_curve.load()?;
    let series = lc.series_for("folding the light curve", 3)?;
    let epoch_d = match &a.epoch_bjd_tdb {
        None => series.time_d()[0],
        Some(text) => {
            let t = parse_time(text, TimeFormat::Jd, TimeScale::Tdb, &LeapSecondTable::builtin())
                .map_err(|e| anyhow::anyhow!("--epoch-bjd-tdb: {e}"))?;
            days_since(&t, &lc.epoch)
        }
    };
    let statistic = match a.bin_statistic {
        BinArg::Mean => BinStatistic::Mean,
        BinArg::Median => BinStatistic::Median,
    };
    let request =
        FoldRequest { period_d: a.period_d, epoch_d, refine_harmonics: a.refine_harmonics, bins: a.bins, statistic };
    let folded = fold_light_curve(&series, &request, &note).map_err(|e| lc.locate(e))?;
    let (phase, errors, bins, period_d) = (&folded.phase, &folded.error, &folded.bins, folded.period_d);
    let input = a.light_curve.input.as_path();
    let provenance = Provenance::new(&std::env::args().collect::<Vec<_>>().join(" "))
        .with("stage", "fold-curve")
        .with("input", input.display().to_string())
        .with("period_d", format!("{period_d:.12}"))
        .with("times", note.clone());
    if let Some(path) = &a.output {
        let mut df = folded.points_table(&series, &lc.input_rows(&series))?;
        write_table(&mut df, path, &provenance, &[input])?;
    }
    if let Some(path) = &a.binned_output {
        let mut df = folded.bins_table()?;
        write_table(&mut df, path, &provenance, &[input])?;
    }
    if let Some(path) = &a.figure {
        use skyclock::plot::search::{FoldedCurve, FoldedTimes, folded_figure};
        use skyclock::plot::write_figure;
        skyclock::table::refuse_overwriting_inputs(path, &[input])?;
        let magnitudes = brightness_of(a.brightness, &a.light_curve.value_column) == BrightnessArg::Magnitude;
        let column = &a.light_curve.value_column;
        let label = if magnitudes { format!("{column} (mag)") } else { format!("{column} (input units)") };
        let rows = lc.input_rows(&series);
        let curve = FoldedCurve {
            phase,
            value: series.value(),
            error: errors.as_deref(),
            bins,
            value_label: &label,
            invert_y: magnitudes,
            phase_range: a.phase_range,
            times: Some(FoldedTimes { epoch: lc.epoch, days: series.time_d(), rows: Some(&rows) }),
        };
        let fig = folded_figure(&curve, &format!("{} folded at P = {period_d:.8} d", input.display()));
        write_figure(&fig, path)?;
    }
    let outputs: Vec<String> = [&a.output, &a.binned_output, &a.summary, &a.figure]
        .into_iter()
        .flatten()
        .map(|p| p.display().to_string())
        .collect();
    let text = Summary::new(folded.report.clone(), provenance, vec![input.display().to_string()], outputs).to_json()?;
    if let Some(path) = &a.summary {
        write_text(path, &text, &[input])?;
    }
    if a.json {
        println!("{text}");
    } else if !a.quiet {
        println!(
            "folded {} points at P = {period_d:.10} d into {} bins ({} empty)",
            series.len(),
            bins.len(),
            bins.iter().filter(|b| b.count == 0).count()
        );
    }
    Ok(())
}
