//! The invented transiting planet of the demo, Maren Vale b: a transit campaign from the
//! invented Larkspur Knoll Observatory (times already reduced to BJD_TDB by the observers),
//! 28 transits over ~230 days with a sinusoidal transit timing variation, made from one
//! true shape ([`true_shape`]) with `transit::TransitShape::flux`. The demo times every
//! transit (`time-transits`), draws the O–C (`timing-residuals`) and fits the TTV
//! (`transit::fit_sinusoidal_ttv`).
//!
//! The campaign is idealised: every chosen transit is observed in full at night; real
//! ground-based campaigns lose many to daylight and weather.

use std::f64::consts::TAU;
use std::fmt::Write as _;
use std::path::Path;

use anyhow::{Context, Result};
use clap::Parser;

use super::chain::Comparison;
use super::random::SeededRandom;
use skyclock::oc::{CycleOptions, ReferenceEphemeris, assign_cycles};
use skyclock::report::{ReportFigure, Section};
use skyclock::time::{LeapSecondTable, TimeFormat, TimeScale, parse_time};
use skyclock::transit::{
    QuadraticLimbDarkening, TransitShape, TransitTimingReport, TtvSearchOptions, fit_sinusoidal_ttv,
};

/// The photometry of the campaign (BJD_TDB, relative flux, its error).
pub const PLANET_PHOTOMETRY_FILE: &str = "maren_vale_transits_photometry.csv";
/// True mid-transit epoch (cycle 0), BJD_TDB.
pub const TRUE_EPOCH_BJD_TDB: f64 = 2_460_612.381_27;
/// True mean orbital period, days.
pub const TRUE_PERIOD_D: f64 = 3.734_219_6;
/// True TTV semi-amplitude, seconds.
pub const TRUE_TTV_AMPLITUDE_S: f64 = 150.0;
/// True TTV period, cycles.
pub const TRUE_TTV_PERIOD_CYCLES: f64 = 13.4;
const TRUE_TTV_PHASE_RAD: f64 = 0.7;
const NOISE: f64 = 1.2e-3;
const CADENCE_D: f64 = 2.0 / 1440.0;

/// The true transit shape (invented).
pub fn true_shape() -> TransitShape {
    TransitShape {
        radius_ratio: 0.105,
        scaled_semi_major_axis: 10.8,
        impact_parameter: 0.32,
        limb_darkening: QuadraticLimbDarkening { u1: 0.44, u2: 0.21 },
        eccentricity: 0.0,
        periastron_argument_rad: 0.0,
    }
}

/// The true mid-time of cycle `e`, days after the epoch.
pub fn true_mid_d(e: i64) -> f64 {
    let e = e as f64;
    e * TRUE_PERIOD_D + TRUE_TTV_AMPLITUDE_S / 86_400.0 * (TAU * e / TRUE_TTV_PERIOD_CYCLES + TRUE_TTV_PHASE_RAD).sin()
}

/// Writes the campaign's photometry into `folder`: 28 of the first 62 cycles, each observed
/// from 0.15 d before to 0.15 d after its predicted mid-time every 2 minutes (a few points lost
/// at random), Gaussian noise of 1.2e-3, a nightly baseline level and drift; cycle 41 lost
/// its second half to cloud.
pub fn write_planet_datasets(folder: &Path, seed: u64) -> Result<()> {
    let mut rng = SeededRandom::new(seed ^ 0x0074_7261_6e73_6974);
    let shape = true_shape();
    let mut csv = String::from("bjd_tdb,flux,flux_err\n");
    let mut chosen = 0;
    for e in 0..62i64 {
        if chosen >= 28 || rng.uniform() > 0.5 {
            continue;
        }
        chosen += 1;
        let mid = true_mid_d(e);
        let level = 1.0 + 0.004 * (rng.uniform() - 0.5);
        let drift = 0.004 * (rng.uniform() - 0.5);
        let centre = e as f64 * TRUE_PERIOD_D;
        let n = (0.30 / CADENCE_D) as usize;
        for i in 0..n {
            let t = centre - 0.15 + i as f64 * CADENCE_D;
            if rng.uniform() < 0.05 || (e == 41 && t > centre + 0.01) {
                continue;
            }
            let f = (level + drift * (t - centre)) * shape.flux(TRUE_PERIOD_D, t - mid, &[0.0]) + NOISE * rng.normal();
            writeln!(csv, "{:.10},{f:.6},{NOISE}", TRUE_EPOCH_BJD_TDB + t)?;
        }
    }
    std::fs::write(folder.join(PLANET_PHOTOMETRY_FILE), csv)?;
    Ok(())
}

fn command(args: &[String]) -> Result<()> {
    let cli = crate::cli::Cli::try_parse_from(std::iter::once("skyclock".to_string()).chain(args.iter().cloned()))
        .map_err(|e| anyhow::anyhow!("demo stage arguments: {e}"))?;
    crate::cli::run(cli)
}

fn comparison(quantity: &str, value: f64, sigma: f64, truth: f64, digits: usize) -> Comparison {
    Comparison {
        quantity: quantity.to_string(),
        recovered: format!("{value:.digits$} ± {sigma:.digits$}"),
        truth: format!("{truth:.digits$}"),
        deviation_sigma: (sigma > 0.0).then(|| (value - truth).abs() / sigma),
    }
}

/// The planet stage of the demo: mid-transit times, O–C, TTV; returns the comparisons with
/// the truth and the report section.
pub fn run_planet_stage(data: &Path, out: &Path) -> Result<(Vec<Comparison>, Section)> {
    let d = data.join(PLANET_PHOTOMETRY_FILE).display().to_string();
    let o = |name: &str| out.join(name).display().to_string();
    // Start from a slightly wrong ephemeris and shape, as an observer would.
    let (epoch, period) = ("2460612.3809", "3.734230");
    println!("\n== 8. planet: transits of Maren Vale b (BJD_TDB photometry) → shared shape and mid-transit times");
    let args: Vec<String> = [
        "time-transits",
        "--input",
        &d,
        "--time-column",
        "bjd_tdb",
        "--value-column",
        "flux",
        "--error-column",
        "flux_err",
        "--epoch-bjd-tdb",
        epoch,
        "--period-d",
        period,
        "--radius-ratio",
        "0.1",
        "--semi-major-axis-stellar-radii",
        "10",
        "--impact-parameter",
        "0.3",
        "--output",
        &o("maren_vale_transit_times.csv"),
        "--skipped-output",
        &o("maren_vale_transits_skipped.csv"),
        "--summary",
        &o("maren_vale_transit_times.json"),
    ]
    .iter()
    .map(|s| s.to_string())
    .collect();
    command(&args)?;
    println!("\n== 9. planet: O–C of the mid-transit times → linear ephemeris; sinusoidal TTV in the library");
    let args: Vec<String> = [
        "timing-residuals",
        "--input",
        &o("maren_vale_transit_times.csv"),
        "--time-column",
        "time",
        "--clock",
        "bjd_tdb",
        "--error-column",
        "error_d",
        "--kind-column",
        "kind",
        "--epoch-bjd-tdb",
        epoch,
        "--period-d",
        period,
        "--models",
        "linear",
        "--output",
        &o("maren_vale_oc.csv"),
        "--figure",
        &o("maren_vale_oc.svg"),
    ]
    .iter()
    .map(|s| s.to_string())
    .collect();
    command(&args)?;
    let text = std::fs::read_to_string(out.join("maren_vale_transit_times.json"))?;
    let report: TransitTimingReport =
        serde_json::from_str::<skyclock::table::Summary<TransitTimingReport>>(&text).context("transit summary")?.result;
    let leap = LeapSecondTable::builtin();
    let epoch_instant = parse_time(epoch, TimeFormat::Jd, TimeScale::Tdb, &leap)?;
    let ephemeris = ReferenceEphemeris { epoch: epoch_instant, period_d: period.parse()?, period_sigma_d: 0.0 };
    let series = assign_cycles(&report.timings()?, &ephemeris, &CycleOptions::default())?;
    let ttv = fit_sinusoidal_ttv(&series, &TtvSearchOptions::default())?;
    let fap =
        skyclock::periodogram::significance::format_log10_probability(ttv.periodogram.log10_false_alarm_probability);
    println!(
        "TTV: A = {:.1} ± {:.1} s, period {:.2} ± {:.2} cycles, O–C periodogram false-alarm probability {fap}",
        ttv.amplitude_d.value * 86_400.0,
        ttv.amplitude_d.sigma.unwrap_or(f64::NAN) * 86_400.0,
        ttv.ttv_period_cycles.value,
        ttv.ttv_period_cycles.sigma.unwrap_or(f64::NAN)
    );
    let sigma = |v: &skyclock::transit::FittedValue| v.sigma.unwrap_or(f64::NAN);
    let s = &report.shape;
    let comparisons = vec![
        comparison(
            "planet radius ratio Rp/R*",
            s.radius_ratio.value,
            sigma(&s.radius_ratio),
            true_shape().radius_ratio,
            4,
        ),
        comparison(
            "planet TTV semi-amplitude (s)",
            ttv.amplitude_d.value * 86_400.0,
            sigma(&ttv.amplitude_d) * 86_400.0,
            TRUE_TTV_AMPLITUDE_S,
            1,
        ),
        comparison(
            "planet TTV period (cycles)",
            ttv.ttv_period_cycles.value,
            sigma(&ttv.ttv_period_cycles),
            TRUE_TTV_PERIOD_CYCLES,
            2,
        ),
        comparison("planet mean period (d)", ttv.period_d.value, sigma(&ttv.period_d), TRUE_PERIOD_D, 7),
    ];
    let svg = std::fs::read_to_string(out.join("maren_vale_oc.svg")).context("reading the O–C figure")?;
    let section = Section::new("Transiting planet Maren Vale b")
        .with_paragraph(&format!(
            "{} transits timed with one shared transit shape (Mandel & Agol model, quadratic limb darkening; {} skipped); \
             median mid-time error {:.0} s. A sinusoidal timing variation fitted to the O–C: semi-amplitude {:.0} ± {:.0} s, \
             period {:.1} ± {:.1} cycles; false-alarm probability of the O–C periodogram peak {fap}.",
            report.transits.len(),
            report.skipped.len(),
            report.median_error_d * 86_400.0,
            ttv.amplitude_d.value * 86_400.0,
            sigma(&ttv.amplitude_d) * 86_400.0,
            ttv.ttv_period_cycles.value,
            sigma(&ttv.ttv_period_cycles)
        ))
        .with_figure(ReportFigure {
            caption: "O–C of the mid-transit times against the linear ephemeris: the timing variation.".into(),
            svg,
        });
    Ok((comparisons, section))
}
