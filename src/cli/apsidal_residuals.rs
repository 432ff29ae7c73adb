//! `skyclock timing-residuals --models apsidal`: primary and secondary minima → BJD_TDB →
//! cycle numbers → the apsidal-motion fit of `oc::apsidal` (eccentricity, ω₀, dω/dE, the
//! apsidal period, optionally a light-time companion), its table, summary and figure.

use anyhow::{Context, Result, bail};
use clap::Args as ClapArgs;

use super::timing_residuals::{Args, parse_range_d};
use skyclock::oc::apsidal::{ApsidalOptions, analyse_apsidal};
use skyclock::oc::eclipse_times::MinimumTimeMethod;
use skyclock::oc::{BootstrapOptions, CycleOptions, EventKind, ReferenceEphemeris};
use skyclock::table::{Provenance, Summary, write_table};
use skyclock::time::{TimeFormat, TimeScale, parse_time};

/// Options of the apsidal-motion models (used with `--models apsidal` or
/// `--models apsidal+light-time`).
#[derive(Debug, Clone, ClapArgs)]
pub struct ApsidalArgs {
    /// Orbital inclination, degrees (apsidal models): fixed, or the start with --fit-inclination.
    #[arg(long, value_name = "DEG", default_value_t = 90.0)]
    pub inclination_deg: f64,
    /// Fit the inclination too (apsidal models; timings alone constrain it weakly).
    #[arg(long)]
    pub fit_inclination: bool,
    /// How the apsidal models compute times of minimum: exact (Kepler's equation and the
    /// minimum of the projected separation) or series (in e to e⁵).
    #[arg(long, value_name = "METHOD", default_value = "exact", value_parser = parse_method)]
    pub minimum_time_method: MinimumTimeMethod,
    /// Apsidal periods to search, days: LOW,HIGH (default a tenth of the span to 50 spans).
    #[arg(long, value_name = "LOW,HIGH")]
    pub apsidal_period_range_d: Option<String>,
}

fn parse_method(text: &str) -> Result<MinimumTimeMethod, String> {
    MinimumTimeMethod::parse(text).ok_or_else(|| format!("unknown method '{text}'; use exact or series"))
}

/// `Some(light_time)` when `--models` names an apsidal model (which must stand alone),
/// `None` for the other models.
pub fn apsidal_model(models: &str) -> Result<Option<bool>> {
    let names: Vec<String> = models.split(',').map(|m| m.trim().to_ascii_lowercase()).collect();
    let is_apsidal = |m: &str| m == "apsidal" || m == "apsidal+light-time";
    if !names.iter().any(|m| is_apsidal(m)) {
        return Ok(None);
    }
    if names.len() != 1 {
        bail!("--models '{models}': an apsidal model is fitted on its own; give apsidal or apsidal+light-time alone");
    }
    Ok(Some(names[0] == "apsidal+light-time"))
}

/// Runs the apsidal-motion fit of `timing-residuals`.
pub fn run(a: Args, light_time: bool) -> Result<()> {
    let apsidal_range = parse_range_d("--apsidal-period-range-d", a.apsidal.apsidal_period_range_d.as_deref())?;
    let companion_range = parse_range_d("--companion-period-range-d", a.companion_period_range_d.as_deref())?;
    if a.rescale_per_source || a.robust_loss {
        bail!("--rescale-per-source and --robust-loss are not available with the apsidal models");
    }
    if a.orbit_figure.is_some() {
        bail!("--orbit-figure is drawn for the light-time models; with apsidal models use --figure");
    }
    let kind_column = a.table.kind_column.clone().context(
        "the apsidal models need primary and secondary minima: name the column of event kinds with --kind-column",
    )?;
    let table = a.table.read("hjd_utc", a.origin_column.as_deref())?;
    let (file, source, reference) = (&table.file, &table.source, &table.reference);
    let timings = table.read.timings.clone();
    if let Some(t) = timings.iter().find(|t| t.kind == EventKind::Maximum) {
        bail!(
            "{file}: row {}, column '{kind_column}': a maximum cannot enter an apsidal-motion fit; give primary and secondary minima only",
            t.row
        );
    }
    let epoch = parse_time(&a.epoch_bjd_tdb, TimeFormat::Jd, TimeScale::Tdb, reference.converter.leap_seconds())
        .map_err(|e| anyhow::anyhow!("--epoch-bjd-tdb '{}': {e}", a.epoch_bjd_tdb))?;
    let eph = ReferenceEphemeris { epoch, period_d: a.period_d, period_sigma_d: a.period_sigma_d };
    let options = ApsidalOptions {
        method: a.apsidal.minimum_time_method,
        inclination_deg: a.apsidal.inclination_deg,
        fit_inclination: a.apsidal.fit_inclination,
        light_time,
        apsidal_period_range_d: apsidal_range,
        companion_period_range_d: companion_range,
        cycles: CycleOptions { allow_ambiguous: a.allow_ambiguous_cycles },
        bootstrap: (a.bootstrap > 0).then_some(BootstrapOptions { resamples: a.bootstrap, seed: a.seed }),
        ..Default::default()
    };
    let model = if light_time { "apsidal+light-time" } else { "apsidal" };
    let pb = if a.bootstrap > 0 {
        super::common::progress_bar(a.bootstrap as u64, &format!("fitting and bootstrap of the {model} model"), a.quiet)
    } else {
        super::common::spinner(&format!("fitting the {model} model to {} minima", timings.len()), a.quiet)
    };
    let analysis = analyse_apsidal(&timings, &eph, &options, &|n| pb.inc(n));
    pb.finish_and_clear();
    let analysis = analysis.map_err(|e| anyhow::anyhow!("{file}: {e}"))?;
    let mut out = analysis.table().context("building the output table")?;
    let provenance = Provenance::new(&std::env::args().collect::<Vec<_>>().join(" "))
        .with("stage", "timing-residuals")
        .with("model", model)
        .with("input", file.clone())
        .with("ephemeris", reference.ephemeris.name())
        .with("reference_epoch_bjd_tdb", a.epoch_bjd_tdb.clone())
        .with("reference_period_d", a.period_d.to_string());
    let inputs = [a.table.input.as_path()];
    write_table(&mut out, &a.output, &provenance, &inputs)?;
    if let Some(path) = &a.figure {
        skyclock::table::write::refuse_overwriting_inputs(path, &inputs)?;
        let title = format!("Apsidal motion of {}", source.name);
        let fig = skyclock::plot::apsidal::apsidal_diagram(&title, &analysis).context("the analysis kept no fit")?;
        skyclock::plot::write_figure(&fig, path)?;
    }
    let mut outputs = vec![a.output.display().to_string()];
    outputs.extend(a.summary.iter().chain(&a.figure).map(|p| p.display().to_string()));
    let text = Summary::new(analysis.clone(), provenance, vec![file.clone()], outputs).to_json()?;
    if let Some(path) = &a.summary {
        super::common::write_text(path, &text, &inputs)?;
    }
    for w in &analysis.warnings {
        eprintln!("warning: {w}");
    }
    for c in &analysis.cautions {
        eprintln!("{c}");
    }
    if a.json {
        println!("{text}");
    } else if !a.quiet {
        println!(
            "{} minima ({} primary, {} secondary) → {}",
            analysis.timings,
            analysis.primaries,
            analysis.secondaries,
            a.output.display()
        );
        println!(
            "  {model:<22} χ² = {:.1} for {} dof (reduced {:.2}), ΔBIC against a linear ephemeris {:.1}",
            analysis.chi2, analysis.dof, analysis.reduced_chi2, analysis.delta_bic_vs_linear
        );
        for d in &analysis.derived {
            let sigma = d.sigma_bootstrap.or(d.sigma_covariance).map_or("—".to_string(), |s| format!("{s:.3e}"));
            println!("  {:<40} {:>16.8} ± {sigma}", d.name, d.value);
        }
        for n in &analysis.notes {
            println!("  note: {n}");
        }
    }
    Ok(())
}
