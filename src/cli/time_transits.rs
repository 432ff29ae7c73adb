//! `skyclock time-transits`: fit one transit shape (Mandel & Agol 2002 model) shared by all
//! transits of a light curve, then each transit's mid-time with its error inflated for
//! correlated noise; the table it writes is read directly by `timing-residuals`.

use std::path::PathBuf;

use anyhow::{Result, bail};
use clap::Args as ClapArgs;

use super::common::write_text;
use super::light_curve_input::LightCurveArgs;
use skyclock::oc::ReferenceEphemeris;
use skyclock::table::{Provenance, Summary, write_table};
use skyclock::time::{TimeFormat, TimeScale, parse_time};
use skyclock::transit::{
    Exposure, QuadraticLimbDarkening, TransitCurve, TransitShape, TransitTimingOptions, TransitTimingRequest,
    time_transits,
};

const EXAMPLE: &str = "Example (invented star):
  skyclock time-transits --input maren_vale_flux.csv --time-column bjd --value-column flux \\
      --error-column flux_err --epoch-bjd-tdb 2460301.41870 --period-d 3.2171854 \\
      --radius-ratio 0.11 --semi-major-axis-stellar-radii 9.5 --impact-parameter 0.35 \\
      --limb-darkening 0.42,0.22 --output maren_vale_transits.csv --summary maren_vale_transits.json

  The shape (radius ratio, a/R*, impact parameter, limb darkening) is fitted once to all
  transits folded at the ephemeris, then each transit's mid-time with its own linear
  baseline. The output table has, per transit: cycle, time (BJD_TDB Julian Date,
  14 decimals), error_d (white-noise error × beta), kind, error_white_d, beta,
  reduced_chi2, points, points_in_transit, predicted_bjd_tdb, offset_from_prediction_d,
  baseline_flux, baseline_slope_per_d, first_row, last_row, flags. Feed it to
  timing-residuals with --time-column time --clock bjd_tdb --error-column error_d.
  Values must be fluxes (any constant level), not magnitudes. For long cadences give
  --exposure-d (the model is then averaged over each exposure).";

/// Arguments of `skyclock time-transits`.
#[derive(Debug, ClapArgs)]
#[command(after_help = EXAMPLE)]
pub struct Args {
    #[command(flatten)]
    pub light_curve: LightCurveArgs,
    /// A mid-transit time (cycle 0), BJD_TDB as a Julian Date.
    #[arg(long, value_name = "JD")]
    pub epoch_bjd_tdb: String,
    /// Orbital period, days.
    #[arg(long, value_name = "DAYS")]
    pub period_d: f64,
    /// Starting planet-to-star radius ratio Rp/R*.
    #[arg(long, value_name = "RATIO")]
    pub radius_ratio: f64,
    /// Starting semi-major axis in stellar radii (a/R*).
    #[arg(long, value_name = "RADII")]
    pub semi_major_axis_stellar_radii: f64,
    /// Starting impact parameter, stellar radii.
    #[arg(long, value_name = "RADII", default_value_t = 0.3)]
    pub impact_parameter: f64,
    /// Quadratic limb-darkening coefficients U1,U2 (starting values, or the values held).
    #[arg(long, value_name = "U1,U2", default_value = "0.4,0.25")]
    pub limb_darkening: String,
    /// Hold the limb darkening at --limb-darkening instead of fitting it.
    #[arg(long)]
    pub hold_limb_darkening: bool,
    /// Orbital eccentricity (held fixed).
    #[arg(long, value_name = "E", default_value_t = 0.0)]
    pub eccentricity: f64,
    /// Argument of periastron of the planet's orbit, degrees (held fixed; with --eccentricity).
    #[arg(long, value_name = "DEG", default_value_t = 90.0)]
    pub periastron_argument_deg: f64,
    /// Half-width of the window around each predicted mid-time, days (default: the
    /// starting shape's total duration).
    #[arg(long, value_name = "DAYS")]
    pub half_width_d: Option<f64>,
    /// Length of each exposure, days: the model is averaged over it (0: instantaneous).
    #[arg(long, value_name = "DAYS", default_value_t = 0.0)]
    pub exposure_d: f64,
    /// Instants averaged per exposure (default: enough for 1e-5 in flux).
    #[arg(long, value_name = "N")]
    pub exposure_samples: Option<usize>,
    /// Fewest points in a window.
    #[arg(long, value_name = "N", default_value_t = 20)]
    pub min_points: usize,
    /// Fewest points between first and fourth contact.
    #[arg(long, value_name = "N", default_value_t = 5)]
    pub min_points_in_transit: usize,
    /// Fit the shape only once, at the reference ephemeris (no second pass folded at the
    /// measured mid-times).
    #[arg(long)]
    pub single_pass: bool,
    /// Timing table (.csv, .tsv or .parquet).
    #[arg(long, value_name = "FILE")]
    pub output: PathBuf,
    /// Table of skipped transits with their reasons (.csv, .tsv or .parquet).
    #[arg(long, value_name = "FILE")]
    pub skipped_output: Option<PathBuf>,
    /// JSON summary file.
    #[arg(long, value_name = "FILE")]
    pub summary: Option<PathBuf>,
    /// Print the JSON summary on stdout.
    #[arg(long)]
    pub json: bool,
    /// Print nothing but warnings and errors: no notes, no result lines (--json still prints).
    #[arg(long)]
    pub quiet: bool,
}

fn limb_darkening(text: &str) -> Result<QuadraticLimbDarkening> {
    let parts: Vec<&str> = text.split(',').map(str::trim).collect();
    let [u1, u2] = parts.as_slice() else {
        bail!("--limb-darkening '{text}': give two numbers U1,U2 (e.g. 0.4,0.25)");
    };
    let parse = |s: &str| s.parse::<f64>().ok().filter(|v| v.is_finite());
    match (parse(u1), parse(u2)) {
        (Some(u1), Some(u2)) => Ok(QuadraticLimbDarkening { u1, u2 }),
        _ => bail!("--limb-darkening '{text}': U1 and U2 must be finite numbers (e.g. 0.4,0.25)"),
    }
}

/// Runs the command.
pub fn run(a: Args) -> Result<()> {
    if a.light_curve.band_column.is_some() {
        bail!(
            "--band-column: time-transits fits one band at a time; select one band's rows into their own table first"
        );
    }
    if !(a.period_d.is_finite() && a.period_d > 0.0) {
        bail!("--period-d must be a positive number of days, got {}", a.period_d);
    }
    if !(a.radius_ratio.is_finite() && a.radius_ratio > 0.0 && a.radius_ratio < 1.0) {
        bail!("--radius-ratio must lie between 0 and 1, got {}", a.radius_ratio);
    }
    if !(a.semi_major_axis_stellar_radii.is_finite() && a.semi_major_axis_stellar_radii > 1.0) {
        bail!("--semi-major-axis-stellar-radii must exceed 1, got {}", a.semi_major_axis_stellar_radii);
    }
    if !(a.eccentricity.is_finite() && (0.0..1.0).contains(&a.eccentricity)) {
        bail!("--eccentricity must lie in [0, 1), got {}", a.eccentricity);
    }
    if !(a.exposure_d.is_finite() && a.exposure_d >= 0.0) {
        bail!("--exposure-d must be ≥ 0 days, got {}", a.exposure_d);
    }
    if a.exposure_samples == Some(0) {
        bail!("--exposure-samples must be at least 1");
    }
    let ld = limb_darkening(&a.limb_darkening)?;
    let start = TransitShape {
        radius_ratio: a.radius_ratio,
        scaled_semi_major_axis: a.semi_major_axis_stellar_radii,
        impact_parameter: a.impact_parameter,
        limb_darkening: ld,
        eccentricity: a.eccentricity,
        periastron_argument_rad: a.periastron_argument_deg.to_radians(),
    };
    let exposure = if a.exposure_d > 0.0 {
        match a.exposure_samples {
            Some(samples) => Exposure { duration_d: a.exposure_d, samples },
            None => {
                let orbit = start.orbit(a.period_d);
                let ingress =
                    (orbit.total_duration_d(a.radius_ratio) * a.radius_ratio / (1.0 + a.radius_ratio)).max(1e-6);
                Exposure::for_cadence(a.exposure_d, a.radius_ratio.powi(2), ingress, 1e-5)
            }
        }
    } else {
        Exposure::INSTANT
    };
    let (lc, note) = a.light_curve.load()?;
    let series = lc.series_for(&format!("timing transits (--min-points {})", a.min_points), a.min_points.max(3))?;
    let file = lc.file.clone();
    let epoch =
        parse_time(&a.epoch_bjd_tdb, TimeFormat::Jd, TimeScale::Tdb, &skyclock::time::LeapSecondTable::builtin())
            .map_err(|e| anyhow::anyhow!("--epoch-bjd-tdb '{}': {e}", a.epoch_bjd_tdb))?;
    let errors = series.errors();
    let input_rows = lc.input_rows(&series);
    let request = TransitTimingRequest {
        curve: TransitCurve {
            reference: lc.epoch,
            time_d: series.time_d(),
            flux: series.value(),
            error: errors.as_deref(),
            input_rows: &input_rows,
        },
        ephemeris: ReferenceEphemeris { epoch, period_d: a.period_d, period_sigma_d: 0.0 },
        start,
        options: TransitTimingOptions {
            window_half_width_d: a.half_width_d,
            min_points: a.min_points,
            min_points_in_transit: a.min_points_in_transit,
            fit_limb_darkening: !a.hold_limb_darkening,
            exposure,
            refold: !a.single_pass,
        },
    };
    let report = time_transits(&request).map_err(|e| {
        let column = match &a.light_curve.error_column {
            Some(c) if e.to_string().contains("flux error") => c.clone(),
            _ => a.light_curve.value_column.clone(),
        };
        anyhow::anyhow!("{file}: column '{column}': {e}")
    })?;
    let input = a.light_curve.input.as_path();
    let provenance = Provenance::new(&std::env::args().collect::<Vec<_>>().join(" "))
        .with("stage", "time-transits")
        .with("input", input.display().to_string())
        .with("model", "Mandel & Agol (2002) quadratic limb darkening")
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
        let s = &report.shape;
        let pm = |v: &skyclock::transit::FittedValue, digits: usize| match v.sigma {
            Some(sig) => format!("{:.*} ± {:.*}", digits, v.value, digits, sig),
            None => format!("{:.*} (held)", digits, v.value),
        };
        println!(
            "shape: Rp/R* {}, a/R* {}, b {}, u1 {}, u2 {}; inclination {:.2}°, depth {:.5}, T14 {:.4} d",
            pm(&s.radius_ratio, 5),
            pm(&s.scaled_semi_major_axis, 3),
            pm(&s.impact_parameter, 3),
            pm(&s.u1, 3),
            pm(&s.u2, 3),
            s.inclination_deg,
            s.depth,
            s.total_duration_d
        );
        println!(
            "timed {} transits ({} skipped), median error {:.2} s",
            report.transits.len(),
            report.skipped.len(),
            report.median_error_d * 86_400.0
        );
        for t in report.transits.iter().filter(|t| !t.flags.is_empty()) {
            println!("  cycle {}: {}", t.cycle, t.flags.join(", "));
        }
        for s in &report.skipped {
            println!("  skipped {}", s.describe());
        }
        for n in &report.notes {
            println!("{n}");
        }
    }
    Ok(())
}
