//! The whole O–C analysis of one set of timings, as one call: cycle numbers against a
//! reference ephemeris, every requested model fitted, optional bootstrap uncertainties,
//! nested-model comparisons with one verdict each, and the minimum companion masses when the
//! mass of the eclipsing pair is known. The result is a typed, serialisable
//! [`OcAnalysis`]; the fitted models themselves come back beside it for tables and figures.
//!
//! Sources: the fits, bootstrap and comparisons of [`super::fitting`] and [`super::compare`];
//! companion masses from the mass function ([`super::companion`]).

use serde::{Deserialize, Serialize};

use super::compare::{ModelComparison, NestedTest, compare_nested, information};
use super::cycles::{CycleOptions, OcSeries, ReferenceEphemeris, assign_cycles};
use super::fitting::{BootstrapOptions, FitOptions, ModelFit, bootstrap_with_progress, fit_model};
use super::models::ModelKind;
use super::{OcError, Timing, minimum_companion_mass_msun};
use crate::table::summary::{nan_as_null, nan_as_null_vec};
use crate::time::{TimeFormat, format_time};

/// What to fit and how.
#[derive(Debug, Clone, PartialEq)]
pub struct AnalysisOptions {
    /// Models to fit, in order (each compared with every model nested in it).
    pub models: Vec<ModelKind>,
    /// Cycle assignment (ambiguity handling).
    pub cycles: CycleOptions,
    /// Fit options (per-source rescaling, companion period range, robust loss).
    pub fit: FitOptions,
    /// Bootstrap resamples (0: covariance errors only) and seed.
    pub bootstrap: BootstrapOptions,
    /// Mass of the eclipsing pair M₁ + M₂, solar masses, for minimum companion masses.
    pub binary_mass_msun: Option<f64>,
}

/// Progress of a long analysis, for a caller's display (every method may be ignored).
pub trait AnalysisProgress: Sync {
    /// Fitting of `model` to `timings` timings begins.
    fn model_started(&self, _model: ModelKind, _timings: usize) {}
    /// The model fit ended.
    fn model_finished(&self) {}
    /// The bootstrap of `model` with `resamples` resamples begins.
    fn bootstrap_started(&self, _model: ModelKind, _resamples: usize) {}
    /// `done` more resamples were fitted (called from any thread).
    fn bootstrap_advanced(&self, _done: u64) {}
    /// The bootstrap ended.
    fn bootstrap_finished(&self) {}
}

/// No progress display.
pub struct NoProgress;

impl AnalysisProgress for NoProgress {}

/// The reference ephemeris an analysis counted cycles against.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ReferenceElements {
    /// Epoch of cycle 0, BJD_TDB as a Julian Date written with 14 decimals (~1 ns).
    pub epoch_bjd_tdb: String,
    /// Period, days.
    pub period_d: f64,
    /// 1σ of the period, days (0: unknown).
    pub period_sigma_d: f64,
}

/// One fitted or derived quantity.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Quantity {
    /// Name with its unit (`period_d`, `period_change_s_per_yr`, `semi_amplitude_s`, …).
    pub name: String,
    /// Value (null when not defined, e.g. no companion mass solves the mass function).
    #[serde(with = "nan_as_null")]
    pub value: f64,
    /// 1σ from the covariance matrix (null when not available).
    #[serde(with = "nan_as_null")]
    pub sigma_covariance: f64,
    /// 1σ over the bootstrap resamples, when a bootstrap was run.
    pub sigma_bootstrap: Option<f64>,
    /// The pair mass a companion mass was computed for, solar masses.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub binary_mass_msun: Option<f64>,
}

/// How a bootstrap went.
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
pub struct ModelReport {
    /// Model name (`linear`, `quadratic`, `quadratic+light-time`, …).
    pub model: String,
    /// χ², degrees of freedom, reduced χ², BIC.
    pub fit: ModelComparison,
    /// Fitted parameters.
    pub parameters: Vec<Quantity>,
    /// Derived quantities (dP/dt, light-time semi-amplitude, a₁₂ sin i, mass function, …).
    pub derived: Vec<Quantity>,
    /// Covariance of the parameters, row-major p×p, in the products of their units.
    #[serde(with = "nan_as_null_vec")]
    pub covariance: Vec<f64>,
    /// Per-source error scale factors applied: (source, factor).
    pub source_error_scale: Vec<(String, f64)>,
    /// Notes of the fit (a parameter at a bound, down-weighted rows, …).
    pub notes: Vec<String>,
    /// The bootstrap, if one was run.
    pub bootstrap: Option<BootstrapRun>,
}

/// The result of an O–C analysis.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct OcAnalysis {
    /// Number of timings.
    pub timings: usize,
    /// The reference ephemeris of the cycle count.
    pub reference_ephemeris: ReferenceElements,
    /// Warnings of the cycle assignment (ambiguous counts when allowed).
    pub warnings: Vec<String>,
    /// Cautions a reader must see with the numbers (light-time fits).
    pub cautions: Vec<String>,
    /// Every fitted model, in the order asked for.
    pub models: Vec<ModelReport>,
    /// F-test and ΔBIC of every nested pair.
    pub comparisons: Vec<NestedTest>,
    /// The comparisons' verdicts in words, in the same order.
    pub verdicts: Vec<String>,
}

impl OcAnalysis {
    /// A fitted or derived quantity of one model: (value, 1σ from the covariance).
    pub fn quantity(&self, model: ModelKind, name: &str) -> Option<(f64, f64)> {
        let m = self.models.iter().find(|m| m.model == model.name())?;
        let q = m.parameters.iter().chain(&m.derived).find(|q| q.name == name)?;
        Some((q.value, q.sigma_covariance))
    }

    /// The model with the lowest BIC, by name.
    pub fn lowest_bic_model(&self) -> Option<&ModelReport> {
        self.models.iter().min_by(|a, b| a.fit.bic.total_cmp(&b.fit.bic))
    }
}

/// An analysis with what tables and figures need beside the result.
#[derive(Debug, Clone)]
pub struct OcAnalysisRun {
    /// Cycle numbers and O–C values.
    pub series: OcSeries,
    /// The fitted models, in the order of `result.models`.
    pub fits: Vec<ModelFit>,
    /// The serialisable result.
    pub result: OcAnalysis,
}

/// The caution stated with every light-time companion fit: its intervals were calibrated on
/// synthetic sets with ~2.6 companion orbits inside the baseline (tests/timing_recovery.rs).
pub const LIGHT_TIME_CAUTION: &str = "a light-time companion fit is the best local minimum of a grid search; its intervals were \
verified on synthetic sets covering several companion orbits, and a companion period near or beyond the baseline trades off \
against dP/dt, so read such fits as indicative";

/// Runs the analysis: cycles, fits, bootstrap, comparisons and companion masses.
/// Errors: those of the cycle assignment, of a fit, or of a bootstrap (no models asked for is
/// an error too).
pub fn analyse_timings(
    timings: &[Timing],
    reference: &ReferenceEphemeris,
    options: &AnalysisOptions,
    progress: &dyn AnalysisProgress,
) -> Result<OcAnalysisRun, OcError> {
    if options.models.is_empty() {
        return Err(OcError::Invalid("no model to fit; ask for at least one (e.g. linear)".to_string()));
    }
    let series = assign_cycles(timings, reference, &options.cycles)?;
    let cautions: Vec<String> = if options.models.iter().any(|m| m.has_light_time()) {
        vec![LIGHT_TIME_CAUTION.to_string()]
    } else {
        Vec::new()
    };
    let mut fits = Vec::with_capacity(options.models.len());
    for &kind in &options.models {
        progress.model_started(kind, series.len());
        let fit = fit_model(&series, kind, &options.fit);
        progress.model_finished();
        fits.push(fit?);
    }
    let mut models = Vec::with_capacity(fits.len());
    for f in &fits {
        let boot = if options.bootstrap.resamples > 0 {
            progress.bootstrap_started(f.kind, options.bootstrap.resamples);
            let b = bootstrap_with_progress(&series, f, &options.bootstrap, &|n| progress.bootstrap_advanced(n));
            progress.bootstrap_finished();
            Some(b?)
        } else {
            None
        };
        let parameters = f
            .kind
            .parameter_names()
            .iter()
            .enumerate()
            .map(|(j, n)| Quantity {
                name: n.to_string(),
                value: f.params[j],
                sigma_covariance: f.sigma(j),
                sigma_bootstrap: boot.as_ref().map(|b| b.parameter_sigma[j]),
                binary_mass_msun: None,
            })
            .collect();
        let mut derived: Vec<Quantity> = f
            .derived
            .iter()
            .enumerate()
            .map(|(j, d)| Quantity {
                name: d.0.to_string(),
                value: d.1,
                sigma_covariance: d.2,
                sigma_bootstrap: boot.as_ref().map(|b| b.derived_sigma[j].1),
                binary_mass_msun: None,
            })
            .collect();
        if let Some(m12) = options.binary_mass_msun {
            for (function_name, mass_name) in [
                ("mass_function_msun", "minimum_companion_mass_msun"),
                ("companion2_mass_function_msun", "companion2_minimum_mass_msun"),
            ] {
                if let Some((fm, fm_s)) = f.derived_value(function_name) {
                    let m3 = minimum_companion_mass_msun(fm, m12);
                    let m3_hi = minimum_companion_mass_msun(fm + fm_s, m12);
                    derived.push(Quantity {
                        name: mass_name.to_string(),
                        value: m3.unwrap_or(f64::NAN),
                        sigma_covariance: m3.zip(m3_hi).map_or(f64::NAN, |(a, b)| b - a),
                        sigma_bootstrap: None,
                        binary_mass_msun: Some(m12),
                    });
                }
            }
        }
        models.push(ModelReport {
            model: f.kind.name().to_string(),
            fit: information(f),
            parameters,
            derived,
            covariance: f.covariance.clone(),
            source_error_scale: f.source_scale.clone(),
            notes: f.notes.clone(),
            bootstrap: boot.as_ref().map(|b| BootstrapRun {
                resamples: b.resamples,
                failed: b.failed,
                seed: options.bootstrap.seed,
            }),
        });
    }
    let mut comparisons = Vec::new();
    for simpler in &fits {
        for richer in &fits {
            if simpler.kind.is_nested_in(richer.kind)
                && let Some(t) = compare_nested(simpler, richer)
            {
                comparisons.push(t);
            }
        }
    }
    let result = OcAnalysis {
        timings: series.len(),
        reference_ephemeris: ReferenceElements {
            epoch_bjd_tdb: format_time(&reference.epoch, TimeFormat::Jd),
            period_d: reference.period_d,
            period_sigma_d: reference.period_sigma_d,
        },
        warnings: series.warnings.clone(),
        cautions,
        verdicts: comparisons.iter().map(|c| c.verdict.clone()).collect(),
        models,
        comparisons,
    };
    Ok(OcAnalysisRun { series, fits, result })
}
