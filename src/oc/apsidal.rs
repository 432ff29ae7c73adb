//! Apsidal motion: primary and secondary minima of an eccentric eclipsing binary fitted
//! together with an orbit whose line of apsides turns at a constant rate,
//!
//!   ω(E) = ω₀ + ω̇·E,
//!   O − C(E) = ΔT₀ + ΔP_s·E + (P_a/2π)·φ(kind, e, ω(E), i) [+ τ(t)],
//!
//! with E the cycle number (half-integral for secondaries), P_s the sidereal period (the
//! mean interval between primaries), P_a = P_s/(1 − ω̇/2π) the anomalistic period, φ the
//! mean-anomaly displacement of the minimum ([`super::eclipse_times`], exact or series), and
//! τ the light time of a companion (Irwin 1952, [`super::models::light_time_d`]; the delays
//! add, common practice). The apsidal period is U = 2π·P_s/ω̇ (Giménez & Garcia-Pelayo
//! 1983, Ap&SS 92, 203, from memory). T₀ + ΔT₀ is the time of mean primary conjunction (the
//! time a circular orbit would have its primary minimum), not an observed minimum.
//!
//! Fitting: a grid over ω̇ of the first-order model (φ ≈ ∓ e cos ω (1 + csc² i), linear in
//! e cos ω₀ and e sin ω₀ for a fixed ω̇), then Levenberg–Marquardt on the full model from
//! the best grid minima; covariance from the Jacobian and a seeded pairs bootstrap (Efron &
//! Tibshirani 1993, ch. 9). Nothing here prints.

use std::f64::consts::{FRAC_PI_2, PI, TAU};

use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use super::analysis::{BootstrapRun, EstimateSummary, ReferenceEphemerisSummary};
use super::cycles::{CycleOptions, OcSeries, ReferenceEphemeris, assign_cycles};
use super::eclipse_times::{MinimumTimeMethod, minimum_offset_rad};
use super::fitting::{
    BootstrapOptions, bootstrap_lm_options, default_range, derived_values, gradient, lm_options, quadratic_form,
};
use super::models::{MAX_ECCENTRICITY, ModelKind, light_time_d, light_time_with_gradient_d};
use super::{EventKind, OcError, Timing};
use crate::constants::DAYS_PER_JULIAN_YEAR;
use crate::fit::{
    LsqModel, SeededRng,
    small::{add_weighted_row, solve_scaled_normal_equations},
    weighted_linear_lsq,
};

/// Options of an apsidal-motion fit.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct ApsidalOptions {
    /// How the times of minimum are computed (exact is the reference).
    pub method: MinimumTimeMethod,
    /// Orbital inclination, degrees: the fixed value, or the start when it is fitted.
    pub inclination_deg: f64,
    /// Fit the inclination too (weakly constrained by timings alone: it trades off against e).
    pub fit_inclination: bool,
    /// Add the light time of one companion on an eccentric orbit.
    pub light_time: bool,
    /// Apsidal periods searched, days (`None`: from a tenth of the baseline to 50 baselines).
    pub apsidal_period_range_d: Option<(f64, f64)>,
    /// Companion periods searched, days (`None`: as the light-time models of the O–C stage).
    pub companion_period_range_d: Option<(f64, f64)>,
    /// Grid minima used as starting points.
    pub peaks: usize,
    /// Cycle counting.
    #[serde(skip)]
    pub cycles: CycleOptions,
    /// Seeded bootstrap, if any.
    #[serde(skip)]
    pub bootstrap: Option<BootstrapOptions>,
}

impl Default for ApsidalOptions {
    fn default() -> Self {
        ApsidalOptions {
            method: MinimumTimeMethod::Exact,
            inclination_deg: 90.0,
            fit_inclination: false,
            light_time: false,
            apsidal_period_range_d: None,
            companion_period_range_d: None,
            peaks: 3,
            cycles: CycleOptions::default(),
            bootstrap: None,
        }
    }
}

/// Which parameters the vector holds (see [`ApsidalFit::parameter_names`]).
#[derive(Debug, Clone, Copy, PartialEq)]
struct Layout {
    fit_inclination: bool,
    light_time: bool,
    fixed_inclination_rad: f64,
    method: MinimumTimeMethod,
    reference_period_d: f64,
}

impl Layout {
    fn n_params(self) -> usize {
        5 + self.fit_inclination as usize + 5 * self.light_time as usize
    }
    fn companion_index(self) -> usize {
        5 + self.fit_inclination as usize
    }
    fn names(self) -> Vec<&'static str> {
        let mut v = vec![
            "epoch_shift_d",
            "sidereal_period_shift_d",
            "eccentricity",
            "periastron_argument_at_epoch_rad",
            "apsidal_rate_rad_per_cycle",
        ];
        if self.fit_inclination {
            v.push("inclination_rad");
        }
        if self.light_time {
            v.extend([
                "projected_light_time_d",
                "companion_period_d",
                "sqrt_e_cos_omega",
                "sqrt_e_sin_omega",
                "mean_anomaly_at_epoch_rad",
            ]);
        }
        v
    }
    fn inclination(self, p: &[f64]) -> f64 {
        if self.fit_inclination { p[5] } else { self.fixed_inclination_rad }
    }
}

/// (e, ω) with a negative e read as (|e|, ω + π) and e capped at [`MAX_ECCENTRICITY`].
fn normalised(e: f64, omega: f64) -> (f64, f64) {
    let (e, omega) = if e < 0.0 { (-e, omega + PI) } else { (e, omega) };
    (e.min(MAX_ECCENTRICITY), omega)
}

fn anomalistic_period(ps: f64, rate: f64) -> f64 {
    ps / (1.0 - rate / TAU)
}

/// φ of one timing at raw parameters (e, ω, i), NaN where there is no minimum.
fn phi(layout: Layout, kind: EventKind, e_raw: f64, omega_raw: f64, incl: f64) -> f64 {
    let (e, w) = normalised(e_raw, omega_raw);
    minimum_offset_rad(kind, e, w, incl, layout.method).unwrap_or(f64::NAN)
}

fn evaluate(layout: Layout, p: &[f64], cycle: f64, kind: EventKind, t_d: f64) -> f64 {
    let ps = layout.reference_period_d + p[1];
    let pa = anomalistic_period(ps, p[4]);
    let f = phi(layout, kind, p[2], p[3] + p[4] * cycle, layout.inclination(p));
    let mut v = p[0] + p[1] * cycle + pa / TAU * f;
    if layout.light_time {
        let c = layout.companion_index();
        v += light_time_d(&p[c..c + 5], t_d);
    }
    v
}

struct ApsidalModel<'a> {
    layout: Layout,
    series: &'a OcSeries,
    weights: Vec<f64>,
}

impl LsqModel for ApsidalModel<'_> {
    fn n_params(&self) -> usize {
        self.layout.n_params()
    }
    fn n_obs(&self) -> usize {
        self.series.len()
    }
    fn predict(&self, p: &[f64], out: &mut [f64]) {
        let s = self.series;
        for (i, o) in out.iter_mut().enumerate() {
            *o = evaluate(self.layout, p, s.cycle[i], s.kind[i], s.time_d[i]);
        }
    }
    fn jacobian(&self, p: &[f64], jac: &mut [f64]) {
        let l = self.layout;
        let np = l.n_params();
        let s = self.series;
        let ps = l.reference_period_d + p[1];
        let k = 1.0 - p[4] / TAU;
        let pa = ps / k;
        let incl = l.inclination(p);
        let (he, hw, hi) = (1e-6, 1e-6, 1e-6);
        for i in 0..s.len() {
            let (e_cyc, kind) = (s.cycle[i], s.kind[i]);
            let w = p[3] + p[4] * e_cyc;
            let f = phi(l, kind, p[2], w, incl);
            let fe = (phi(l, kind, p[2] + he, w, incl) - phi(l, kind, p[2] - he, w, incl)) / (2.0 * he);
            let fw = (phi(l, kind, p[2], w + hw, incl) - phi(l, kind, p[2], w - hw, incl)) / (2.0 * hw);
            let row = &mut jac[i * np..(i + 1) * np];
            row[0] = 1.0;
            row[1] = e_cyc + f / TAU / k;
            row[2] = pa / TAU * fe;
            row[3] = pa / TAU * fw;
            row[4] = pa / TAU * e_cyc * fw + f / TAU * ps / (TAU * k * k);
            if l.fit_inclination {
                row[5] = pa / TAU * (phi(l, kind, p[2], w, incl + hi) - phi(l, kind, p[2], w, incl - hi)) / (2.0 * hi);
            }
            if l.light_time {
                let c = l.companion_index();
                let (_, g) = light_time_with_gradient_d(&p[c..c + 5], s.time_d[i]);
                row[c..c + 5].copy_from_slice(&g);
            }
        }
    }
    fn observed(&self) -> &[f64] {
        &self.series.oc_d
    }
    fn weight(&self) -> &[f64] {
        &self.weights
    }
}

/// A fitted apsidal-motion model.
#[derive(Debug, Clone, PartialEq)]
pub struct ApsidalFit {
    /// Parameters, in the order of [`ApsidalFit::parameter_names`].
    pub params: Vec<f64>,
    /// Covariance, row-major p×p, from the errors as given.
    pub covariance: Vec<f64>,
    /// χ².
    pub chi2: f64,
    /// Number of timings.
    pub n: usize,
    /// Weights 1/σ² (days⁻²).
    pub weights: Vec<f64>,
    /// Derived quantities: (name, value, 1σ from the covariance).
    pub derived: Vec<(&'static str, f64, f64)>,
    /// Notes of the fit.
    pub notes: Vec<String>,
    layout: Layout,
}

impl ApsidalFit {
    /// Parameter names with units: epoch_shift_d, sidereal_period_shift_d, eccentricity,
    /// periastron_argument_at_epoch_rad, apsidal_rate_rad_per_cycle, [inclination_rad],
    /// [projected_light_time_d, companion_period_d, sqrt_e_cos_omega, sqrt_e_sin_omega,
    /// mean_anomaly_at_epoch_rad].
    pub fn parameter_names(&self) -> Vec<&'static str> {
        self.layout.names()
    }
    /// 1σ of parameter j from the covariance.
    pub fn sigma(&self, j: usize) -> f64 {
        let p = self.params.len();
        self.covariance[j * p + j].max(0.0).sqrt()
    }
    /// Degrees of freedom n − p.
    pub fn dof(&self) -> usize {
        self.n.saturating_sub(self.params.len())
    }
    /// The model O − C (days) of a minimum of `kind` at cycle `cycle` and time `t_d` (days
    /// since the reference epoch).
    pub fn model_oc_d(&self, cycle: f64, kind: EventKind, t_d: f64) -> f64 {
        evaluate(self.layout, &self.params, cycle, kind, t_d)
    }
    /// 1σ of the model O − C from the covariance (numerical gradient), days.
    pub fn model_sigma_d(&self, cycle: f64, kind: EventKind, t_d: f64) -> f64 {
        let g = gradient(&self.params, |p| evaluate(self.layout, p, cycle, kind, t_d));
        quadratic_form(&g, &self.covariance)
    }
    /// The linear part ΔT₀ + ΔP_s·E of the model O − C at cycle `cycle`, days (what an O–C
    /// diagram of apsidal motion removes to show the two curves about each other).
    pub fn linear_part_d(&self, cycle: f64) -> f64 {
        self.params[0] + self.params[1] * cycle
    }
    /// The light-time part of the model at `t_d`, days (0 without a companion).
    pub fn light_time_d(&self, t_d: f64) -> f64 {
        if !self.layout.light_time {
            return 0.0;
        }
        let c = self.layout.companion_index();
        light_time_d(&self.params[c..c + 5], t_d)
    }
    /// Argument of periastron at cycle `cycle`, degrees in [0, 360).
    pub fn periastron_argument_deg(&self, cycle: f64) -> f64 {
        let (_, w) = normalised(self.params[2], self.params[3] + self.params[4] * cycle);
        w.to_degrees().rem_euclid(360.0)
    }
    /// A derived value by name: (value, 1σ).
    pub fn derived_value(&self, name: &str) -> Option<(f64, f64)> {
        self.derived.iter().find(|d| d.0 == name).map(|d| (d.1, d.2))
    }
}

/// Derived quantities: (name, value, wrap period or 0). sidereal_period_d = P_ref + ΔP_s;
/// anomalistic_period_d = P_s/(1 − ω̇/2π); apsidal_rate_deg_per_cycle = ω̇;
/// apsidal_rate_deg_per_yr = ω̇·365.25/P_s; apsidal_period_d = 2π·P_s/ω̇ (and _yr);
/// eccentricity; periastron_argument_at_epoch_deg; inclination_deg (when fitted); and with a companion
/// the light-time quantities of the O–C stage (semi-amplitude s, a₁₂ sin i au, P₃, e₃, ω₃,
/// periastron time, mass function).
fn derived_of(layout: Layout, p: &[f64]) -> Vec<(&'static str, f64, f64)> {
    let ps = layout.reference_period_d + p[1];
    let rate = p[4];
    let (e, w) = normalised(p[2], p[3]);
    let mut v = vec![
        ("sidereal_period_d", ps, 0.0),
        ("anomalistic_period_d", anomalistic_period(ps, rate), 0.0),
        ("apsidal_rate_deg_per_cycle", rate.to_degrees(), 0.0),
        ("apsidal_rate_deg_per_yr", rate.to_degrees() * DAYS_PER_JULIAN_YEAR / ps, 0.0),
        ("apsidal_period_d", TAU * ps / rate, 0.0),
        ("apsidal_period_yr", TAU * ps / rate / DAYS_PER_JULIAN_YEAR, 0.0),
        ("eccentricity", e, 0.0),
        ("periastron_argument_at_epoch_deg", w.to_degrees().rem_euclid(360.0), 360.0),
    ];
    if layout.fit_inclination {
        v.push(("inclination_deg", layout.inclination(p).to_degrees(), 0.0));
    }
    if layout.light_time {
        let c = layout.companion_index();
        let mut q = vec![p[0], p[1]];
        q.extend_from_slice(&p[c..c + 5]);
        v.extend(
            derived_values(ModelKind::LinearLightTime, &q, layout.reference_period_d)
                .into_iter()
                .filter(|d| d.0 != "period_d")
                .map(|(n, x, wrap)| (companion_name(n), x, wrap)),
        );
    }
    v
}

/// The companion's derived names, prefixed so that e and ω of the eclipsing orbit and of the
/// companion's orbit are never confused.
fn companion_name(name: &'static str) -> &'static str {
    match name {
        "semi_amplitude_s" => "companion_semi_amplitude_s",
        "projected_light_time_s" => "companion_projected_light_time_s",
        "projected_semi_major_axis_au" => "companion_projected_semi_major_axis_au",
        "companion_period_d" => "companion_period_d",
        "companion_period_yr" => "companion_period_yr",
        "eccentricity" => "companion_eccentricity",
        "periastron_argument_deg" => "companion_periastron_argument_deg",
        "periastron_time_d" => "companion_periastron_time_d",
        "mass_function_msun" => "companion_mass_function_msun",
        other => other,
    }
}

fn wrapped(d: f64, wrap: f64) -> f64 {
    if wrap > 0.0 { d - wrap * (d / wrap).round() } else { d }
}

fn derived_with_sigma(layout: Layout, p: &[f64], cov: &[f64]) -> Vec<(&'static str, f64, f64)> {
    let base = derived_of(layout, p);
    base.iter()
        .enumerate()
        .map(|(k, &(name, value, wrap))| {
            let g = gradient(p, |q| value + wrapped(derived_of(layout, q)[k].1 - value, wrap));
            (name, value, quadratic_form(&g, cov))
        })
        .collect()
}

/// The first-order model's χ² for a fixed apsidal rate: O − C = a + b·E ∓ (c cos ω̇E + d sin ω̇E)
/// (− primary, + secondary). Returns (χ², start parameters [ΔT₀, ΔP, e, ω₀, ω̇]).
fn first_order_start(series: &OcSeries, weights: &[f64], rate: f64, amplitude_per_e: f64) -> Option<(f64, [f64; 5])> {
    let p = 4;
    let mut a = [0.0; 16];
    let mut b = [0.0; 4];
    let rows: Vec<[f64; 4]> = (0..series.len())
        .map(|i| {
            let e = series.cycle[i];
            let sign = if series.kind[i] == EventKind::Secondary { 1.0 } else { -1.0 };
            let (s, c) = (rate * e).sin_cos();
            [1.0, e, sign * c, sign * s]
        })
        .collect();
    for (i, r) in rows.iter().enumerate() {
        add_weighted_row(&mut a, &mut b, r, weights[i], series.oc_d[i]);
    }
    let x = solve_scaled_normal_equations(&mut a, &mut b, p)?;
    let chi2: f64 = rows
        .iter()
        .enumerate()
        .map(|(i, r)| weights[i] * (series.oc_d[i] - (0..p).map(|j| x[j] * r[j]).sum::<f64>()).powi(2))
        .sum();
    // c = A e cos ω₀, d = −A e sin ω₀.
    let e = x[2].hypot(x[3]) / amplitude_per_e;
    let omega = (-x[3]).atan2(x[2]);
    Some((chi2, [x[0], x[1], e.min(0.9), omega, rate]))
}

fn apsidal_grid(
    series: &OcSeries,
    weights: &[f64],
    layout: Layout,
    range_d: (f64, f64),
    peaks: usize,
) -> Vec<[f64; 5]> {
    let ps = layout.reference_period_d;
    let s2 = layout.fixed_inclination_rad.sin().powi(2).max(1e-6);
    let amplitude_per_e = ps / TAU * (1.0 + 1.0 / s2);
    let baseline_cycles =
        (series.cycle.last().copied().unwrap_or(0.0) - series.cycle.first().copied().unwrap_or(0.0)).abs().max(1.0);
    // Rates in rad/cycle from the longest to the shortest apsidal period.
    let f_lo = ps / range_d.1;
    let f_hi = ps / range_d.0;
    let df = 1.0 / (10.0 * baseline_cycles);
    let nf = (((f_hi - f_lo) / df).ceil() as usize).clamp(2, 100_000);
    let results: Vec<Option<(f64, [f64; 5])>> = (0..nf)
        .into_par_iter()
        .map(|k| {
            let f = f_lo + (f_hi - f_lo) * k as f64 / (nf - 1) as f64;
            first_order_start(series, weights, TAU * f, amplitude_per_e)
        })
        .collect();
    let chi = |k: usize| results[k].map_or(f64::INFINITY, |r| r.0);
    let mut minima: Vec<(f64, [f64; 5])> = (0..nf)
        .filter(|&k| chi(k).is_finite() && (k == 0 || chi(k - 1) >= chi(k)) && (k + 1 == nf || chi(k + 1) >= chi(k)))
        .filter_map(|k| results[k])
        .collect();
    minima.sort_by(|a, b| a.0.total_cmp(&b.0));
    minima.truncate(peaks.max(1));
    minima.into_iter().map(|m| m.1).collect()
}

/// Least-squares sinusoid periodogram of residuals r(t) = a + b t + A sin(2πt/P + φ); the
/// deepest `peaks` minima as (P, A, φ).
fn residual_sinusoid_peaks(t: &[f64], r: &[f64], w: &[f64], range_d: (f64, f64), peaks: usize) -> Vec<(f64, f64, f64)> {
    let baseline =
        t.iter().copied().fold(f64::NEG_INFINITY, f64::max) - t.iter().copied().fold(f64::INFINITY, f64::min);
    let (f_lo, f_hi) = (1.0 / range_d.1, 1.0 / range_d.0);
    let df = 1.0 / (5.0 * baseline.max(1.0));
    let nf = (((f_hi - f_lo) / df).ceil() as usize).clamp(2, 200_000);
    let res: Vec<(f64, f64, f64, f64)> = (0..nf)
        .into_par_iter()
        .map(|k| {
            let f = f_lo + (f_hi - f_lo) * k as f64 / (nf - 1) as f64;
            let design: Vec<f64> = t
                .iter()
                .flat_map(|&x| {
                    let (s, c) = (TAU * f * x).sin_cos();
                    [1.0, x, s, c]
                })
                .collect();
            match weighted_linear_lsq(&design, 4, r, w) {
                Ok(fit) => (1.0 / f, fit.chi2, fit.params[2].hypot(fit.params[3]), fit.params[3].atan2(fit.params[2])),
                Err(_) => (1.0 / f, f64::INFINITY, 0.0, 0.0),
            }
        })
        .collect();
    let mut minima: Vec<(f64, f64, f64, f64)> = (0..nf)
        .filter(|&k| {
            let c = res[k].1;
            c.is_finite() && (k == 0 || res[k - 1].1 >= c) && (k + 1 == nf || res[k + 1].1 >= c)
        })
        .map(|k| res[k])
        .collect();
    minima.sort_by(|a, b| a.1.total_cmp(&b.1));
    minima.truncate(peaks.max(1));
    minima.into_iter().map(|m| (m.0, m.2, m.3)).collect()
}

fn best_fit(model: &ApsidalModel, starts: &[Vec<f64>]) -> Option<crate::fit::NonlinearFit> {
    starts
        .par_iter()
        .filter_map(|s| super::fitting::scaled_levenberg_with(model, s, &lm_options()).ok())
        .filter(|f| f.chi2.is_finite() && f.params.iter().all(|v| v.is_finite()))
        .min_by(|a, b| a.chi2.total_cmp(&b.chi2))
}

fn check_timings(series: &OcSeries) -> Result<(), OcError> {
    if let Some(i) = series.kind.iter().position(|&k| k == EventKind::Maximum) {
        return Err(OcError::Invalid(format!(
            "row {}: a maximum cannot enter an apsidal-motion fit; it takes primary and secondary minima only",
            series.row[i]
        )));
    }
    let secondaries = series.kind.iter().filter(|&&k| k == EventKind::Secondary).count();
    let primaries = series.len() - secondaries;
    if primaries < 2 || secondaries < 2 {
        return Err(OcError::Invalid(format!(
            "an apsidal-motion fit needs primary and secondary minima (at least 2 of each); got {primaries} primary and {secondaries} secondary"
        )));
    }
    Ok(())
}

/// Fits the apsidal-motion model to an O–C series of primary and secondary minima.
///
/// Errors: maxima in the series, fewer than 2 primaries or 2 secondaries, too few timings
/// for the parameters, bad ranges or inclination, no convergence.
pub fn fit_apsidal(series: &OcSeries, options: &ApsidalOptions) -> Result<ApsidalFit, OcError> {
    check_timings(series)?;
    let layout = Layout {
        fit_inclination: options.fit_inclination,
        light_time: options.light_time,
        fixed_inclination_rad: options.inclination_deg.to_radians(),
        method: options.method,
        reference_period_d: series.reference.period_d,
    };
    if !(options.inclination_deg.is_finite() && options.inclination_deg > 0.0 && options.inclination_deg <= 180.0) {
        return Err(OcError::Invalid(format!(
            "inclination {}° must lie in (0°, 180°]; eclipsing binaries have i near 90°",
            options.inclination_deg
        )));
    }
    let np = layout.n_params();
    if series.len() <= np {
        return Err(OcError::TooFewTimings {
            model: if options.light_time { "apsidal+light-time" } else { "apsidal" },
            needed: np + 1,
            got: series.len(),
        });
    }
    let first = series.time_d.first().copied().unwrap_or(0.0);
    let baseline = (series.time_d.last().copied().unwrap_or(0.0) - first).abs().max(series.reference.period_d);
    let range = options.apsidal_period_range_d.unwrap_or((baseline / 10.0, 50.0 * baseline));
    if !(range.0 > 0.0 && range.1 > range.0 && range.1.is_finite()) {
        return Err(OcError::Invalid(format!("apsidal period range {range:?} d must satisfy 0 < low < high")));
    }
    let weights = series.weights();
    let grid = apsidal_grid(series, &weights, layout, range, options.peaks);
    let extend = |s: &[f64; 5]| {
        let mut v = s.to_vec();
        if layout.fit_inclination {
            v.push(layout.fixed_inclination_rad);
        }
        v
    };
    let apsidal_only = Layout { light_time: false, ..layout };
    let model0 = ApsidalModel { layout: apsidal_only, series, weights: weights.clone() };
    let starts: Vec<Vec<f64>> = grid.iter().map(extend).collect();
    let fit0 = best_fit(&model0, &starts).ok_or_else(|| OcError::NotConverged {
        model: "apsidal",
        detail: "no start of the apsidal-rate grid converged".into(),
    })?;
    let mut notes = Vec::new();
    let fit = if layout.light_time {
        let range = options.companion_period_range_d.unwrap_or_else(|| default_range(series));
        if !(range.0 > 0.0 && range.1 > range.0 && range.1.is_finite()) {
            return Err(OcError::Invalid(format!("companion period range {range:?} d must satisfy 0 < low < high")));
        }
        let mut pred = vec![0.0; series.len()];
        model0.predict(&fit0.params, &mut pred);
        let resid: Vec<f64> = series.oc_d.iter().zip(&pred).map(|(o, m)| o - m).collect();
        let peaks = residual_sinusoid_peaks(&series.time_d, &resid, &weights, range, options.peaks);
        let mut starts = Vec::new();
        for &(p3, amp, phase) in &peaks {
            for &(e3, w3) in &[(0.01f64, 0.0f64), (0.3, 0.0), (0.3, FRAC_PI_2), (0.3, PI), (0.3, -FRAC_PI_2)] {
                let mut s = fit0.params.clone();
                s.extend([amp, p3, e3.sqrt() * w3.cos(), e3.sqrt() * w3.sin(), phase - w3]);
                starts.push(s);
            }
        }
        let model = ApsidalModel { layout, series, weights: weights.clone() };
        best_fit(&model, &starts).ok_or_else(|| OcError::NotConverged {
            model: "apsidal+light-time",
            detail: "no companion start converged".into(),
        })?
    } else {
        fit0
    };
    if !fit.converged {
        notes.push("Levenberg–Marquardt stopped at its iteration limit before its tolerance".to_string());
    }
    let (e, _) = normalised(fit.params[2], fit.params[3]);
    if e >= MAX_ECCENTRICITY {
        notes.push(format!("the eccentricity ran into its bound {MAX_ECCENTRICITY}"));
    }
    if fit.params[4] < 0.0 {
        notes.push(
            "the fitted apsidal rate is negative (retrograde); timings alone barely tell ±ω̇ apart (mirror solution ω → −ω), and apsidal motion of a binary advances".into(),
        );
    }
    let derived = derived_with_sigma(layout, &fit.params, &fit.covariance);
    Ok(ApsidalFit {
        params: fit.params,
        covariance: fit.covariance,
        chi2: fit.chi2,
        n: series.len(),
        weights,
        derived,
        notes,
        layout,
    })
}

/// Bootstrap 1σ of the apsidal fit's parameters and derived quantities.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ApsidalBootstrap {
    /// Resamples attempted.
    pub resamples: usize,
    /// Resamples whose fit failed (excluded).
    pub failed: usize,
    /// 1σ of each parameter.
    pub parameter_sigma: Vec<f64>,
    /// 1σ of each derived quantity, in the order of [`ApsidalFit::derived`].
    pub derived_sigma: Vec<f64>,
}

/// One bootstrap resample's parameters and derived quantities.
type Draw = (Vec<f64>, Vec<f64>);

/// Pairs bootstrap of an apsidal fit: timings drawn with replacement (resample k from stream
/// k of the seed, so the result does not depend on the thread count), each refitted by
/// Levenberg–Marquardt from the best fit. `progress(1)` is called after each resample.
/// Source: Efron & Tibshirani (1993), An Introduction to the Bootstrap, ch. 9.
pub fn bootstrap_apsidal(
    series: &OcSeries,
    fit: &ApsidalFit,
    options: &BootstrapOptions,
    progress: &(dyn Fn(u64) + Sync),
) -> Result<ApsidalBootstrap, OcError> {
    if options.resamples < 2 {
        return Err(OcError::Invalid(format!("the bootstrap needs at least 2 resamples, got {}", options.resamples)));
    }
    let n = series.len();
    let base = derived_of(fit.layout, &fit.params);
    let draws: Vec<Option<Draw>> = (0..options.resamples)
        .into_par_iter()
        .map(|k| {
            let mut rng = SeededRng::for_stream(options.seed, k as u64);
            let mut copies = vec![0u32; n];
            for _ in 0..n {
                copies[rng.below(n)] += 1;
            }
            let idx: Vec<usize> = (0..n).filter(|&i| copies[i] > 0).collect();
            let sub = series.subset(&idx);
            let weights: Vec<f64> = idx.iter().map(|&i| fit.weights[i] * copies[i] as f64).collect();
            let model = ApsidalModel { layout: fit.layout, series: &sub, weights };
            let out = super::fitting::scaled_levenberg_with(&model, &fit.params, &bootstrap_lm_options())
                .ok()
                .filter(|f| f.chi2.is_finite() && f.params.iter().all(|v| v.is_finite()))
                .map(|f| {
                    let d = derived_of(fit.layout, &f.params)
                        .iter()
                        .zip(&base)
                        .map(|(a, b)| b.1 + wrapped(a.1 - b.1, b.2))
                        .collect();
                    (f.params, d)
                });
            progress(1);
            out
        })
        .collect();
    let ok: Vec<&Draw> = draws.iter().flatten().collect();
    if ok.len() < 2 {
        return Err(OcError::NotConverged {
            model: "apsidal",
            detail: format!("only {} of {} bootstrap resamples could be fitted", ok.len(), options.resamples),
        });
    }
    let sd = |get: &dyn Fn(&Draw) -> f64| {
        let m = ok.iter().map(|d| get(d)).sum::<f64>() / ok.len() as f64;
        (ok.iter().map(|d| (get(d) - m).powi(2)).sum::<f64>() / (ok.len() - 1) as f64).sqrt()
    };
    Ok(ApsidalBootstrap {
        resamples: options.resamples,
        failed: options.resamples - ok.len(),
        parameter_sigma: (0..fit.params.len()).map(|j| sd(&|d| d.0[j])).collect(),
        derived_sigma: (0..base.len()).map(|j| sd(&|d| d.1[j])).collect(),
    })
}

/// The caution stated with every apsidal-motion result whose apsidal period exceeds the
/// baseline of the timings.
pub const APSIDAL_EXTRAPOLATION_CAUTION: &str = "caution: the apsidal period is longer than the span of the timings, \
so it is extrapolated from part of one turn of the apsides; its interval assumes a constant rate";

/// The result of [`analyse_apsidal`]: serialisable summary, with the series and fit kept
/// for tables and figures.
#[derive(Debug, Clone, Default, Serialize, Deserialize)]
pub struct ApsidalAnalysis {
    /// Model name: `apsidal` or `apsidal+light-time`.
    pub model: String,
    /// How the times of minimum were computed.
    pub method: MinimumTimeMethod,
    /// Whether the inclination was fitted (otherwise fixed at `inclination_deg`).
    pub inclination_fitted: bool,
    /// The fixed inclination or the fit's start, degrees.
    pub inclination_deg: f64,
    /// Number of timings, of them primary and secondary.
    pub timings: usize,
    /// Primary minima.
    pub primaries: usize,
    /// Secondary minima.
    pub secondaries: usize,
    /// The reference ephemeris the cycles are counted from.
    pub reference_ephemeris: Option<ReferenceEphemerisSummary>,
    /// χ² of the fit.
    pub chi2: f64,
    /// Degrees of freedom.
    pub dof: usize,
    /// χ²/dof.
    pub reduced_chi2: f64,
    /// BIC = χ² + k ln n of the apsidal model.
    pub bic: f64,
    /// BIC of a linear ephemeris fitted to the same minima, and the difference
    /// (apsidal − linear; negative favours apsidal motion).
    pub linear_bic: f64,
    /// BIC(apsidal) − BIC(linear).
    pub delta_bic_vs_linear: f64,
    /// Fitted parameters with covariance (and bootstrap) 1σ.
    pub parameters: Vec<EstimateSummary>,
    /// Derived quantities (periods, apsidal rate and period, e, ω₀, companion).
    pub derived: Vec<EstimateSummary>,
    /// Covariance of the parameters, row-major.
    pub covariance: Vec<f64>,
    /// Warnings of the cycle count.
    pub warnings: Vec<String>,
    /// Cautions a reader must see with the numbers.
    pub cautions: Vec<String>,
    /// Notes of the fit.
    pub notes: Vec<String>,
    /// The bootstrap, when one was run.
    pub bootstrap: Option<BootstrapRun>,
    /// The cycle numbers and O–C values (not serialised).
    #[serde(skip)]
    pub series: Option<OcSeries>,
    /// The fit (not serialised).
    #[serde(skip)]
    pub fit: Option<ApsidalFit>,
}

fn finite(x: f64) -> Option<f64> {
    x.is_finite().then_some(x)
}

/// Whole apsidal-motion analysis of BJD_TDB minima against `reference`: cycle numbers,
/// the fit, bootstrap errors (with `progress(n)` as resamples finish), the comparison with a
/// linear ephemeris and the cautions.
///
/// Errors: those of [`assign_cycles`], [`fit_apsidal`] and [`bootstrap_apsidal`].
pub fn analyse_apsidal(
    timings: &[Timing],
    reference: &ReferenceEphemeris,
    options: &ApsidalOptions,
    progress: &(dyn Fn(u64) + Sync),
) -> Result<ApsidalAnalysis, OcError> {
    let series = assign_cycles(timings, reference, &options.cycles)?;
    let fit = fit_apsidal(&series, options)?;
    let boot = match options.bootstrap {
        Some(b) if b.resamples > 0 => Some(bootstrap_apsidal(&series, &fit, &b, progress)?),
        _ => None,
    };
    let parameters = fit
        .parameter_names()
        .iter()
        .enumerate()
        .map(|(j, name)| EstimateSummary {
            name: name.to_string(),
            value: fit.params[j],
            sigma_covariance: finite(fit.sigma(j)),
            sigma_bootstrap: boot.as_ref().and_then(|b| finite(b.parameter_sigma[j])),
            binary_mass_msun: None,
        })
        .collect();
    let derived = fit
        .derived
        .iter()
        .enumerate()
        .map(|(j, d)| EstimateSummary {
            name: d.0.to_string(),
            value: d.1,
            sigma_covariance: finite(d.2),
            sigma_bootstrap: boot.as_ref().and_then(|b| finite(b.derived_sigma[j])),
            binary_mass_msun: None,
        })
        .collect();
    let weights = series.weights();
    let design: Vec<f64> = series.cycle.iter().flat_map(|&e| [1.0, e]).collect();
    let linear = weighted_linear_lsq(&design, 2, &series.oc_d, &weights)?;
    let ln_n = (series.len() as f64).ln();
    let linear_bic = linear.chi2 + 2.0 * ln_n;
    let bic = fit.chi2 + fit.params.len() as f64 * ln_n;
    let mut cautions = Vec::new();
    let span = series.time_d.last().copied().unwrap_or(0.0) - series.time_d.first().copied().unwrap_or(0.0);
    if let Some((u, _)) = fit.derived_value("apsidal_period_d")
        && u.abs() > span
    {
        cautions.push(APSIDAL_EXTRAPOLATION_CAUTION.to_string());
    }
    if options.light_time {
        cautions.push(super::analysis::LIGHT_TIME_CAUTION.to_string());
    }
    let secondaries = series.kind.iter().filter(|&&k| k == EventKind::Secondary).count();
    Ok(ApsidalAnalysis {
        model: if options.light_time { "apsidal+light-time" } else { "apsidal" }.to_string(),
        method: options.method,
        inclination_fitted: options.fit_inclination,
        inclination_deg: options.inclination_deg,
        timings: series.len(),
        primaries: series.len() - secondaries,
        secondaries,
        reference_ephemeris: Some(ReferenceEphemerisSummary {
            epoch_bjd_tdb: crate::time::format_time(&reference.epoch, crate::time::TimeFormat::Jd),
            period_d: reference.period_d,
            period_sigma_d: reference.period_sigma_d,
        }),
        chi2: fit.chi2,
        dof: fit.dof(),
        reduced_chi2: if fit.dof() > 0 { fit.chi2 / fit.dof() as f64 } else { f64::INFINITY },
        bic,
        linear_bic,
        delta_bic_vs_linear: bic - linear_bic,
        parameters,
        derived,
        covariance: fit.covariance.clone(),
        warnings: series.warnings.clone(),
        cautions,
        notes: fit.notes.clone(),
        bootstrap: boot.as_ref().map(|b| BootstrapRun {
            resamples: b.resamples,
            failed: b.failed,
            seed: options.bootstrap.map(|o| o.seed).unwrap_or(0),
        }),
        series: Some(series),
        fit: Some(fit),
    })
}

impl ApsidalAnalysis {
    /// The O–C table, one row per minimum in time order: row (input, 1-based), bjd_tdb (text,
    /// 14 decimals), cycle, kind, error_d, observed_minus_computed_d, model_apsidal_d,
    /// model_sigma_apsidal_d, residual_apsidal_d (days), periastron_argument_deg (ω at the
    /// event) and light_time_d (the companion's part of the model, 0 without one). Empty
    /// when the analysis kept no series.
    pub fn table(&self) -> polars::prelude::PolarsResult<polars::prelude::DataFrame> {
        use crate::constants::SECONDS_PER_DAY;
        use crate::time::{TimeFormat, format_time};
        use polars::prelude::{Column, DataFrame};
        let (Some(s), Some(f)) = (self.series.as_ref(), self.fit.as_ref()) else { return Ok(DataFrame::empty()) };
        let n = s.len();
        let model: Vec<f64> = (0..n).map(|i| f.model_oc_d(s.cycle[i], s.kind[i], s.time_d[i])).collect();
        let columns = vec![
            Column::new("row".into(), s.row.iter().map(|&r| r as u64).collect::<Vec<_>>()),
            Column::new(
                "bjd_tdb".into(),
                s.time_d
                    .iter()
                    .map(|&t| format_time(&s.reference.epoch.add_seconds(t * SECONDS_PER_DAY), TimeFormat::Jd))
                    .collect::<Vec<_>>(),
            ),
            Column::new("cycle".into(), s.cycle.clone()),
            Column::new("kind".into(), s.kind.iter().map(|k| k.name().to_string()).collect::<Vec<_>>()),
            Column::new("error_d".into(), s.error_d.clone()),
            Column::new("observed_minus_computed_d".into(), s.oc_d.clone()),
            Column::new("model_apsidal_d".into(), model.clone()),
            Column::new(
                "model_sigma_apsidal_d".into(),
                (0..n).map(|i| f.model_sigma_d(s.cycle[i], s.kind[i], s.time_d[i])).collect::<Vec<_>>(),
            ),
            Column::new("residual_apsidal_d".into(), s.oc_d.iter().zip(&model).map(|(o, m)| o - m).collect::<Vec<_>>()),
            Column::new(
                "periastron_argument_deg".into(),
                s.cycle.iter().map(|&c| f.periastron_argument_deg(c)).collect::<Vec<_>>(),
            ),
            Column::new("light_time_d".into(), s.time_d.iter().map(|&t| f.light_time_d(t)).collect::<Vec<_>>()),
        ];
        DataFrame::new(n, columns)
    }

    /// The model curves of primary and secondary minimum on `points` cycles evenly spread
    /// over the span of the timings, with the linear part ΔT₀ + ΔP_s·E removed:
    /// (cycle, primary d, secondary d) — the two curves that diverge and converge as the
    /// apsides turn. Empty when the analysis kept no fit.
    pub fn model_curves(&self, points: usize) -> Vec<(f64, f64, f64)> {
        let (Some(s), Some(f)) = (self.series.as_ref(), self.fit.as_ref()) else { return Vec::new() };
        let (Some(&c0), Some(&c1)) = (s.cycle.first(), s.cycle.last()) else { return Vec::new() };
        let p = s.reference.period_d;
        let points = points.max(2);
        (0..points)
            .map(|k| {
                let c = c0 + (c1 - c0) * k as f64 / (points - 1) as f64;
                let prim = f.model_oc_d(c, EventKind::Primary, c * p) - f.linear_part_d(c);
                let sec = f.model_oc_d(c + 0.5, EventKind::Secondary, (c + 0.5) * p) - f.linear_part_d(c + 0.5);
                (c, prim, sec)
            })
            .collect()
    }
}
