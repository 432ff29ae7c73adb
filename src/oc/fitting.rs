//! Fitting the O–C models: weighted linear least squares for the polynomial ephemerides,
//! Levenberg–Marquardt for the light-time models after a global search for the companion
//! period (a least-squares periodogram of polynomial + sinusoid, then several starts per
//! peak), optional per-source error rescaling, derived quantities with covariance errors,
//! and a seeded pairs bootstrap whose result does not depend on the number of threads.

use crate::constants::SECONDS_PER_DAY;
use std::f64::consts::TAU;

use rayon::prelude::*;

use super::OcError;
use super::companion::{mass_function_msun, projected_semi_major_axis_au};
use super::cycles::OcSeries;
use super::models::{ModelKind, OcModel, eccentricity_omega, evaluate};
use super::orbit::irwin_semi_amplitude;
use crate::fit::{
    LevenbergOptions, LsqModel, NonlinearFit, SeededRng, levenberg_marquardt,
    small::{add_weighted_row, solve_scaled_normal_equations},
    weighted_linear_lsq,
};

use crate::constants::DAYS_PER_JULIAN_YEAR as DAYS_PER_YEAR;

/// Options of a model fit.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FitOptions {
    /// Rescale each source's errors so that its residuals have reduced χ² = 1 (sources with
    /// at least 3 timings).
    pub rescale_per_source: bool,
    /// Companion periods searched, days (`None`: from 10 P or 2·baseline/n up to 1.5 × baseline).
    pub companion_period_range_d: Option<(f64, f64)>,
    /// Periodogram peaks used as starting points.
    pub peaks: usize,
    /// Huber robust loss with this tuning constant (normalised residuals beyond k are
    /// down-weighted by k/|r|; `fit::robust`), or `None` for plain least squares.
    pub huber_k: Option<f64>,
}

impl Default for FitOptions {
    fn default() -> Self {
        FitOptions { rescale_per_source: false, companion_period_range_d: None, peaks: 3, huber_k: None }
    }
}

/// A fitted model with its uncertainties.
#[derive(Debug, Clone, PartialEq)]
pub struct ModelFit {
    /// The model.
    pub kind: ModelKind,
    /// Parameters (see [`ModelKind::parameter_names`]).
    pub params: Vec<f64>,
    /// Covariance, row-major p×p (from the errors as given or rescaled; not scaled by χ²/dof).
    pub covariance: Vec<f64>,
    /// χ².
    pub chi2: f64,
    /// Number of timings.
    pub n: usize,
    /// Weights used (1/σ², days⁻²), after any rescaling.
    pub weights: Vec<f64>,
    /// Per-source error scale factors applied (label, factor).
    pub source_scale: Vec<(String, f64)>,
    /// Derived quantities: (name, value, 1σ from the covariance).
    pub derived: Vec<(&'static str, f64, f64)>,
    /// Notes (parameter at a bound, …).
    pub notes: Vec<String>,
}

impl ModelFit {
    /// Degrees of freedom n − p.
    pub fn dof(&self) -> usize {
        self.n.saturating_sub(self.params.len())
    }
    /// 1σ of parameter j from the covariance.
    pub fn sigma(&self, j: usize) -> f64 {
        let p = self.params.len();
        self.covariance[j * p + j].max(0.0).sqrt()
    }
    /// Model O − C (days) at cycle `cycle` and time `t_d` since the epoch.
    pub fn model_oc_d(&self, cycle: f64, t_d: f64) -> f64 {
        evaluate(self.kind, &self.params, cycle, t_d)
    }
    /// 1σ of the model O − C at (cycle, t) from the covariance (numerical gradient).
    pub fn model_sigma_d(&self, cycle: f64, t_d: f64) -> f64 {
        let g = gradient(&self.params, |p| evaluate(self.kind, p, cycle, t_d));
        quadratic_form(&g, &self.covariance)
    }
    /// A derived value by name.
    pub fn derived_value(&self, name: &str) -> Option<(f64, f64)> {
        self.derived.iter().find(|d| d.0 == name).map(|d| (d.1, d.2))
    }
}

/// Central-difference gradient of `f` at `params` (relative step 1e-6, common practice).
pub(super) fn gradient(params: &[f64], f: impl Fn(&[f64]) -> f64) -> Vec<f64> {
    let mut g = vec![0.0; params.len()];
    let mut p = params.to_vec();
    for j in 0..params.len() {
        let h = 1e-6 * params[j].abs().max(1e-6);
        p[j] = params[j] + h;
        let up = f(&p);
        p[j] = params[j] - h;
        let dn = f(&p);
        p[j] = params[j];
        g[j] = (up - dn) / (2.0 * h);
    }
    g
}

/// √(gᵀ C g): the 1σ of a derived value by linear propagation of the covariance `cov`.
pub(super) fn quadratic_form(g: &[f64], cov: &[f64]) -> f64 {
    let p = g.len();
    let mut s = 0.0;
    for a in 0..p {
        for b in 0..p {
            s += g[a] * cov[a * p + b] * g[b];
        }
    }
    s.max(0.0).sqrt()
}

/// Derived quantities of a parameter vector: (name, value, wrap period or 0).
///
/// period_d = P_ref + ΔP; dP/dE = 2Q (d/cycle); dP/dt = 2Q/P · 86400 · 365.25 (s/yr);
/// companion: semi-amplitude (s, Irwin 1952), a₁₂ sin i/c (s), a₁₂ sin i (au), P₃ (yr), e,
/// ω (deg), time of periastron (d since the epoch, in [0, P₃)), f(M₃) (M☉).
pub fn derived_values(kind: ModelKind, params: &[f64], reference_period_d: f64) -> Vec<(&'static str, f64, f64)> {
    let period = reference_period_d + params[1];
    let mut v = vec![("period_d", period, 0.0)];
    if kind.has_quadratic() {
        let q = params[2];
        v.push(("period_change_d_per_cycle", 2.0 * q, 0.0));
        v.push(("period_change_s_per_yr", 2.0 * q / period * SECONDS_PER_DAY * DAYS_PER_YEAR, 0.0));
    }
    let np = kind.n_polynomial();
    for c in 0..kind.companions() {
        let names = &COMPANION_DERIVED_NAMES[c];
        let l = &params[np + 5 * c..np + 5 * c + 5];
        let (e, w) = eccentricity_omega(l[2], l[3]);
        let light_s = l[0] * SECONDS_PER_DAY;
        let p3_yr = l[1] / DAYS_PER_YEAR;
        let a_au = projected_semi_major_axis_au(light_s);
        v.push((names[0], irwin_semi_amplitude(light_s, e, w).abs(), 0.0));
        v.push((names[1], light_s, 0.0));
        v.push((names[2], a_au, 0.0));
        v.push((names[3], l[1], 0.0));
        v.push((names[4], p3_yr, 0.0));
        v.push((names[5], e, 0.0));
        v.push((names[6], w.to_degrees().rem_euclid(360.0), 360.0));
        v.push((names[7], (-l[4] / TAU * l[1]).rem_euclid(l[1].abs()), l[1].abs()));
        v.push((names[8], mass_function_msun(a_au, p3_yr), 0.0));
    }
    v
}

/// Names of the derived quantities of the first and the second companion.
pub const COMPANION_DERIVED_NAMES: [[&str; 9]; 2] = [
    [
        "semi_amplitude_s",
        "projected_light_time_s",
        "projected_semi_major_axis_au",
        "companion_period_d",
        "companion_period_yr",
        "eccentricity",
        "periastron_argument_deg",
        "periastron_time_d",
        "mass_function_msun",
    ],
    [
        "companion2_semi_amplitude_s",
        "companion2_projected_light_time_s",
        "companion2_projected_semi_major_axis_au",
        "companion2_period_d",
        "companion2_period_yr",
        "companion2_eccentricity",
        "companion2_periastron_argument_deg",
        "companion2_periastron_time_d",
        "companion2_mass_function_msun",
    ],
];

fn wrapped(d: f64, wrap: f64) -> f64 {
    if wrap > 0.0 { d - wrap * (d / wrap).round() } else { d }
}

fn derived_with_sigma(kind: ModelKind, params: &[f64], cov: &[f64], p_ref: f64) -> Vec<(&'static str, f64, f64)> {
    let base = derived_values(kind, params, p_ref);
    base.iter()
        .enumerate()
        .map(|(k, &(name, value, wrap))| {
            let g = gradient(params, |p| {
                let d = derived_values(kind, p, p_ref)[k].1;
                value + wrapped(d - value, wrap)
            });
            (name, value, quadratic_form(&g, cov))
        })
        .collect()
}

fn polynomial_fit(series: &OcSeries, kind: ModelKind, weights: &[f64]) -> Result<(Vec<f64>, Vec<f64>, f64), OcError> {
    let p = kind.n_polynomial();
    let design: Vec<f64> = series.cycle.iter().flat_map(|&e| [1.0, e, e * e].into_iter().take(p)).collect();
    let f = weighted_linear_lsq(&design, p, &series.oc_d, weights)?;
    Ok((f.params, f.covariance, f.chi2))
}

/// Least-squares periodogram: for each trial companion period, χ² of polynomial + sinusoid;
/// returns (period_d, χ², amplitude_d, phase_rad) at the `peaks` deepest local minima.
fn companion_search(
    series: &OcSeries,
    kind: ModelKind,
    weights: &[f64],
    range_d: (f64, f64),
    peaks: usize,
) -> Vec<(f64, f64, f64, f64)> {
    let np = kind.n_polynomial();
    let p = np + 2;
    let t0 = series.time_d.first().copied().unwrap_or(0.0);
    let baseline = series.time_d.last().copied().unwrap_or(0.0) - t0;
    let f_lo = 1.0 / range_d.1;
    let f_hi = 1.0 / range_d.0;
    let df = 1.0 / (5.0 * baseline.max(1.0));
    let nf = (((f_hi - f_lo) / df).ceil() as usize).clamp(2, 200_000);
    let results: Vec<(f64, f64, f64, f64)> = (0..nf)
        .into_par_iter()
        .map(|k| {
            let f = f_lo + (f_hi - f_lo) * k as f64 / (nf - 1) as f64;
            let mut a = vec![0.0; p * p];
            let mut b = vec![0.0; p];
            let mut row = [0.0; 5];
            for i in 0..series.len() {
                let e = series.cycle[i];
                let ph = TAU * f * series.time_d[i];
                row[0] = 1.0;
                row[1] = e;
                if np == 3 {
                    row[2] = e * e;
                }
                row[np] = ph.sin();
                row[np + 1] = ph.cos();
                add_weighted_row(&mut a, &mut b, &row[..p], weights[i], series.oc_d[i]);
            }
            let Some(x) = solve_scaled_normal_equations(&mut a, &mut b, p) else {
                return (1.0 / f, f64::INFINITY, 0.0, 0.0);
            };
            let mut chi2 = 0.0;
            for i in 0..series.len() {
                let e = series.cycle[i];
                let ph = TAU * f * series.time_d[i];
                let mut m = x[0] + x[1] * e + x[np] * ph.sin() + x[np + 1] * ph.cos();
                if np == 3 {
                    m += x[2] * e * e;
                }
                chi2 += weights[i] * (series.oc_d[i] - m).powi(2);
            }
            let amp = x[np].hypot(x[np + 1]);
            let phase = x[np + 1].atan2(x[np]); // amp·sin(ph + phase)
            (1.0 / f, chi2, amp, phase)
        })
        .collect();
    let mut minima: Vec<(f64, f64, f64, f64)> = (0..results.len())
        .filter(|&k| {
            let c = results[k].1;
            c.is_finite() && (k == 0 || results[k - 1].1 >= c) && (k + 1 == results.len() || results[k + 1].1 >= c)
        })
        .map(|k| results[k])
        .collect();
    minima.sort_by(|a, b| a.1.total_cmp(&b.1));
    minima.truncate(peaks.max(1));
    minima
}

pub(super) fn default_range(series: &OcSeries) -> (f64, f64) {
    let baseline = series.time_d.last().copied().unwrap_or(0.0) - series.time_d.first().copied().unwrap_or(0.0);
    let lo = (10.0 * series.reference.period_d).max(2.0 * baseline / series.len().max(1) as f64);
    (lo, 1.5 * baseline.max(lo))
}

/// A model seen through parameter scales θ = s ⊙ u, so that Levenberg–Marquardt works on
/// columns of comparable size (Jacobi scaling; Moré 1978, LNM 630, 105).
struct Scaled<'m, M: LsqModel> {
    inner: &'m M,
    scale: Vec<f64>,
}

impl<M: LsqModel> LsqModel for Scaled<'_, M> {
    fn n_params(&self) -> usize {
        self.inner.n_params()
    }
    fn n_obs(&self) -> usize {
        self.inner.n_obs()
    }
    fn predict(&self, u: &[f64], out: &mut [f64]) {
        let t: Vec<f64> = u.iter().zip(&self.scale).map(|(a, b)| a * b).collect();
        self.inner.predict(&t, out)
    }
    fn jacobian(&self, u: &[f64], jac: &mut [f64]) {
        let t: Vec<f64> = u.iter().zip(&self.scale).map(|(a, b)| a * b).collect();
        self.inner.jacobian(&t, jac);
        let p = self.scale.len();
        for (k, v) in jac.iter_mut().enumerate() {
            *v *= self.scale[k % p];
        }
    }
    fn observed(&self) -> &[f64] {
        self.inner.observed()
    }
    fn weight(&self) -> &[f64] {
        self.inner.weight()
    }
}

/// Levenberg–Marquardt on Jacobi-scaled parameters; returns the fit in the original units.
fn scaled_levenberg<M: LsqModel>(model: &M, start: &[f64]) -> Result<NonlinearFit, crate::fit::FitError> {
    scaled_levenberg_with(model, start, &lm_options())
}

/// [`scaled_levenberg`] with explicit options.
pub(super) fn scaled_levenberg_with<M: LsqModel>(
    model: &M,
    start: &[f64],
    options: &LevenbergOptions,
) -> Result<NonlinearFit, crate::fit::FitError> {
    let p = model.n_params();
    let n = model.n_obs();
    let mut jac = vec![0.0; n * p];
    model.jacobian(start, &mut jac);
    let w = model.weight();
    let scale: Vec<f64> = (0..p)
        .map(|j| {
            let d: f64 = (0..n).map(|i| w[i] * jac[i * p + j] * jac[i * p + j]).sum();
            if d > 0.0 && d.is_finite() { 1.0 / d.sqrt() } else { 1.0 }
        })
        .collect();
    let scaled = Scaled { inner: model, scale: scale.clone() };
    let u0: Vec<f64> = start.iter().zip(&scale).map(|(a, b)| a / b).collect();
    let mut f = levenberg_marquardt(&scaled, &u0, options)?;
    for (a, b) in f.params.iter_mut().zip(&scale) {
        *a *= b;
    }
    for (k, v) in f.covariance.iter_mut().enumerate() {
        *v *= scale[k / p] * scale[k % p];
    }
    Ok(f)
}

/// Resamples start at the best fit and need its neighbourhood only: a χ² change below 1e-3
/// moves a parameter by ~3 % of its 1σ, far below the bootstrap's own scatter.
pub(super) fn bootstrap_lm_options() -> LevenbergOptions {
    LevenbergOptions {
        max_iterations: 60,
        relative_tolerance: 1e-10,
        initial_damping: 1e-3,
        absolute_tolerance: 1e-3,
        covariance: false,
    }
}

pub(super) fn lm_options() -> LevenbergOptions {
    LevenbergOptions {
        max_iterations: 300,
        relative_tolerance: 1e-10,
        initial_damping: 1e-3,
        absolute_tolerance: 1e-5,
        covariance: true,
    }
}

fn fit_with_weights(
    series: &OcSeries,
    kind: ModelKind,
    weights: &[f64],
    options: &FitOptions,
) -> Result<(Vec<f64>, Vec<f64>, f64), OcError> {
    let (poly, pcov, pchi2) = polynomial_fit(series, kind, weights)?;
    if !kind.has_light_time() {
        return Ok((poly, pcov, pchi2));
    }
    let range = options.companion_period_range_d.unwrap_or_else(|| default_range(series));
    if !(range.0 > 0.0 && range.1 > range.0 && range.1.is_finite()) {
        return Err(OcError::Invalid(format!("companion period range {:?} d must satisfy 0 < low < high", range)));
    }
    if kind.companions() == 2 {
        return fit_second_companion(series, kind, weights, options, range);
    }
    let peaks = companion_search(series, kind, weights, range, options.peaks);
    let model = OcModel { kind, series, weights: weights.to_vec() };
    best_of_starts(&model, kind, &poly, &peaks, &ECCENTRICITY_STARTS, "no periodogram peak")
}

/// Starting (√e cos ω, √e sin ω) of the multi-start light-time fits.
const ECCENTRICITY_STARTS: [(f64, f64); 8] =
    [(0.3, 0.0), (0.0, 0.3), (-0.3, 0.0), (0.0, -0.3), (0.6, 0.0), (0.0, 0.6), (-0.6, 0.0), (0.0, -0.6)];

/// Levenberg–Marquardt from every periodogram peak × eccentricity start, appending one
/// companion `[amplitude, P₃, c, s, M₀]` to `base`; the lowest finite χ² wins. A sinusoid's
/// mean anomaly 2π t/P₃ + M₀ + ω equals 2π t/P₃ + phase, hence M₀ = phase − ω.
fn best_of_starts(
    model: &OcModel,
    kind: ModelKind,
    base: &[f64],
    peaks: &[(f64, f64, f64, f64)],
    eccentricity_starts: &[(f64, f64)],
    no_peak: &str,
) -> Result<(Vec<f64>, Vec<f64>, f64), OcError> {
    let mut best: Option<NonlinearFit> = None;
    let mut last_error = no_peak.to_string();
    for &(p3, _, amp, phase) in peaks {
        for &(c, s) in eccentricity_starts {
            let mut start = base.to_vec();
            start.extend([amp.max(1e-9), p3, c, s, phase - f64::atan2(s, c)]);
            match scaled_levenberg(model, &start) {
                Ok(f) if f.chi2.is_finite() => {
                    if best.as_ref().is_none_or(|b| f.chi2 < b.chi2) {
                        best = Some(f);
                    }
                }
                Ok(_) => last_error = "non-finite χ²".into(),
                Err(e) => last_error = e.to_string(),
            }
        }
    }
    match best {
        Some(f) if f.covariance.iter().all(|v| v.is_finite()) => Ok((f.params, f.covariance, f.chi2)),
        Some(_) => Err(OcError::NotConverged { model: kind.name(), detail: "the covariance is not finite".into() }),
        None => Err(OcError::NotConverged { model: kind.name(), detail: last_error }),
    }
}

/// Two companions: the one-companion model first, then a search of its residuals for the
/// second orbit (same least-squares periodogram), then Levenberg–Marquardt on all
/// parameters from each residual peak with several eccentricity starts.
fn fit_second_companion(
    series: &OcSeries,
    kind: ModelKind,
    weights: &[f64],
    options: &FitOptions,
    range: (f64, f64),
) -> Result<(Vec<f64>, Vec<f64>, f64), OcError> {
    let single = kind.with_one_companion_fewer().expect("a two-companion model");
    let (first, _, _) = fit_with_weights(series, single, weights, options)?;
    let mut residual = series.clone();
    for i in 0..series.len() {
        residual.oc_d[i] = series.oc_d[i] - evaluate(single, &first, series.cycle[i], series.time_d[i]);
    }
    let np = kind.n_polynomial();
    let first_period = first[np + 1];
    let peaks: Vec<(f64, f64, f64, f64)> = companion_search(&residual, single, weights, range, options.peaks + 2)
        .into_iter()
        .filter(|p| (p.0 / first_period - 1.0).abs() > 0.1)
        .take(options.peaks.max(1))
        .collect();
    let model = OcModel { kind, series, weights: weights.to_vec() };
    best_of_starts(
        &model,
        kind,
        &first,
        &peaks,
        &ECCENTRICITY_STARTS[..4],
        "no periodogram peak in the residuals of the one-companion fit",
    )
}

/// Fits one model to an O–C series.
///
/// Given: the series (days), the model, options. Returned: parameters, covariance, χ²,
/// derived quantities with covariance errors. Errors: too few timings, singular design,
/// no converged light-time fit. Accuracy: a local χ² minimum; the companion search covers
/// the period range on a grid of 1/(5·baseline) in frequency with several starts per peak.
/// Source: weighted least squares and Levenberg–Marquardt (see `fit`); Irwin (1952).
pub fn fit_model(series: &OcSeries, kind: ModelKind, options: &FitOptions) -> Result<ModelFit, OcError> {
    let needed = kind.n_params() + 1;
    if series.len() < needed {
        return Err(OcError::TooFewTimings { model: kind.name(), needed, got: series.len() });
    }
    let mut weights = series.weights();
    let (mut params, mut cov, mut chi2) = fit_with_weights(series, kind, &weights, options)?;
    let mut source_scale = Vec::new();
    if options.rescale_per_source {
        for _ in 0..2 {
            let dof_fraction = (series.len() - kind.n_params()) as f64 / series.len() as f64;
            source_scale.clear();
            for (si, label) in series.sources.iter().enumerate() {
                let idx: Vec<usize> = (0..series.len()).filter(|&i| series.source_index[i] == si).collect();
                if idx.len() < 3 {
                    source_scale.push((label.clone(), 1.0));
                    continue;
                }
                let c: f64 = idx
                    .iter()
                    .map(|&i| {
                        weights[i]
                            * (series.oc_d[i] - evaluate(kind, &params, series.cycle[i], series.time_d[i])).powi(2)
                    })
                    .sum();
                let factor2 = (c / (idx.len() as f64 * dof_fraction)).max(1e-6);
                for &i in &idx {
                    weights[i] /= factor2;
                }
                source_scale.push((label.clone(), factor2.sqrt()));
            }
            let refit = fit_with_weights(series, kind, &weights, options)?;
            params = refit.0;
            cov = refit.1;
            chi2 = refit.2;
        }
        // Report the total factor relative to the given errors.
        source_scale = series
            .sources
            .iter()
            .enumerate()
            .map(|(si, l)| {
                let i = (0..series.len()).find(|&i| series.source_index[i] == si).unwrap_or(0);
                (l.clone(), (1.0 / (weights[i] * series.error_d[i] * series.error_d[i])).sqrt())
            })
            .collect();
    }
    let mut notes = Vec::new();
    if let Some(k) = options.huber_k {
        if !(k.is_finite() && k > 0.0) {
            return Err(OcError::Invalid(format!("the Huber tuning constant must be > 0, got {k}")));
        }
        // Iteratively reweighted least squares (Huber 1964), from the weights used so far;
        // later refits start from the previous solution's companion search again.
        let base = weights.clone();
        let mut factors = vec![1.0; series.len()];
        for _ in 0..8 {
            let normalised: Vec<f64> = (0..series.len())
                .map(|i| (series.oc_d[i] - evaluate(kind, &params, series.cycle[i], series.time_d[i])) * base[i].sqrt())
                .collect();
            let new = crate::fit::robust::huber_weight_factors(&normalised, k);
            let change = new.iter().zip(&factors).map(|(a, b)| (a - b).abs()).fold(0.0, f64::max);
            factors = new;
            for i in 0..series.len() {
                weights[i] = base[i] * factors[i];
            }
            let refit = fit_with_weights(series, kind, &weights, options)?;
            params = refit.0;
            cov = refit.1;
            chi2 = refit.2;
            if change < 1e-3 {
                break;
            }
        }
        let down: Vec<String> =
            (0..series.len()).filter(|&i| factors[i] < 0.5).map(|i| series.row[i].to_string()).collect();
        notes.push(format!(
            "Huber robust loss (k = {k}): {} timings down-weighted, {} of them below half weight{}",
            factors.iter().filter(|f| **f < 1.0).count(),
            down.len(),
            if down.is_empty() { String::new() } else { format!(" (rows {})", down.join(", ")) }
        ));
    }
    for c in 0..kind.companions() {
        let first = kind.n_polynomial() + 5 * c;
        let which = if c == 0 { "companion" } else { "second companion" };
        let (e, _) = eccentricity_omega(params[first + 2], params[first + 3]);
        if e >= super::models::MAX_ECCENTRICITY - 1e-9 {
            notes.push(format!(
                "the {which}'s eccentricity sits at its bound {}; the orbit is not well constrained",
                super::models::MAX_ECCENTRICITY
            ));
        }
        let baseline = series.time_d.last().copied().unwrap_or(0.0) - series.time_d.first().copied().unwrap_or(0.0);
        if params[first + 1] > baseline {
            notes.push(format!(
                "the {which}'s period ({:.0} d) exceeds the span of the timings ({:.0} d); it is poorly determined",
                params[first + 1],
                baseline
            ));
        }
    }
    if params.iter().chain(cov.iter()).any(|v| !v.is_finite()) || !chi2.is_finite() {
        return Err(OcError::NotConverged { model: kind.name(), detail: "non-finite parameters".into() });
    }
    let derived = derived_with_sigma(kind, &params, &cov, series.reference.period_d);
    Ok(ModelFit { kind, params, covariance: cov, chi2, n: series.len(), weights, source_scale, derived, notes })
}

/// Calls the progress callback once when dropped (every exit path of a resample).
struct Tick<'a>(&'a (dyn Fn(u64) + Sync));

impl Drop for Tick<'_> {
    fn drop(&mut self) {
        (self.0)(1);
    }
}

/// Options of the bootstrap.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BootstrapOptions {
    /// Number of resamples.
    pub resamples: usize,
    /// Seed; resample k uses stream k of it, so results do not depend on thread count.
    pub seed: u64,
}

/// Bootstrap uncertainties: 1σ (standard deviation over resamples) of each parameter and
/// each derived quantity, and the number of resamples whose fit failed.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct BootstrapSummary {
    /// Resamples attempted.
    pub resamples: usize,
    /// Resamples whose fit failed (excluded).
    pub failed: usize,
    /// 1σ of each parameter.
    pub parameter_sigma: Vec<f64>,
    /// (name, 1σ) of each derived quantity.
    pub derived_sigma: Vec<(String, f64)>,
}

/// Pairs bootstrap of a fitted model: timings drawn with replacement, each resample refitted
/// from the best solution (light-time models by Levenberg–Marquardt, without a new global
/// search). Source: Efron & Tibshirani (1993), An Introduction to the Bootstrap, ch. 9.
pub fn bootstrap(series: &OcSeries, fit: &ModelFit, options: &BootstrapOptions) -> Result<BootstrapSummary, OcError> {
    bootstrap_with_progress(series, fit, options, &|_| {})
}

/// One bootstrap resample's fitted parameters and derived quantities.
type DrawPair = (Vec<f64>, Vec<f64>);

/// [`bootstrap`] calling `progress(1)` after each resample (from any thread), for a caller's
/// progress display. Results are the same as without it.
pub fn bootstrap_with_progress(
    series: &OcSeries,
    fit: &ModelFit,
    options: &BootstrapOptions,
    progress: &(dyn Fn(u64) + Sync),
) -> Result<BootstrapSummary, OcError> {
    if options.resamples < 2 {
        return Err(OcError::Invalid(format!("the bootstrap needs at least 2 resamples, got {}", options.resamples)));
    }
    let n = series.len();
    let kind = fit.kind;
    let p_ref = series.reference.period_d;
    let base_derived = derived_values(kind, &fit.params, p_ref);
    let draws: Vec<Option<(Vec<f64>, Vec<f64>)>> = (0..options.resamples)
        .into_par_iter()
        .map(|k| {
            let _tick = Tick(progress);
            let mut rng = SeededRng::for_stream(options.seed, k as u64);
            // A timing drawn k times enters χ² k times: fit each distinct timing once with its
            // weight times k (the same χ², about 63 % of the model evaluations).
            let mut copies = vec![0u32; n];
            for _ in 0..n {
                copies[rng.below(n)] += 1;
            }
            let idx: Vec<usize> = (0..n).filter(|&i| copies[i] > 0).collect();
            let sub = series.subset(&idx);
            let w: Vec<f64> = idx.iter().map(|&i| fit.weights[i] * copies[i] as f64).collect();
            let params = if kind.has_light_time() {
                let model = OcModel { kind, series: &sub, weights: w };
                match scaled_levenberg_with(&model, &fit.params, &bootstrap_lm_options()) {
                    Ok(f) if f.chi2.is_finite() => f.params,
                    _ => return None,
                }
            } else {
                polynomial_fit(&sub, kind, &w).ok()?.0
            };
            if params.iter().any(|v| !v.is_finite()) {
                return None;
            }
            let d = derived_values(kind, &params, p_ref)
                .iter()
                .zip(&base_derived)
                .map(|(a, b)| b.1 + wrapped(a.1 - b.1, b.2))
                .collect();
            Some((params, d))
        })
        .collect();
    let ok: Vec<&(Vec<f64>, Vec<f64>)> = draws.iter().flatten().collect();
    if ok.len() < 2 {
        return Err(OcError::NotConverged {
            model: kind.name(),
            detail: format!("only {} of {} bootstrap resamples could be fitted", ok.len(), options.resamples),
        });
    }
    let sd = |get: &dyn Fn(&DrawPair) -> f64| {
        let m = ok.iter().map(|d| get(d)).sum::<f64>() / ok.len() as f64;
        (ok.iter().map(|d| (get(d) - m).powi(2)).sum::<f64>() / (ok.len() - 1) as f64).sqrt()
    };
    let parameter_sigma = (0..fit.params.len()).map(|j| sd(&|d| d.0[j])).collect();
    let derived_sigma = base_derived.iter().enumerate().map(|(j, b)| (b.0.to_string(), sd(&|d| d.1[j]))).collect();
    Ok(BootstrapSummary {
        resamples: options.resamples,
        failed: options.resamples - ok.len(),
        parameter_sigma,
        derived_sigma,
    })
}
