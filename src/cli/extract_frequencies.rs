//! `skyclock extract-frequencies`: iterative frequency extraction (prewhitening) to an
//! amplitude signal-to-noise limit, with optional detrending first.

use std::path::PathBuf;

use anyhow::Result;
use clap::Args as ClapArgs;
use polars::prelude::*;

use super::common::{spinner, write_text};
use super::find_periods::KernelArg;
use super::light_curve_input::LightCurveArgs;
use skyclock::frequencies::detrend::{remove_polynomial, remove_segment_offsets};
use skyclock::frequencies::prewhiten::{PrewhitenOptions, prewhiten};
use skyclock::frequencies::summary::{FrequencyExtractionResult, combination_text};
use skyclock::periodogram::{GridRequest, plan_grid};
use skyclock::table::{Provenance, Summary, write_table};

const EXAMPLE: &str = "Example (invented multiperiodic pulsator):
  skyclock extract-frequencies --input dsct_invented.csv --time-column bjd \\
      --value-column mag --max-freq-per-day 50 --signal-to-noise-stop 4 \\
      --output dsct_frequencies.csv --summary dsct_frequencies.json
  Each row: frequency, amplitude and phase with least-squares errors from the final joint
  fit, S/N when accepted, and combination notes (f_i+f_j, |f_i-f_j|, 2f_i within 1/T).
  Phases are of maximum of A cos(2π(f t - φ)) with t in days since the reported epoch.";

/// Arguments of `skyclock extract-frequencies`.
#[derive(Debug, ClapArgs)]
#[command(after_help = EXAMPLE)]
pub struct Args {
    #[command(flatten)]
    pub light_curve: LightCurveArgs,
    /// Highest frequency searched, cycles per day.
    #[arg(long, default_value_t = 50.0)]
    pub max_freq_per_day: f64,
    /// Frequencies per resolution element 1/baseline.
    #[arg(long, default_value_t = 10.0)]
    pub oversampling: f64,
    /// Stop when the next peak's amplitude S/N falls below this.
    #[arg(long, default_value_t = 4.0)]
    pub signal_to_noise_stop: f64,
    /// Stop after this many frequencies.
    #[arg(long, default_value_t = 20)]
    pub max_frequencies: usize,
    /// Width of the box over which the residual noise is averaged, cycles per day.
    #[arg(long, default_value_t = 2.0)]
    pub noise_box_per_day: f64,
    /// Kernel of the amplitude spectra.
    #[arg(long, value_enum, default_value_t = KernelArg::Auto)]
    pub kernel: KernelArg,
    /// Remove a polynomial in time of this degree first.
    #[arg(long)]
    pub detrend_polynomial_degree: Option<usize>,
    /// Remove one zero point per segment first; segments split at gaps longer than this, days.
    #[arg(long)]
    pub segment_gap_d: Option<f64>,
    /// Frequency table output (.csv, .tsv or .parquet).
    #[arg(long, value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Summary JSON file (frequencies with uncertainties and combination notes).
    #[arg(long, value_name = "FILE")]
    pub summary: Option<PathBuf>,
    /// Print a machine-readable summary as JSON on stdout.
    #[arg(long)]
    pub json: bool,
    /// Print nothing but errors.
    #[arg(long)]
    pub quiet: bool,
}

/// Runs the command.
pub fn run(a: Args) -> Result<()> {
    let pb = spinner("extracting frequencies", a.quiet);
    let (lc, note) = a.light_curve.load()?;
    let mut series = lc.series()?;
    let mut detrending = Vec::new();
    if let Some(deg) = a.detrend_polynomial_degree {
        let t = remove_polynomial(&series, deg).map_err(|e| lc.locate(e))?;
        series = series.with_values(t.detrended).map_err(|e| lc.locate(e))?;
        detrending.push(format!("polynomial of degree {deg}"));
    }
    if let Some(gap) = a.segment_gap_d {
        let s = remove_segment_offsets(&series, gap).map_err(|e| lc.locate(e))?;
        series = series.with_values(s.detrended).map_err(|e| lc.locate(e))?;
        detrending.push(format!("zero point per segment (gaps > {gap} d)"));
    }
    let mut req = GridRequest::up_to(a.max_freq_per_day);
    req.oversampling = a.oversampling;
    let grid = plan_grid(series.baseline_d(), &req).map_err(|e| lc.locate(e))?.grid;
    let options = PrewhitenOptions {
        max_frequencies: a.max_frequencies,
        snr_stop: a.signal_to_noise_stop,
        noise_box_per_day: a.noise_box_per_day,
        algorithm: a.kernel.algorithm(),
    };
    let result = prewhiten(&series, &grid, &options).map_err(|e| lc.locate(e))?;
    pb.finish_and_clear();
    let input = a.light_curve.input.as_path();
    let epoch = lc.epoch_jd_text();
    let provenance = Provenance::new(&std::env::args().collect::<Vec<_>>().join(" "))
        .with("stage", "extract-frequencies")
        .with("input", input.display().to_string())
        .with("times", note.clone())
        .with("phase_reference_bjd_tdb", epoch.clone());
    let f = &result.frequencies;
    if let Some(path) = &a.output {
        let col = |name: &str, v: Vec<f64>| Column::new(name.into(), v);
        let mut df = DataFrame::new_infer_height(vec![
            Column::new("label".into(), (1..=f.len()).map(|k| format!("f{k}")).collect::<Vec<String>>()),
            col("freq_per_day", f.iter().map(|x| x.fit.freq_per_day).collect()),
            col("freq_err_per_day", f.iter().map(|x| x.fit.freq_err_per_day).collect()),
            col("period_d", f.iter().map(|x| x.fit.period_d()).collect()),
            col("period_err_d", f.iter().map(|x| x.fit.period_err_d()).collect()),
            col("amplitude", f.iter().map(|x| x.fit.amplitude).collect()),
            col("amplitude_err", f.iter().map(|x| x.fit.amplitude_err).collect()),
            col("phase_cycles", f.iter().map(|x| x.fit.phase_cycles).collect()),
            col("phase_err_cycles", f.iter().map(|x| x.fit.phase_err_cycles).collect()),
            col("signal_to_noise", f.iter().map(|x| x.snr).collect()),
            Column::new(
                "combination".into(),
                f.iter().map(|x| combination_text(&x.combinations)).collect::<Vec<String>>(),
            ),
        ])?;
        write_table(&mut df, path, &provenance, &[input])?;
    }
    let result = FrequencyExtractionResult::from_run(&series, &result, &options, detrending, epoch, note);
    let outputs: Vec<String> = [&a.output, &a.summary].into_iter().flatten().map(|p| p.display().to_string()).collect();
    let summary = Summary::new(result, provenance.clone(), vec![input.display().to_string()], outputs);
    if let Some(path) = &a.summary {
        write_text(path, &summary.to_json()?, &[input])?;
    }
    if a.json {
        println!("{}", summary.to_json()?);
    } else if !a.quiet {
        println!("extracted {} frequencies from {} points; {}", f.len(), series.len(), summary.result.stopped_because);
        for (k, x) in f.iter().enumerate() {
            println!(
                "  f{} = {:.7} ± {:.1e} c/d  A = {:.5} ± {:.1e}  S/N {:.1} {}",
                k + 1,
                x.fit.freq_per_day,
                x.fit.freq_err_per_day,
                x.fit.amplitude,
                x.fit.amplitude_err,
                x.snr,
                combination_text(&x.combinations)
            );
        }
    }
    Ok(())
}
