//! `skyclock timing-residuals`: event timings in any clock → BJD_TDB → cycle numbers and
//! observed-minus-computed values against a reference ephemeris → fitted ephemeris models
//! with covariance and bootstrap uncertainties, and a verdict on which model the data need.

use std::path::PathBuf;

use anyhow::{Context, Result, bail};
use clap::Args as ClapArgs;

use super::timing_table::TimingTableArgs;
use skyclock::oc::{
    AnalysisOptions, BootstrapOptions, CycleOptions, FitOptions, LIGHT_TIME_CAUTION, ModelKind, ReferenceEphemeris,
    analyse, information,
};
use skyclock::table::{Provenance, Summary, write_table};
use skyclock::time::{TimeFormat, TimeScale, parse_time};

const EXAMPLE: &str = "Example (invented star):
  skyclock timing-residuals --input minima.csv --time-column time --clock hjd_utc \\
      --error-column error_d --kind-column kind --source-file star.toml \\
      --epoch-bjd-tdb 2451234.56789 --period-d 0.7345123 --period-sigma-d 2e-7 \\
      --models linear,quadratic,quadratic+light-time --bootstrap 500 \\
      --output residuals.csv --summary residuals.json --figure oc.svg --orbit-figure orbit.svg

  The kind column holds primary / secondary / maximum (secondaries get half cycles); errors
  are 1σ in days. The output table has, per timing in time order: row, bjd_tdb, cycle,
  kind, source, error_d, observed_minus_computed_d and, per model, model_<name>_d,
  model_sigma_<name>_d and residual_<name>_d (the data of an O–C diagram with its model
  and 1σ band). The summary JSON holds parameters, covariance and bootstrap errors, derived
  quantities (dP/dt in s/yr, light-time semi-amplitude in s, a12 sin i in au, mass
  function, minimum companion mass) and the model comparison.";

/// Arguments of `skyclock timing-residuals`.
#[derive(Debug, ClapArgs)]
#[command(after_help = EXAMPLE)]
pub struct Args {
    #[command(flatten)]
    pub table: TimingTableArgs,
    /// Column naming the source/observer of each timing (for --rescale-per-source).
    #[arg(long, value_name = "COLUMN")]
    pub origin_column: Option<String>,
    /// Reference epoch of a primary event (cycle 0), BJD_TDB as a Julian Date.
    #[arg(long, value_name = "JD")]
    pub epoch_bjd_tdb: String,
    /// Reference period, days.
    #[arg(long, value_name = "DAYS")]
    pub period_d: f64,
    /// 1σ uncertainty of the reference period, days (for the cycle-count ambiguity check).
    #[arg(long, value_name = "DAYS", default_value_t = 0.0)]
    pub period_sigma_d: f64,
    /// Keep going when the cycle count is ambiguous (a warning instead of an error).
    #[arg(long)]
    pub allow_ambiguous_cycles: bool,
    /// Models to fit, comma-separated: linear, quadratic, light-time, quadratic+light-time,
    /// two-light-time, quadratic+two-light-time (two companions); or alone `apsidal` or
    /// `apsidal+light-time` (apsidal motion of an eccentric orbit from primary and secondary
    /// minima fitted together, optionally with a light-time companion).
    #[arg(long, value_name = "LIST", default_value = "linear,quadratic")]
    pub models: String,
    #[command(flatten)]
    pub apsidal: super::apsidal_residuals::ApsidalArgs,
    /// Companion periods to search, days: LOW,HIGH (default from the data span).
    #[arg(long, value_name = "LOW,HIGH")]
    pub companion_period_range_d: Option<String>,
    /// Rescale each origin's errors to reduced χ² = 1.
    #[arg(long)]
    pub rescale_per_source: bool,
    /// Down-weight outlying timings with Huber's robust loss (iteratively reweighted least
    /// squares); the notes list the rows that lost more than half their weight.
    #[arg(long)]
    pub robust_loss: bool,
    /// Tuning constant of the robust loss, in units of each timing's 1σ (1.345: 95 %
    /// efficiency for Gaussian errors).
    #[arg(long, value_name = "K", default_value_t = skyclock::fit::robust::HUBER_DEFAULT_K, requires = "robust_loss")]
    pub robust_tuning_constant: f64,
    /// Bootstrap resamples (0: covariance errors only).
    #[arg(long, value_name = "N", default_value_t = 0)]
    pub bootstrap: usize,
    /// Seed of the bootstrap.
    #[arg(long, value_name = "SEED", default_value_t = 1)]
    pub seed: u64,
    /// Mass of the eclipsing pair M1+M2, solar masses (for the minimum companion mass).
    #[arg(long, value_name = "MSUN")]
    pub binary_mass_msun: Option<f64>,
    /// Output O–C table (.csv, .tsv or .parquet).
    #[arg(long, value_name = "FILE")]
    pub output: PathBuf,
    /// JSON summary file.
    #[arg(long, value_name = "FILE")]
    pub summary: Option<PathBuf>,
    /// O–C diagram (.svg or .png): timings coded by origin or kind, the model preferred by
    /// BIC with its 1σ band, and a residuals panel.
    #[arg(long, value_name = "FILE")]
    pub figure: Option<PathBuf>,
    /// Light-time orbit figure (.svg or .png) of the preferred light-time model, if one was fitted.
    #[arg(long, value_name = "FILE")]
    pub orbit_figure: Option<PathBuf>,
    /// Companion orbital phases the orbit figure shows, cycles: START,END (each timing at
    /// every copy of its phase inside, so periastron is seen whole; at most 4 cycles wide).
    #[arg(long, value_name = "START,END", default_value = "-0.25,1.25", allow_hyphen_values = true)]
    pub phase_range: skyclock::plot::PhaseRange,
    /// Print the JSON summary on stdout.
    #[arg(long)]
    pub json: bool,
    /// Print nothing but warnings and errors: no progress display, no notes, no result lines
    /// (--json still prints).
    #[arg(long)]
    pub quiet: bool,
}

/// Parses an option LOW,HIGH in days (`None` when not given).
pub(super) fn parse_range_d(option: &str, text: Option<&str>) -> Result<Option<(f64, f64)>> {
    let Some(t) = text else { return Ok(None) };
    let v: Vec<f64> = t
        .split(',')
        .map(|x| x.trim().parse::<f64>())
        .collect::<Result<_, _>>()
        .with_context(|| format!("{option} '{t}': expected LOW,HIGH in days"))?;
    if v.len() != 2 {
        bail!("{option} '{t}': expected two numbers LOW,HIGH");
    }
    Ok(Some((v[0], v[1])))
}

/// Runs the command.
pub fn run(a: Args) -> Result<()> {
    if let Some(light_time) = super::apsidal_residuals::apsidal_model(&a.models)? {
        return super::apsidal_residuals::run(a, light_time);
    }
    let models: Vec<ModelKind> = a
        .models
        .split(',')
        .map(|m| ModelKind::parse(m).with_context(|| format!("--models: unknown model '{m}'; use linear, quadratic, light-time, quadratic+light-time, two-light-time or quadratic+two-light-time, or apsidal / apsidal+light-time alone")))
        .collect::<Result<_>>()?;
    let range = parse_range_d("--companion-period-range-d", a.companion_period_range_d.as_deref())?;
    let table = a.table.read("hjd_utc", a.origin_column.as_deref())?;
    let (file, source, reference) = (&table.file, &table.source, &table.reference);
    let timings = table.read.timings.clone();
    let epoch = parse_time(&a.epoch_bjd_tdb, TimeFormat::Jd, TimeScale::Tdb, reference.converter.leap_seconds())
        .map_err(|e| anyhow::anyhow!("--epoch-bjd-tdb '{}': {e}", a.epoch_bjd_tdb))?;
    let eph = ReferenceEphemeris { epoch, period_d: a.period_d, period_sigma_d: a.period_sigma_d };
    let options = AnalysisOptions {
        models,
        cycles: CycleOptions { allow_ambiguous: a.allow_ambiguous_cycles },
        fit: FitOptions {
            rescale_per_source: a.rescale_per_source,
            companion_period_range_d: range,
            huber_k: a.robust_loss.then_some(a.robust_tuning_constant),
            ..Default::default()
        },
        bootstrap: (a.bootstrap > 0).then_some(BootstrapOptions { resamples: a.bootstrap, seed: a.seed }),
        binary_mass_msun: a.binary_mass_msun,
    };
    if options.models.iter().any(|m| m.has_light_time()) {
        eprintln!("{LIGHT_TIME_CAUTION}");
    }
    // One progress bar per model's bootstrap; the library reports which model it is on.
    let bar: std::sync::Mutex<Option<indicatif::ProgressBar>> = std::sync::Mutex::new(None);
    let n_timings = timings.len();
    let on_model = |m: ModelKind, _index: usize| {
        if let Some(pb) = bar.lock().unwrap_or_else(|e| e.into_inner()).take() {
            pb.finish_and_clear();
        }
        let pb = if a.bootstrap > 0 {
            super::common::progress_bar(
                a.bootstrap as u64,
                &format!("fitting and bootstrap of the {} model", m.name()),
                a.quiet,
            )
        } else {
            super::common::spinner(&format!("fitting the {} model to {n_timings} timings", m.name()), a.quiet)
        };
        *bar.lock().unwrap_or_else(|e| e.into_inner()) = Some(pb);
    };
    let progress = |n: u64| {
        if let Some(pb) = bar.lock().unwrap_or_else(|e| e.into_inner()).as_ref() {
            pb.inc(n);
        }
    };
    let analysis = analyse(&timings, &eph, &options, &on_model, &progress);
    if let Some(pb) = bar.lock().unwrap_or_else(|e| e.into_inner()).take() {
        pb.finish_and_clear();
    }
    let analysis = analysis.map_err(|e| anyhow::anyhow!("{file}: {e}"))?;
    let series = analysis.series.as_ref().context("the analysis kept no O–C series")?;
    let fits = &analysis.fits;
    let mut out = analysis.table().context("building the output table")?;
    let provenance = Provenance::new(&std::env::args().collect::<Vec<_>>().join(" "))
        .with("stage", "timing-residuals")
        .with("input", file.clone())
        .with("ephemeris", reference.ephemeris.name())
        .with("reference_epoch_bjd_tdb", a.epoch_bjd_tdb.clone())
        .with("reference_period_d", a.period_d.to_string());
    write_table(&mut out, &a.output, &provenance, &[a.table.input.as_path()])?;
    let title = format!("O − C of {}", source.name);
    let observer_tdb = &table.read.observer_tdb;
    let hover =
        skyclock::plot::timing::HoverTimes { converter: &reference.converter, observer_tdb: Some(observer_tdb) };
    if let Some(path) = &a.figure {
        skyclock::table::write::refuse_overwriting_inputs(path, &[a.table.input.as_path()])?;
        let best = analysis.best_by_bic(false).context("no model was fitted")?;
        skyclock::plot::write_figure(&skyclock::plot::timing::oc_diagram(&title, series, best, &hover), path)?;
    }
    if let Some(path) = &a.orbit_figure {
        skyclock::table::write::refuse_overwriting_inputs(path, &[a.table.input.as_path()])?;
        let best = analysis
            .best_by_bic(true)
            .context("--orbit-figure needs a light-time model in --models (light-time or quadratic+light-time)")?;
        if let Some(fig) = skyclock::plot::timing::light_time_orbit(&title, series, best, a.phase_range, &hover) {
            skyclock::plot::write_figure(&fig, path)?;
        }
    }
    let mut outputs = vec![a.output.display().to_string()];
    outputs.extend(a.summary.iter().chain(&a.figure).chain(&a.orbit_figure).map(|p| p.display().to_string()));
    let text = Summary::new(analysis.clone(), provenance, vec![file.clone()], outputs).to_json()?;
    if let Some(path) = &a.summary {
        super::common::write_text(path, &text, &[a.table.input.as_path()])?;
    }
    for w in &series.warnings {
        eprintln!("warning: {w}");
    }
    if a.json {
        println!("{text}");
    } else if !a.quiet {
        println!(
            "{} timings on cycles {} … {} → {}",
            series.len(),
            series.cycle.first().unwrap_or(&0.0),
            series.cycle.last().unwrap_or(&0.0),
            a.output.display()
        );
        for f in fits {
            let i = information(f);
            println!(
                "  {:<22} χ² = {:.1} for {} dof (reduced {:.2}), BIC = {:.1}",
                i.model, i.chi2, i.dof, i.reduced_chi2, i.bic
            );
        }
        for v in &analysis.verdicts {
            println!("  {v}");
        }
    }
    Ok(())
}
