//! The fitted ephemeris of an O–C model: what predictions are made from.
//!
//! A [`FittedEphemeris`] is a reference ephemeris (T_ref, P_ref) and one O–C model with its
//! fitted [`Estimates`]. The time of cycle E is
//!
//! T(E) = T_ref + P_ref·E + (O − C)(E, t),  t = T(E) − T_ref,
//!
//! with (O − C) the very model the fit used ([`super::models::evaluate`]): ΔT₀ + ΔP·E
//! [+ Q·E²] [+ the light time of one or two companions, Irwin 1952]. The light time depends
//! on t, which depends on it in turn; fixed-point steps from the polynomial time converge
//! geometrically (the delay changes by ~2π·A/P₃ per unit of t, ~10⁻⁴) and stop below 1e-13
//! relative (< 1 ns over a century, tested).
//! The 1σ of T(E) is √(gᵀ C g) with g = ∂T/∂θ analytic ([`evaluate_with_gradient`]) and C
//! the fit's covariance (linear propagation; exact for the polynomial models).
//!
//! It is built from a live fit ([`FittedEphemeris::from_fit`]), from a model of an
//! [`OcAnalysis`] read back from its JSON summary ([`OcAnalysis::ephemeris`]), or from
//! numbers a user gives ([`FittedEphemeris::linear`], [`FittedEphemeris::quadratic`]).

use super::analysis::{ModelSummary, OcAnalysis};
use super::cycles::ReferenceEphemeris;
use super::fitting::ModelFit;
use super::models::{ModelKind, OcParameter, evaluate, evaluate_with_gradient};
use crate::constants::SECONDS_PER_DAY;
use crate::fit::{Estimates, parse_parameter};
use crate::time::{Instant, TimeScale};

/// Why an ephemeris cannot be built or used.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum EphemerisError {
    /// A value out of its range (names the value and the accepted range).
    #[error("ephemeris: {0}")]
    Invalid(String),
    /// The analysis has no model of that kind.
    #[error("the O–C analysis has no '{wanted}' model; it holds: {}", have.join(", "))]
    NoSuchModel {
        /// The model asked for.
        wanted: ModelKind,
        /// The models it has.
        have: Vec<String>,
    },
    /// The instant cannot be reached by the ephemeris.
    #[error(
        "the quadratic ephemeris (P = {period_d} d, Q = {quadratic_d} d) never reaches {instant}: its period would fall to zero"
    )]
    Unreachable {
        /// Period at cycle 0, days.
        period_d: f64,
        /// Q, days.
        quadratic_d: f64,
        /// The instant, as text.
        instant: String,
    },
}

/// A reference ephemeris with one fitted O–C model: event times, their 1σ, and the cycle
/// at any instant.
#[derive(Debug, Clone, PartialEq)]
pub struct FittedEphemeris {
    /// The reference ephemeris the O–C was counted against (epoch BJD_TDB, period in days).
    pub reference: ReferenceEphemeris,
    /// The O–C model.
    pub kind: ModelKind,
    /// Its fitted parameters and covariance ([`ModelKind::parameters`] order).
    pub estimates: Estimates<OcParameter>,
}

fn check(ok: bool, text: impl FnOnce() -> String) -> Result<(), EphemerisError> {
    if ok { Ok(()) } else { Err(EphemerisError::Invalid(text())) }
}

impl FittedEphemeris {
    /// Builds and checks an ephemeris: the epoch on TDB, the period positive and finite,
    /// parameters and covariance finite and of the model's size, variances ≥ 0, the
    /// covariance symmetric (to 1e-9 relative), companion periods positive.
    pub fn new(
        reference: ReferenceEphemeris,
        kind: ModelKind,
        estimates: Estimates<OcParameter>,
    ) -> Result<FittedEphemeris, EphemerisError> {
        check(reference.epoch.scale() == TimeScale::Tdb, || {
            format!("the epoch must be a BJD_TDB (scale TDB), got scale {}", reference.epoch.scale())
        })?;
        check(reference.period_d.is_finite() && reference.period_d > 0.0, || {
            format!("the period must be a positive number of days, got {}", reference.period_d)
        })?;
        check(estimates.parameters == kind.parameters(), || {
            format!(
                "the {kind} model has parameters {}, got {}",
                kind.parameter_names().join(", "),
                estimates.parameters.iter().map(|p| p.to_string()).collect::<Vec<_>>().join(", ")
            )
        })?;
        let n = estimates.parameters.len();
        for (i, v) in estimates.value.iter().enumerate() {
            check(v.is_finite(), || format!("{} is not finite: {v}", estimates.parameters[i]))?;
        }
        for i in 0..n {
            check(estimates.covariance[i][i] >= 0.0, || {
                format!(
                    "the variance of {} cannot be negative: {}",
                    estimates.parameters[i], estimates.covariance[i][i]
                )
            })?;
            for j in 0..n {
                let (v, w) = (estimates.covariance[i][j], estimates.covariance[j][i]);
                check(v.is_finite(), || format!("covariance element ({i},{j}) is not finite: {v}"))?;
                check((v - w).abs() <= 1e-9 * (v.abs() + w.abs()) + f64::MIN_POSITIVE, || {
                    format!("the covariance is not symmetric: ({i},{j}) = {v} but ({j},{i}) = {w}")
                })?;
            }
        }
        for p in [OcParameter::CompanionPeriodD, OcParameter::Companion2PeriodD] {
            if let Some(v) = estimates.value(p) {
                check(v > 0.0, || format!("{p} must be positive, got {v}"))?;
            }
        }
        let e = FittedEphemeris { reference, kind, estimates };
        check(e.period_d() > 0.0, || format!("the fitted period must be positive, got {} d", e.period_d()))?;
        Ok(e)
    }

    /// A linear ephemeris T = T₀ + P·E with independent 1σ of epoch and period (days).
    pub fn linear(
        epoch: Instant,
        period_d: f64,
        epoch_sigma_d: f64,
        period_sigma_d: f64,
    ) -> Result<FittedEphemeris, EphemerisError> {
        FittedEphemeris::quadratic(epoch, period_d, 0.0, [epoch_sigma_d, period_sigma_d, 0.0]).map(|mut e| {
            e.kind = ModelKind::Linear;
            e.estimates = Estimates {
                parameters: ModelKind::Linear.parameters(),
                value: e.estimates.value[..2].to_vec(),
                covariance: e.estimates.covariance[..2].iter().map(|r| r[..2].to_vec()).collect(),
            };
            e
        })
    }

    /// A quadratic ephemeris T = T₀ + P·E + Q·E² (Q = ½ dP/dE, days) with independent 1σ
    /// of (T₀, P, Q), days.
    pub fn quadratic(
        epoch: Instant,
        period_d: f64,
        quadratic_d: f64,
        sigmas_d: [f64; 3],
    ) -> Result<FittedEphemeris, EphemerisError> {
        for (name, v) in ["epoch", "period", "quadratic term"].iter().zip(sigmas_d) {
            check(v.is_finite() && v >= 0.0, || {
                format!("the {name} 1σ must be a non-negative number of days, got {v}")
            })?;
        }
        check(quadratic_d.is_finite(), || format!("the quadratic term must be finite, got {quadratic_d}"))?;
        let mut covariance = vec![vec![0.0; 3]; 3];
        for i in 0..3 {
            covariance[i][i] = sigmas_d[i] * sigmas_d[i];
        }
        let estimates =
            Estimates { parameters: ModelKind::Quadratic.parameters(), value: vec![0.0, 0.0, quadratic_d], covariance };
        let reference = ReferenceEphemeris { epoch, period_d, period_sigma_d: sigmas_d[1] };
        FittedEphemeris::new(reference, ModelKind::Quadratic, estimates)
    }

    /// The ephemeris of a live fit against `reference`.
    pub fn from_fit(reference: ReferenceEphemeris, fit: &ModelFit) -> Result<FittedEphemeris, EphemerisError> {
        let n = fit.params.len();
        let covariance = (0..n).map(|i| fit.covariance[i * n..(i + 1) * n].to_vec()).collect();
        let estimates = Estimates { parameters: fit.kind.parameters(), value: fit.params.clone(), covariance };
        FittedEphemeris::new(reference, fit.kind, estimates)
    }

    /// The ephemeris of one model of a summary (parameters by name, row-major covariance).
    pub fn from_summary(
        reference: ReferenceEphemeris,
        model: &ModelSummary,
    ) -> Result<FittedEphemeris, EphemerisError> {
        let parameters = model
            .parameters
            .iter()
            .map(|p| parse_parameter::<OcParameter>(&p.name))
            .collect::<Result<Vec<_>, _>>()
            .map_err(|e| EphemerisError::Invalid(format!("model '{}': {e}", model.model)))?;
        let n = parameters.len();
        check(model.covariance.len() == n * n, || {
            format!(
                "model '{}' has {n} parameters and needs {} covariance numbers, got {}",
                model.model,
                n * n,
                model.covariance.len()
            )
        })?;
        let covariance = (0..n).map(|i| model.covariance[i * n..(i + 1) * n].to_vec()).collect();
        let value = model.parameters.iter().map(|p| p.value).collect();
        FittedEphemeris::new(reference, model.model, Estimates { parameters, value, covariance })
    }

    /// Epoch of cycle 0 with the fitted shift, BJD_TDB.
    pub fn epoch(&self) -> Instant {
        self.time_at(0.0)
    }

    /// Fitted period at cycle 0, P_ref + ΔP (plus the light time's rate, ignored), days.
    pub fn period_d(&self) -> f64 {
        self.reference.period_d + self.value(OcParameter::PeriodShiftD)
    }

    /// Q = ½ dP/dE, days (0 for models without the quadratic term).
    pub fn quadratic_d(&self) -> f64 {
        self.value(OcParameter::QuadraticD)
    }

    fn value(&self, p: OcParameter) -> f64 {
        self.estimates.value(p).unwrap_or(0.0)
    }

    /// Days since the reference epoch at which cycle `cycle` is seen: the root of
    /// t = P_ref·E + (O − C)(E, t), by fixed-point steps from the polynomial time.
    fn since_reference_d(&self, cycle: f64) -> f64 {
        let p = &self.estimates.value;
        let base = self.reference.period_d * cycle;
        let mut t = base + p[0] + p[1] * cycle + self.quadratic_d() * cycle * cycle;
        if self.kind.has_light_time() {
            // Contraction by |dτ/dt| ≤ 2π·A/P₃·(1+e)/(1−e) per step (~10⁻⁴): a few steps
            // reach 1e-13 d (~10 ns); at most 12.
            for _ in 0..12 {
                let next = base + evaluate(self.kind, p, cycle, t);
                let done = (next - t).abs() < 1e-13 * t.abs().max(1.0);
                t = next;
                if done {
                    break;
                }
            }
        }
        t
    }

    /// Predicted BJD_TDB of cycle `cycle` (half-integer for secondary minima).
    pub fn time_at(&self, cycle: f64) -> Instant {
        self.reference.epoch.add_seconds(self.since_reference_d(cycle) * SECONDS_PER_DAY)
    }

    /// 1σ of [`Self::time_at`], days: √(gᵀ C g), g = ∂T/∂θ.
    pub fn sigma_d(&self, cycle: f64) -> f64 {
        let t = self.since_reference_d(cycle);
        let (_, g) = evaluate_with_gradient(self.kind, &self.estimates.value, cycle, t);
        let c = &self.estimates.covariance;
        let mut v = 0.0;
        for i in 0..g.len() {
            for j in 0..g.len() {
                v += g[i] * c[i][j] * g[j];
            }
        }
        v.max(0.0).sqrt()
    }

    /// Instantaneous period P + 2QE at cycle `cycle` (without the light time's rate), days.
    pub fn period_at_d(&self, cycle: f64) -> f64 {
        self.period_d() + 2.0 * self.quadratic_d() * cycle
    }

    /// The (fractional) cycle seen at BJD_TDB `t` (any scale label; read as TDB): the root
    /// through E = 0 of the polynomial, then Newton steps with the light time. Errors when
    /// a quadratic ephemeris never reaches `t`.
    pub fn cycle_at(&self, t: &Instant) -> Result<f64, EphemerisError> {
        let dt = t.relabel(TimeScale::Tdb).seconds_since(&self.reference.epoch) / SECONDS_PER_DAY;
        let (p, q) = (self.period_d(), self.quadratic_d());
        let shifted = dt - self.value(OcParameter::EpochShiftD);
        let mut e = if q == 0.0 {
            shifted / p
        } else {
            let disc = p * p + 4.0 * q * shifted;
            if disc <= 0.0 {
                return Err(EphemerisError::Unreachable {
                    period_d: p,
                    quadratic_d: q,
                    instant: crate::ephemeris::describe_instant(t),
                });
            }
            2.0 * shifted / (p + disc.sqrt())
        };
        if self.kind.has_light_time() {
            for _ in 0..8 {
                e -= (self.since_reference_d(e) - dt) / self.period_at_d(e);
            }
        }
        Ok(e)
    }
}

impl OcAnalysis {
    /// The fitted ephemeris of model `kind` (live or read back from a summary); an absent
    /// model is refused with the list of those present.
    pub fn ephemeris(&self, kind: ModelKind) -> Result<FittedEphemeris, EphemerisError> {
        let model = self.models.iter().find(|m| m.model == kind).ok_or_else(|| EphemerisError::NoSuchModel {
            wanted: kind,
            have: self.models.iter().map(|m| m.model.to_string()).collect(),
        })?;
        let summary = self
            .reference_ephemeris
            .as_ref()
            .ok_or_else(|| EphemerisError::Invalid("the O–C analysis carries no reference ephemeris".into()))?;
        let epoch: Instant = format!("JD {} TDB", summary.epoch_bjd_tdb)
            .parse()
            .map_err(|e| EphemerisError::Invalid(format!("reference epoch '{}': {e}", summary.epoch_bjd_tdb)))?;
        let reference =
            ReferenceEphemeris { epoch, period_d: summary.period_d, period_sigma_d: summary.period_sigma_d };
        FittedEphemeris::from_summary(reference, model)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn epoch() -> Instant {
        Instant::from_jd_two_part(TimeScale::Tdb, 2_460_000.5, 0.25)
    }

    #[test]
    fn cycle_at_inverts_time_at_for_quadratic_ephemerides() {
        let e = FittedEphemeris::quadratic(epoch(), 0.8, 3e-10, [0.0; 3]).unwrap();
        for cycle in [-5000.0, -1.5, 0.0, 2.5, 12_345.0] {
            let t = e.time_at(cycle);
            assert!((e.cycle_at(&t).unwrap() - cycle).abs() < 1e-9, "{cycle}");
        }
    }

    #[test]
    fn sigma_is_the_quadratic_form_of_the_covariance() {
        let mut e = FittedEphemeris::linear(epoch(), 1.1, 1e-4, 0.0).unwrap();
        e.estimates.covariance = vec![vec![1e-8, 2e-11], vec![2e-11, 1e-13]];
        let cycle = 1000.0;
        let want = (1e-8 + 2.0 * cycle * 2e-11 + cycle * cycle * 1e-13f64).sqrt();
        assert!((e.sigma_d(cycle) - want).abs() < 1e-15);
    }

    /// With a companion, T(E) satisfies its defining equation t = P_ref·E + (O − C)(E, t)
    /// to < 1 ns, and cycle_at inverts it (invented orbit: A = 0.01 d, P₃ = 900 d, e = 0.3).
    #[test]
    fn light_time_times_solve_their_defining_equation() {
        let kind = ModelKind::LinearLightTime;
        let value = vec![1e-4, 2e-7, 0.01, 900.0, 0.4, 0.37, 1.0];
        let n = value.len();
        let estimates =
            Estimates { parameters: kind.parameters(), value: value.clone(), covariance: vec![vec![0.0; n]; n] };
        let reference = ReferenceEphemeris { epoch: epoch(), period_d: 0.7, period_sigma_d: 0.0 };
        let e = FittedEphemeris::new(reference, kind, estimates).unwrap();
        for cycle in [-3000.0, 0.0, 1234.5, 8000.0] {
            let t = e.time_at(cycle).seconds_since(&epoch()) / SECONDS_PER_DAY;
            let rhs = 0.7 * cycle + evaluate(kind, &value, cycle, t);
            assert!((t - rhs).abs() * SECONDS_PER_DAY < 1e-9, "cycle {cycle}: {t} vs {rhs}");
            assert!((e.cycle_at(&e.time_at(cycle)).unwrap() - cycle).abs() < 1e-9);
        }
    }

    #[test]
    fn bad_ephemerides_are_refused_with_the_reason() {
        assert!(FittedEphemeris::linear(epoch(), -1.0, 0.0, 0.0).is_err());
        assert!(FittedEphemeris::linear(epoch().relabel(TimeScale::Utc), 1.0, 0.0, 0.0).is_err());
        assert!(FittedEphemeris::linear(epoch(), 1.0, -1.0, 0.0).is_err());
        let mut e = FittedEphemeris::linear(epoch(), 1.0, 0.0, 0.0).unwrap();
        e.estimates.covariance = vec![vec![1.0, 0.5], vec![0.4, 1.0]];
        let err = FittedEphemeris::new(e.reference, e.kind, e.estimates.clone()).unwrap_err();
        assert!(err.to_string().contains("not symmetric"), "{err}");
    }
}
