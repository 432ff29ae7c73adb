//! `skyclock fit-timing`: phase-connected fit of a pulsar timing model to arrival times.

use skyclock::constants::SECONDS_PER_DAY;
use std::path::PathBuf;

use anyhow::{Context, Result};
use clap::Args as ClapArgs;

use super::common::{ObserverArgs, ReferenceDataArgs, SourceArgs};
use skyclock::arrival::DelayOptions;
use skyclock::arrival::table::{TableRequest, correct_table_with_geometry};
use skyclock::pulsar::arrival_times::{arrival_times_from_table, attach_observer_geometry};
use skyclock::pulsar::model::TimingModel;
use skyclock::pulsar::timing_fit::fit_timing;
use skyclock::table::summary::Summary;
use skyclock::table::write::{refuse_overwriting_inputs, write_atomically};
use skyclock::table::{Provenance, read_table, write_table};

const EXAMPLE: &str = "Example:
  skyclock fit-timing --input pulses.csv --time-column time --clock mjd_utc \\
      --site-column site --sites-file sites.toml --ra 287.4 --dec -12.9 \\
      --model starting_model.toml --output residuals.csv \\
      --model-output fitted_model.toml --summary fit.json

  The arrival-time table has: the time column (any clock label), error_us (1-σ, µs),
  optional freq_mhz (observing frequency; empty = no dispersion) and optional instrument.
  The model TOML names the parameters to fit in `fit = [\"freq_hz\", ...]`.
  Position and proper motion: add position_offset_ra_mas, position_offset_dec_mas,
  proper_motion_ra_mas_per_yr, proper_motion_dec_mas_per_yr to `fit` (offsets from
  --ra/--dec at the model epoch, east and north); this needs times recorded at an
  observer (not bjd_tdb), and the summary's `position` gives the corrected RA/Dec and
  proper motion with 1σ.
  residuals.csv: seconds_after_epoch_tdb, residual_us, residual_cycles, error_us,
  freq_mhz, instrument, orbital_phase (figure data: residuals vs time and vs orbital phase);
  --figure residuals.svg draws them (the orbital-phase panel only for a binary model).";

/// Arguments of `skyclock fit-timing`.
#[derive(Debug, ClapArgs)]
#[command(after_help = EXAMPLE)]
pub struct Args {
    /// Arrival-time table (.csv, .tsv or .parquet).
    #[arg(long, value_name = "FILE")]
    pub input: PathBuf,
    /// Column of arrival times.
    #[arg(long, default_value = "time")]
    pub time_column: String,
    /// Clock of all times, e.g. mjd_utc, bjd_tdb (or use --clock-column).
    #[arg(long)]
    pub clock: Option<String>,
    /// Column holding a clock label per row.
    #[arg(long)]
    pub clock_column: Option<String>,
    #[command(flatten)]
    pub observer: ObserverArgs,
    #[command(flatten)]
    pub source: SourceArgs,
    #[command(flatten)]
    pub reference_data: ReferenceDataArgs,
    /// Starting timing model (TOML).
    #[arg(long, value_name = "FILE")]
    pub model: PathBuf,
    /// Half-width, days, of the interval around the starting model's epoch where arrival
    /// times are accepted (default 20 years: beyond it seconds after the epoch resolve worse
    /// than 0.12 µs).
    #[arg(long, default_value_t = skyclock::pulsar::timing_fit::DEFAULT_FIT_VALIDITY_DAYS)]
    pub model_validity_days: f64,
    /// Most Gauss–Newton iterations.
    #[arg(long, default_value_t = 20)]
    pub max_iterations: usize,
    /// Residual table to write (.csv).
    #[arg(long, value_name = "FILE")]
    pub output: PathBuf,
    /// Fitted model to write (TOML).
    #[arg(long, value_name = "FILE")]
    pub model_output: PathBuf,
    /// JSON summary to write (the text --json prints): parameters, uncertainties, covariance, χ².
    #[arg(long, value_name = "FILE")]
    pub summary: Option<PathBuf>,
    /// Figure of the residuals against time (and against orbital phase for a binary), .svg or .png.
    #[arg(long, value_name = "FILE")]
    pub figure: Option<PathBuf>,
    /// Print the JSON summary on stdout instead of the result lines.
    #[arg(long)]
    pub json: bool,
    /// Print nothing but warnings and errors (no progress display, no result lines).
    #[arg(long)]
    pub quiet: bool,
}

/// Runs the command.
pub fn run(a: Args) -> Result<()> {
    let clock = super::common::clock_choice(&a.clock, &a.clock_column, "mjd_utc")?;
    let inputs = [a.input.as_path(), a.model.as_path()];
    for out in [Some(&a.output), Some(&a.model_output), a.summary.as_ref(), a.figure.as_ref()].into_iter().flatten() {
        refuse_overwriting_inputs(out, &inputs)?;
    }
    let model_text = std::fs::read_to_string(&a.model).with_context(|| format!("reading {}", a.model.display()))?;
    let start = TimingModel::from_toml(&model_text, &a.model.display().to_string())?;
    let description = a.observer.description()?;
    let source = super::pulse_profile::source_unless_barycentric(clock.as_ref(), &a.source, description.as_ref())?;
    let observer = a.observer.observer_spec(description.as_ref())?;
    super::pulse_profile::note_geocentre(&observer, clock.as_ref(), a.quiet);
    let reference = a.reference_data.load()?;
    let corrector = reference.corrector(source.clone(), DelayOptions::default());
    let request =
        TableRequest { time_column: a.time_column.clone(), clock, clock_column: a.clock_column.clone(), observer };
    let file = a.input.display().to_string();
    let df = read_table(&a.input, &request.text_columns())?;
    let (corrected, correction, geometry) = correct_table_with_geometry(&df, &file, &request, &corrector)?;
    super::common::print_time_warnings(&correction.warnings);
    let mut toas = arrival_times_from_table(&corrected, &file, &start.epoch())?;
    attach_observer_geometry(&mut toas, &geometry);
    let epoch_mjd = start.epoch_mjd_day_tdb as f64 + start.epoch_seconds_of_day_tdb / SECONDS_PER_DAY;
    skyclock::pulsar::timing_fit::check_model_validity(&toas, epoch_mjd, a.model_validity_days)
        .with_context(|| format!("{file}, column '{}'", a.time_column))?;
    let spin = super::common::spinner(
        &format!("fitting {} parameters to {} arrival times", start.fit.len() + 1, toas.len()),
        a.quiet || a.json,
    );
    let solution = fit_timing(&start, &toas, a.max_iterations, &source)
        .with_context(|| format!("fitting {} to {file}", a.model.display()));
    spin.finish_and_clear();
    let solution = solution?;
    let fit = &solution.fit;

    let provenance = Provenance::new(&std::env::args().collect::<Vec<_>>().join(" "))
        .with("stage", "fit-timing")
        .with("input", file.clone())
        .with("model", a.model.display().to_string())
        .with("ephemeris", reference.ephemeris.name())
        .with("leap_seconds", reference.converter.leap_seconds().source());
    let mut residuals = solution.residuals_table(&toas)?;
    write_table(&mut residuals, &a.output, &provenance, &inputs)?;
    if let Some(path) = &a.figure {
        use skyclock::plot::{Figure, Layer, Panel, write_figure};
        let residual_us: Vec<f64> = fit.residual_s.iter().map(|r| r * 1e6).collect();
        let error_us: Vec<f64> = toas.iter().map(|t| t.error_s * 1e6).collect();
        let points = |x: Vec<f64>| Layer::Points {
            label: "residual (1σ)".into(),
            x,
            y: residual_us.clone(),
            y_err: Some(error_us.clone()),
            colour: (40, 70, 150),
            size: 3,
            details: None,
        };
        let mut panels = vec![Panel {
            x_label: "days after the model epoch (TDB)".into(),
            y_label: "residual (µs)".into(),
            layers: vec![points(toas.iter().map(|t| t.t_s / SECONDS_PER_DAY).collect())],
            invert_y: false,
            height_weight: 1,
        }];
        if !solution.orbital_phase_cycles.is_empty() {
            let phase = solution.orbital_phase_cycles.clone();
            panels.push(Panel {
                x_label: "orbital phase from periastron (cycles)".into(),
                y_label: "residual (µs)".into(),
                layers: vec![points(phase)],
                invert_y: false,
                height_weight: 1,
            });
        }
        let height = 380 * panels.len() as u32 + 80;
        let fig = Figure {
            title: format!("{}: timing residuals, χ² = {:.1} for {} degrees of freedom", file, fit.chi2, fit.dof),
            panels,
            width: 1000,
            height,
        };
        write_figure(&fig, path)?;
    }
    let toml_text = fit.model.to_toml()?;
    write_atomically(&a.model_output, |f| std::io::Write::write_all(f, toml_text.as_bytes()))?;
    let outputs: Vec<String> = [Some(&a.output), Some(&a.model_output), a.summary.as_ref(), a.figure.as_ref()]
        .into_iter()
        .flatten()
        .map(|p| p.display().to_string())
        .collect();
    let input_names = inputs.iter().map(|p| p.display().to_string()).collect();
    let text = Summary::new(solution.clone(), provenance, input_names, outputs).to_json()?;
    if let Some(p) = &a.summary {
        write_atomically(p, |f| std::io::Write::write_all(f, text.as_bytes()))?;
    }
    if a.json {
        println!("{text}");
    } else if !a.quiet {
        println!(
            "fitted {} parameters to {} arrival times: χ² = {:.2} for {} degrees of freedom; weighted rms residual {:.3} µs",
            fit.parameters.len(),
            solution.arrival_times,
            fit.chi2,
            fit.dof,
            solution.weighted_rms_residual_us
        );
        for ((n, v), s) in fit.parameters.iter().zip(&fit.values).zip(&fit.uncertainties) {
            println!("  {:<34} {v:>24.15e} ± {s:.3e}", n.to_string());
        }
        if let Some(p) = &solution.position {
            println!(
                "  position at MJD {:.5} (TDB): RA {:.9}° ± {:.3} mas, Dec {:.9}° ± {:.3} mas; proper motion {:.3} ± {:.3} mas/yr east, {:.3} ± {:.3} mas/yr north",
                p.epoch_mjd_tdb,
                p.ra_deg,
                p.ra_uncertainty_mas,
                p.dec_deg,
                p.dec_uncertainty_mas,
                p.proper_motion_ra_mas_per_yr,
                p.proper_motion_ra_uncertainty_mas_per_yr,
                p.proper_motion_dec_mas_per_yr,
                p.proper_motion_dec_uncertainty_mas_per_yr
            );
        }
    }
    Ok(())
}
