//! One call for a whole O–C analysis: cycle numbers against a reference ephemeris, fits of
//! several ephemeris models, optional bootstrap errors, every nested comparison with its
//! verdict and, given the mass of the eclipsing pair, the minimum companion masses.
//!
//! [`analyse`] returns an [`OcAnalysis`], a typed, serde-serialisable result; the command
//! line prints it and writes it as its JSON summary. The fitted models and the O–C series
//! travel with it (not serialised) for tables and figures.

use serde::{Deserialize, Serialize};

use super::compare::{ModelComparison, NestedTest, compare_nested, information};
use super::cycles::{CycleOptions, OcSeries, ReferenceEphemeris, assign_cycles};
use super::fitting::{BootstrapOptions, FitOptions, ModelFit, bootstrap_with_progress, fit_model};
use super::models::ModelKind;
use super::{OcError, Timing, companion::minimum_companion_mass_msun};

/// What [`analyse`] does.
#[derive(Debug, Clone, PartialEq)]
pub struct AnalysisOptions {
    /// Models to fit, in this order.
    pub models: Vec<ModelKind>,
    /// Cycle counting.
    pub cycles: CycleOptions,
    /// Fitting (robust loss, per-source rescaling, companion period range).
    pub fit: FitOptions,
    /// Bootstrap errors of every model, if given (resamples > 0).
    pub bootstrap: Option<BootstrapOptions>,
    /// Mass of the eclipsing pair M1+M2, solar masses, for minimum companion masses.
    pub binary_mass_msun: Option<f64>,
}

/// The reference ephemeris as written into a result.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ReferenceEphemerisSummary {
    /// Epoch of cycle 0, BJD_TDB as a Julian Date (14 decimals).
    pub epoch_bjd_tdb: String,
    /// Period, days.
    pub period_d: f64,
    /// 1σ of the period, days.
    pub period_sigma_d: f64,
}

/// One fitted parameter or derived quantity with its errors.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct EstimateSummary {
    /// Name with its unit (`epoch_offset_d`, `period_d`, `quadratic_d`, `dpdt_s_per_yr`, …).
    pub name: String,
    /// Best-fit value, in the unit of the name.
    pub value: f64,
    /// 1σ from the covariance matrix (same unit); absent where it could not be formed.
    pub sigma_covariance: Option<f64>,
    /// 1σ from the bootstrap (same unit), when one was run.
    pub sigma_bootstrap: Option<f64>,
    /// Mass of the eclipsing pair used, solar masses (minimum companion masses only).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub binary_mass_msun: Option<f64>,
}

/// How the bootstrap of one model went.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BootstrapRun {
    /// Resamples attempted.
    pub resamples: usize,
    /// Resamples whose fit failed (excluded).
    pub failed: usize,
    /// Seed of the resampling.
    pub seed: u64,
}

/// One fitted model.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ModelSummary {
    /// Model name (`linear`, `quadratic`, `light-time`, `quadratic+light-time`, …).
    pub model: ModelKind,
    /// χ², degrees of freedom and BIC.
    pub fit: ModelComparison,
    /// Fitted parameters (offsets from the reference ephemeris, days; companion elements).
    pub parameters: Vec<EstimateSummary>,
    /// Derived quantities (dP/dt s/yr, light-time semi-amplitude s, a12 sin i au, mass
    /// function M☉, minimum companion mass M☉).
    pub derived: Vec<EstimateSummary>,
    /// Covariance of the parameters, row-major, in their units.
    pub covariance: Vec<f64>,
    /// Error scale applied per source (source, factor).
    pub source_error_scale: Vec<(String, f64)>,
    /// Notes of the fit (down-weighted rows, grid edges).
    pub notes: Vec<String>,
    /// The bootstrap, when one was run.
    pub bootstrap: Option<BootstrapRun>,
}

/// The result of [`analyse`].
#[derive(Debug, Clone, Default, Serialize, Deserialize)]
pub struct OcAnalysis {
    /// Number of timings.
    pub timings: usize,
    /// The reference ephemeris the cycles and O–C values are counted from.
    pub reference_ephemeris: Option<ReferenceEphemerisSummary>,
    /// Warnings of the cycle count (ambiguity allowed, …).
    pub warnings: Vec<String>,
    /// Cautions a reader must see with the numbers.
    pub cautions: Vec<String>,
    /// Fitted models, in the order asked for.
    pub models: Vec<ModelSummary>,
    /// Every nested comparison (simpler, richer) among the models.
    pub comparisons: Vec<NestedTest>,
    /// The verdict of each comparison, in words.
    pub verdicts: Vec<String>,
    /// The cycle numbers and O–C values (not serialised).
    #[serde(skip)]
    pub series: Option<OcSeries>,
    /// The fitted models (not serialised), in the order of `models`.
    #[serde(skip)]
    pub fits: Vec<ModelFit>,
}

impl OcAnalysis {
    /// The fitted model with the lowest BIC, optionally only among light-time models.
    pub fn best_by_bic(&self, light_time_only: bool) -> Option<&ModelFit> {
        self.fits
            .iter()
            .filter(|f| !light_time_only || f.kind.has_light_time())
            .min_by(|x, y| information(x).bic.total_cmp(&information(y).bic))
    }
}

impl OcAnalysis {
    /// The O–C table, one row per timing: row (input, 1-based), bjd_tdb (text, 14 decimals),
    /// cycle, kind, source, error_d, observed_minus_computed_d, then per fitted model
    /// (`+` and `-` in its name written `_`) `model_<name>_d`, `model_sigma_<name>_d` and
    /// `residual_<name>_d`, all in days. Empty when the analysis kept no series.
    pub fn table(&self) -> polars::prelude::PolarsResult<polars::prelude::DataFrame> {
        use crate::constants::SECONDS_PER_DAY;
        use crate::time::{TimeFormat, format_time};
        use polars::prelude::{Column, DataFrame};
        let Some(series) = self.series.as_ref() else { return Ok(DataFrame::empty()) };
        let epoch = series.reference.epoch;
        let mut columns = vec![
            Column::new("row".into(), series.row.iter().map(|&r| r as u64).collect::<Vec<_>>()),
            Column::new(
                "bjd_tdb".into(),
                series
                    .time_d
                    .iter()
                    .map(|&t| format_time(&epoch.add_seconds(t * SECONDS_PER_DAY), TimeFormat::Jd))
                    .collect::<Vec<_>>(),
            ),
            Column::new("cycle".into(), series.cycle.clone()),
            Column::new("kind".into(), series.kind.iter().map(|k| k.name().to_string()).collect::<Vec<_>>()),
            Column::new(
                "source".into(),
                series.source_index.iter().map(|&s| series.sources[s].clone()).collect::<Vec<_>>(),
            ),
            Column::new("error_d".into(), series.error_d.clone()),
            Column::new("observed_minus_computed_d".into(), series.oc_d.clone()),
        ];
        for f in &self.fits {
            let name = f.kind.name().replace(['+', '-'], "_");
            let model: Vec<f64> = (0..series.len()).map(|i| f.model_oc_d(series.cycle[i], series.time_d[i])).collect();
            let sigma: Vec<f64> =
                (0..series.len()).map(|i| f.model_sigma_d(series.cycle[i], series.time_d[i])).collect();
            let resid: Vec<f64> = series.oc_d.iter().zip(&model).map(|(o, m)| o - m).collect();
            columns.push(Column::new(format!("model_{name}_d").into(), model));
            columns.push(Column::new(format!("model_sigma_{name}_d").into(), sigma));
            columns.push(Column::new(format!("residual_{name}_d").into(), resid));
        }
        DataFrame::new(series.len(), columns)
    }
}

/// The caution stated with every light-time companion fit: its intervals were calibrated on
/// synthetic sets with ~2.6 companion orbits inside the baseline (tests/timing_recovery.rs).
pub const LIGHT_TIME_CAUTION: &str = "caution: a light-time companion fit is the best local minimum of a grid search; \
its intervals were verified on synthetic sets covering several companion orbits, and a companion period near or \
beyond the baseline trades off against dP/dt, so read such fits as indicative";

/// Whole O–C analysis of BJD_TDB timings against `reference`: cycle numbers, fits of every
/// model of `options.models`, bootstrap errors (with `progress(n)` called as resamples
/// finish), nested F-test/ΔBIC comparisons and minimum companion masses.
///
/// Errors: those of [`assign_cycles`], [`fit_model`] and the bootstrap (bad errors,
/// duplicates, ambiguous cycles, too few timings, no convergence).
pub fn analyse(
    timings: &[Timing],
    reference: &ReferenceEphemeris,
    options: &AnalysisOptions,
    on_model: &dyn Fn(ModelKind, usize),
    progress: &(dyn Fn(u64) + Sync),
) -> Result<OcAnalysis, OcError> {
    if options.models.is_empty() {
        return Err(OcError::Invalid("no model to fit; name at least one (linear, quadratic, …)".into()));
    }
    let cautions: Vec<String> = if options.models.iter().any(|m| m.has_light_time()) {
        vec![LIGHT_TIME_CAUTION.to_string()]
    } else {
        Vec::new()
    };
    let series = assign_cycles(timings, reference, &options.cycles)?;
    let mut fits = Vec::new();
    let mut models = Vec::new();
    for (index, &m) in options.models.iter().enumerate() {
        on_model(m, index);
        let f = fit_model(&series, m, &options.fit)?;
        let boot = match options.bootstrap {
            Some(b) if b.resamples > 0 => Some(bootstrap_with_progress(&series, &f, &b, progress)?),
            _ => None,
        };
        let parameters = f
            .kind
            .parameter_names()
            .iter()
            .enumerate()
            .map(|(j, n)| EstimateSummary {
                name: n.to_string(),
                value: f.params[j],
                sigma_covariance: finite(f.sigma(j)),
                sigma_bootstrap: boot.as_ref().and_then(|b| finite(b.parameter_sigma[j])),
                binary_mass_msun: None,
            })
            .collect();
        let mut derived: Vec<EstimateSummary> = f
            .derived
            .iter()
            .enumerate()
            .map(|(j, d)| EstimateSummary {
                name: d.0.to_string(),
                value: d.1,
                sigma_covariance: finite(d.2),
                sigma_bootstrap: boot.as_ref().and_then(|b| b.derived_sigma.get(j)).and_then(|s| finite(s.1)),
                binary_mass_msun: None,
            })
            .collect();
        for (function_name, mass_name) in [
            ("mass_function_msun", "minimum_companion_mass_msun"),
            ("companion2_mass_function_msun", "companion2_minimum_mass_msun"),
        ] {
            if let (Some(m12), Some((fm, fm_s))) = (options.binary_mass_msun, f.derived_value(function_name))
                && let Some(m3) = minimum_companion_mass_msun(fm, m12)
            {
                let m3_hi = minimum_companion_mass_msun(fm + fm_s, m12);
                derived.push(EstimateSummary {
                    name: mass_name.to_string(),
                    value: m3,
                    sigma_covariance: m3_hi.map(|b| b - m3).and_then(finite),
                    sigma_bootstrap: None,
                    binary_mass_msun: Some(m12),
                });
            }
        }
        models.push(ModelSummary {
            model: f.kind,
            fit: information(&f),
            parameters,
            derived,
            covariance: f.covariance.clone(),
            source_error_scale: f.source_scale.clone(),
            notes: f.notes.clone(),
            bootstrap: boot.as_ref().map(|b| BootstrapRun {
                resamples: b.resamples,
                failed: b.failed,
                seed: options.bootstrap.map(|o| o.seed).unwrap_or(0),
            }),
        });
        fits.push(f);
    }
    let mut comparisons = Vec::new();
    for i in 0..fits.len() {
        for j in 0..fits.len() {
            if fits[i].kind.is_nested_in(fits[j].kind)
                && let Some(t) = compare_nested(&fits[i], &fits[j])
            {
                comparisons.push(t);
            }
        }
    }
    let verdicts = comparisons.iter().map(|c| c.verdict.clone()).collect();
    let epoch_text = crate::time::format_time(&reference.epoch, crate::time::TimeFormat::Jd);
    Ok(OcAnalysis {
        timings: series.len(),
        reference_ephemeris: Some(ReferenceEphemerisSummary {
            epoch_bjd_tdb: epoch_text,
            period_d: reference.period_d,
            period_sigma_d: reference.period_sigma_d,
        }),
        warnings: series.warnings.clone(),
        cautions,
        models,
        comparisons,
        verdicts,
        series: Some(series),
        fits,
    })
}

fn finite(x: f64) -> Option<f64> {
    x.is_finite().then_some(x)
}
