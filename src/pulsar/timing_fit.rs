//! Phase-connected weighted least-squares fit of a [`TimingModel`] to arrival times.
//!
//! Pulse numbers Nᵢ = round(φ_start(tᵢ)) are fixed from the starting model; the fit then
//! minimises χ² = Σ [(φ(tᵢ) − Nᵢ)/(ν σᵢ)]² by iterated linearisation (Gauss–Newton) with the
//! analytic derivatives of [`TimingModel::phase_derivatives`], columns scaled to unit norm
//! before the SVD solve of [`crate::fit::weighted_linear_lsq`]. Source: common practice
//! (e.g. Lorimer & Kramer 2005, §8.2 — from memory). Phase residuals are resolved to
//! ~1e-16·|φ| cycles (20 ns for 300 Hz over ±3 yr).

use polars::prelude::{Column, DataFrame, PolarsError, PolarsResult};

use super::PulsarError;
use super::model::{ArrivalTime, FitParameter, POSITION_PARAMETERS, TimingModel, TimingParameter};
use crate::arrival::Source;
use crate::constants::SECONDS_PER_DAY;
use crate::fit::{Estimate, Parameter, UnknownParameter, weighted_linear_lsq};

/// Result of a timing fit.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct TimingFit {
    /// The fitted model (the keys of the model file).
    pub model: TimingModel,
    /// The fitted parameters (phase offset first), written by name.
    pub parameters: Vec<FitParameter>,
    /// Fitted values, in the units of their names.
    pub values: Vec<f64>,
    /// 1-σ uncertainties (from the covariance, not rescaled by χ²/dof).
    pub uncertainties: Vec<f64>,
    /// Covariance matrix, row-major (p × p for p parameters), in the products of the
    /// parameters' units.
    pub covariance: Vec<f64>,
    /// χ² of the time residuals.
    pub chi2: f64,
    /// Degrees of freedom.
    pub dof: usize,
    /// Phase residuals, cycles (one per arrival time, input order).
    pub residual_cycles: Vec<f64>,
    /// Time residuals, s (phase residual / ν at the arrival).
    pub residual_s: Vec<f64>,
    /// Pulse numbers assigned.
    pub pulse_numbers: Vec<f64>,
    /// Iterations used.
    pub iterations: usize,
}

impl TimingFit {
    /// Every fitted parameter as an [`Estimate`] (value and 1σ), in fit order.
    pub fn estimates(&self) -> Vec<Estimate<FitParameter>> {
        self.parameters
            .iter()
            .enumerate()
            .map(|(i, p)| Estimate { parameter: p.clone(), value: self.values[i], sigma: self.uncertainties[i] })
            .collect()
    }

    /// The estimate of `p`, if it was fitted.
    pub fn estimate(&self, p: impl Into<FitParameter>) -> Option<Estimate<FitParameter>> {
        let p = p.into();
        let i = self.parameters.iter().position(|q| *q == p)?;
        Some(Estimate { parameter: p, value: self.values[i], sigma: self.uncertainties[i] })
    }

    /// Covariance of two fitted parameters.
    pub fn covariance_of(&self, a: impl Into<FitParameter>, b: impl Into<FitParameter>) -> Option<f64> {
        let (a, b) = (a.into(), b.into());
        let n = self.parameters.len();
        let i = self.parameters.iter().position(|q| *q == a)?;
        let j = self.parameters.iter().position(|q| *q == b)?;
        self.covariance.get(i * n + j).copied()
    }

    /// The estimate of the parameter called `name`; an unknown name, or one this fit did not
    /// adjust, is refused with the names it did fit.
    pub fn by_name(&self, name: &str) -> Result<Estimate<FitParameter>, UnknownParameter> {
        let refuse =
            || UnknownParameter { name: name.to_string(), known: self.parameters.iter().map(fitted_name).collect() };
        let p: FitParameter = name.parse().map_err(|_| refuse())?;
        self.estimate(p).ok_or_else(refuse)
    }
}

/// A static name for a fitted parameter (instrument delays share the generic form).
fn fitted_name(p: &FitParameter) -> &'static str {
    match p {
        FitParameter::Model(q) => q.name(),
        FitParameter::InstrumentDelay(_) => "instrument_delay_s:NAME",
    }
}

/// Checks arrival times: finite, errors > 0, no duplicates (same time and instrument).
pub fn check_arrival_times(toas: &[ArrivalTime]) -> Result<(), PulsarError> {
    for (i, a) in toas.iter().enumerate() {
        if !a.t_s.is_finite() {
            return Err(PulsarError::Input(format!("arrival time {} is not finite", i + 1)));
        }
        if !(a.error_s > 0.0 && a.error_s.is_finite()) {
            return Err(PulsarError::Input(format!(
                "arrival time {} has uncertainty {} s; every uncertainty must be > 0",
                i + 1,
                a.error_s
            )));
        }
    }
    let mut order: Vec<usize> = (0..toas.len()).collect();
    order.sort_by(|&a, &b| toas[a].t_s.total_cmp(&toas[b].t_s));
    for w in order.windows(2) {
        let (a, b) = (&toas[w[0]], &toas[w[1]]);
        if (a.t_s - b.t_s).abs() < 1e-9 && a.instrument == b.instrument && a.freq_mhz == b.freq_mhz {
            return Err(PulsarError::Input(format!(
                "arrival times {} and {} are duplicates (same time, instrument and frequency); remove one",
                w[0].min(w[1]) + 1,
                w[0].max(w[1]) + 1
            )));
        }
    }
    Ok(())
}

/// Default half-width, days, of the interval around a starting model's epoch where
/// `fit-timing` accepts arrival times: 20 Julian years (7305 d). Beyond it the `f64` seconds
/// after the epoch resolve worse than 0.12 µs (2⁻⁵² × 6.3e8 s), and a Taylor spin model
/// is rarely phase-connected over such spans. Common practice.
pub const DEFAULT_FIT_VALIDITY_DAYS: f64 = 7305.0;

/// Refuses arrival times more than `valid_for_days` from the model epoch (`epoch_mjd`,
/// MJD TDB, for the message), naming the first one (1-based: its table row), its distance
/// and the accepted range as MJD (TDB).
pub fn check_model_validity(toas: &[ArrivalTime], epoch_mjd: f64, valid_for_days: f64) -> Result<(), PulsarError> {
    if !(valid_for_days > 0.0 && valid_for_days.is_finite()) {
        return Err(PulsarError::Input(format!("model validity {valid_for_days} d: must be > 0 days")));
    }
    let limit_s = valid_for_days * SECONDS_PER_DAY;
    if let Some((i, a)) = toas.iter().enumerate().find(|(_, a)| !(a.t_s.abs() <= limit_s)) {
        return Err(PulsarError::Input(format!(
            "arrival time {} (row {}) lies {:.1} days from the model epoch (MJD {:.1} TDB), outside the model's validity of ±{:.1} days (MJD {:.1} … {:.1} TDB); use a starting model with an epoch nearer the data, or widen the validity (--model-validity-days)",
            i + 1,
            i + 1,
            a.t_s / SECONDS_PER_DAY,
            epoch_mjd,
            valid_for_days,
            epoch_mjd - valid_for_days,
            epoch_mjd + valid_for_days
        )));
    }
    Ok(())
}

fn residuals(model: &TimingModel, toas: &[ArrivalTime], pulses: &[f64]) -> Vec<f64> {
    toas.iter().zip(pulses).map(|(a, n)| model.phase_cycles(a) - n).collect()
}

/// Fits the parameters named in `model.fit` (plus the phase offset). Errors: bad arrival
/// times, an under-determined fit, divergence, or lost phase connection (a fitted residual
/// beyond ±0.3 cycle, or a starting residual beyond ±0.3 cycle: the pulse count between
/// arrival times is then ambiguous) — the message names the arrival times concerned.
pub fn fit_timing_model(
    start: &TimingModel,
    toas: &[ArrivalTime],
    max_iterations: usize,
) -> Result<TimingFit, PulsarError> {
    check_arrival_times(toas)?;
    start.validate()?;
    start.check_spin_over(toas).map_err(|e| PulsarError::Model(e.to_string()))?;
    if start.refines_position()
        && let Some(i) = toas.iter().position(|a| a.observer.is_none())
    {
        return Err(PulsarError::Input(format!(
            "the model refines the source position ({}), which needs the observer's barycentric position at each arrival time, but arrival time {} has none: it was given already at the barycentre (e.g. clock bjd_tdb). Give the arrival times as recorded at the observer (e.g. clock mjd_utc with a site, or at the geocentre) so they are barycentred here, or remove the position parameters from the model",
            POSITION_PARAMETERS.map(|p| p.to_string()).join(", "),
            i + 1
        )));
    }
    let mut names = vec![FitParameter::Model(TimingParameter::PhaseOffsetCycles)];
    for n in &start.fit {
        if !names.contains(n) {
            names.push(n.clone());
        }
    }
    let p = names.len();
    if toas.len() <= p {
        return Err(PulsarError::Input(format!(
            "{} arrival times cannot determine {p} parameters; need more than {p}",
            toas.len()
        )));
    }
    let mut model = start.clone();
    let pulses: Vec<f64> = toas.iter().map(|a| model.phase_cycles(a).round()).collect();
    let mut iterations = 0;
    let mut last = None;
    for it in 0..max_iterations.max(1) {
        iterations = it + 1;
        let r = residuals(&model, toas, &pulses);
        let mut design = vec![0.0; toas.len() * p];
        let mut weight = vec![0.0; toas.len()];
        for (i, a) in toas.iter().enumerate() {
            let d = model.phase_derivatives(a, &names);
            design[i * p..(i + 1) * p].copy_from_slice(&d);
            let sigma_cycles = model.spin().freq_at_hz(a.t_s) * a.error_s;
            weight[i] = 1.0 / (sigma_cycles * sigma_cycles);
        }
        let mut scale = vec![0.0; p];
        for j in 0..p {
            scale[j] = (0..toas.len()).map(|i| design[i * p + j].powi(2)).sum::<f64>().sqrt();
            if scale[j] == 0.0 {
                return Err(PulsarError::Fit(format!(
                    "parameter {} does not change any predicted phase (e.g. an instrument with no arrival times); remove it from `fit`",
                    names[j]
                )));
            }
        }
        for i in 0..toas.len() {
            for j in 0..p {
                design[i * p + j] /= scale[j];
            }
        }
        let y: Vec<f64> = r.iter().map(|v| -v).collect();
        let sol =
            weighted_linear_lsq(&design, p, &y, &weight).map_err(|e| PulsarError::Fit(format!("timing fit: {e}")))?;
        let mut converged = true;
        for j in 0..p {
            let step = sol.params[j] / scale[j];
            let sigma = sol.sigma(j) / scale[j];
            if !step.is_finite() {
                return Err(PulsarError::Fit(format!("timing fit diverged at iteration {iterations}")));
            }
            if step.abs() > 1e-4 * sigma {
                converged = false;
            }
            let v = model.get(&names[j]).unwrap_or(0.0);
            model.set(&names[j], v + step)?;
        }
        model.validate().map_err(|e| {
            PulsarError::Fit(format!("the fit left the physical range ({e}); start from a better model"))
        })?;
        last = Some((sol, scale));
        if converged {
            break;
        }
    }
    let Some((sol, scale)) = last else { return Err(PulsarError::Fit("no iteration ran".into())) };
    let r = residuals(&model, toas, &pulses);
    let bad: Vec<usize> = r.iter().enumerate().filter(|(_, v)| v.abs() > 0.3).map(|(i, _)| i + 1).collect();
    if !bad.is_empty() {
        return Err(PulsarError::Fit(format!(
            "phase connection lost: arrival times {} sit {:.2} cycles or more from their assigned pulse; the starting model predicts the pulse count between arrival times wrongly. Fit a shorter span first, then extend it",
            bad.iter().take(10).map(|i| i.to_string()).collect::<Vec<_>>().join(", "),
            0.3
        )));
    }
    let covariance: Vec<f64> = (0..p * p).map(|k| sol.covariance[k] / (scale[k / p] * scale[k % p])).collect();
    let uncertainties: Vec<f64> = (0..p).map(|j| covariance[j * p + j].max(0.0).sqrt()).collect();
    let residual_s: Vec<f64> = r.iter().zip(toas).map(|(c, a)| c / model.spin().freq_at_hz(a.t_s)).collect();
    let chi2 = residual_s.iter().zip(toas).map(|(s, a)| (s / a.error_s).powi(2)).sum();
    let values = names.iter().map(|n| model.get(n).unwrap_or(f64::NAN)).collect();
    Ok(TimingFit {
        model,
        parameters: names,
        values,
        uncertainties,
        covariance,
        chi2,
        dof: toas.len() - p,
        residual_cycles: r,
        residual_s,
        pulse_numbers: pulses,
        iterations,
    })
}

/// The source position and proper motion implied by a fit that refined them.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct FittedPosition {
    /// Epoch of the position (the model epoch), MJD (TDB).
    pub epoch_mjd_tdb: f64,
    /// Right ascension, degrees (ICRS).
    pub ra_deg: f64,
    /// 1-σ uncertainty of the position east (Δα cos δ), mas (0 when not fitted).
    pub ra_uncertainty_mas: f64,
    /// Declination, degrees (ICRS).
    pub dec_deg: f64,
    /// 1-σ uncertainty of the declination, mas (0 when not fitted).
    pub dec_uncertainty_mas: f64,
    /// Total proper motion east (μ_α cos δ): the barycentring source's plus the fitted, mas/yr.
    pub proper_motion_ra_mas_per_yr: f64,
    /// 1-σ of the proper motion east, mas/yr (0 when not fitted).
    pub proper_motion_ra_uncertainty_mas_per_yr: f64,
    /// Total proper motion north (μ_δ), mas/yr.
    pub proper_motion_dec_mas_per_yr: f64,
    /// 1-σ of the proper motion north, mas/yr (0 when not fitted).
    pub proper_motion_dec_uncertainty_mas_per_yr: f64,
}

/// The corrected position and proper motion of `source` (the one the arrival times were
/// barycentred with) after `fit`, or `None` when the model does not refine the position.
/// The offsets are applied along the east and north unit vectors at the source's direction
/// at the model epoch and the result renormalised (exact for the model's first-order
/// offsets); uncertainties are the fit's 1-σ values.
pub fn fitted_position(fit: &TimingFit, source: &Source) -> Option<FittedPosition> {
    let m = &fit.model;
    if !m.refines_position() {
        return None;
    }
    let sigma = |p: TimingParameter| fit.parameters.iter().position(|q| *q == p).map_or(0.0, |j| fit.uncertainties[j]);
    let n0 = source.direction_at(&m.epoch()).unit;
    let rho = (n0[0] * n0[0] + n0[1] * n0[1]).sqrt();
    let (east, north) = if rho > 1e-15 {
        ([-n0[1] / rho, n0[0] / rho, 0.0], [-n0[2] * n0[0] / rho, -n0[2] * n0[1] / rho, rho])
    } else {
        ([0.0, 1.0, 0.0], [-n0[2].signum(), 0.0, 0.0])
    };
    let mas = std::f64::consts::PI / 648_000_000.0;
    let (te, tn) = (m.position_offset_ra_mas * mas, m.position_offset_dec_mas * mas);
    let v: Vec<f64> = (0..3).map(|k| n0[k] + te * east[k] + tn * north[k]).collect();
    let norm = (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt();
    let ra_deg = v[1].atan2(v[0]).to_degrees().rem_euclid(360.0);
    let dec_deg = (v[2] / norm).asin().to_degrees();
    Some(FittedPosition {
        epoch_mjd_tdb: m.epoch_mjd_day_tdb as f64 + m.epoch_seconds_of_day_tdb / SECONDS_PER_DAY,
        ra_deg,
        ra_uncertainty_mas: sigma(TimingParameter::PositionOffsetRaMas),
        dec_deg,
        dec_uncertainty_mas: sigma(TimingParameter::PositionOffsetDecMas),
        proper_motion_ra_mas_per_yr: source.proper_motion_ra_mas_per_yr + m.proper_motion_ra_mas_per_yr,
        proper_motion_ra_uncertainty_mas_per_yr: sigma(TimingParameter::ProperMotionRaMasPerYr),
        proper_motion_dec_mas_per_yr: source.proper_motion_dec_mas_per_yr + m.proper_motion_dec_mas_per_yr,
        proper_motion_dec_uncertainty_mas_per_yr: sigma(TimingParameter::ProperMotionDecMasPerYr),
    })
}

/// A timing solution: the fit, its residual statistics and the refined position.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct TimingSolution {
    /// Arrival times fitted.
    pub arrival_times: usize,
    /// The fit: model, parameters, uncertainties, covariance, residuals.
    pub fit: TimingFit,
    /// χ² per degree of freedom.
    pub reduced_chi2: f64,
    /// Weighted root-mean-square time residual √(Σ rᵢ²/σᵢ² / Σ 1/σᵢ²), µs.
    pub weighted_rms_residual_us: f64,
    /// Orbital phase from periastron of each arrival time, cycles (empty without an orbit).
    pub orbital_phase_cycles: Vec<f64>,
    /// The corrected position and proper motion, when the model refines them.
    pub position: Option<FittedPosition>,
}

impl TimingSolution {
    /// One row per arrival time of `toas` (the arrival times this solution was fitted to,
    /// in the same order): `seconds_after_epoch_tdb` (s after the model's epoch, TDB),
    /// `residual_us` (observed − model, µs), `residual_cycles` (turns), `error_us` (1σ, µs),
    /// `freq_mhz` (observing frequency, null when not given), `instrument` and
    /// `orbital_phase` (cycles from periastron; null without an orbit). What
    /// `fit-timing --output` writes and the Python binding returns. Errors: `toas` not the
    /// arrival times of this fit (a different count).
    pub fn residuals_table(&self, toas: &[ArrivalTime]) -> PolarsResult<DataFrame> {
        let fit = &self.fit;
        if toas.len() != fit.residual_s.len() || toas.len() != fit.residual_cycles.len() {
            return Err(PolarsError::ShapeMismatch(
                format!("{} arrival times for a fit of {}", toas.len(), fit.residual_s.len()).into(),
            ));
        }
        let orbital: Vec<Option<f64>> = (0..toas.len()).map(|i| self.orbital_phase_cycles.get(i).copied()).collect();
        DataFrame::new_infer_height(vec![
            Column::new("seconds_after_epoch_tdb".into(), toas.iter().map(|t| t.t_s).collect::<Vec<f64>>()),
            Column::new("residual_us".into(), fit.residual_s.iter().map(|r| r * 1e6).collect::<Vec<f64>>()),
            Column::new("residual_cycles".into(), fit.residual_cycles.clone()),
            Column::new("error_us".into(), toas.iter().map(|t| t.error_s * 1e6).collect::<Vec<f64>>()),
            Column::new("freq_mhz".into(), toas.iter().map(|t| t.freq_mhz).collect::<Vec<Option<f64>>>()),
            Column::new("instrument".into(), toas.iter().map(|t| t.instrument.clone()).collect::<Vec<String>>()),
            Column::new("orbital_phase".into(), orbital),
        ])
    }
}

/// Phase-connected fit of `start` to `toas` ([`fit_timing_model`]) with its residual
/// statistics and, when the model refines the position, the corrected position of `source`
/// (the source the arrival times were barycentred towards; [`fitted_position`]).
pub fn fit_timing(
    start: &TimingModel,
    toas: &[ArrivalTime],
    max_iterations: usize,
    source: &Source,
) -> Result<TimingSolution, PulsarError> {
    let fit = fit_timing_model(start, toas, max_iterations)?;
    let weight_sum: f64 = toas.iter().map(|a| a.error_s.powi(-2)).sum();
    let weighted: f64 = fit.residual_s.iter().zip(toas).map(|(r, a)| (r / a.error_s).powi(2)).sum();
    let orbital_phase_cycles = match &fit.model.orbit {
        Some(o) => toas.iter().map(|a| o.phase_from_periastron_cycles(a.t_s)).collect(),
        None => vec![],
    };
    Ok(TimingSolution {
        arrival_times: toas.len(),
        reduced_chi2: fit.chi2 / fit.dof.max(1) as f64,
        weighted_rms_residual_us: (weighted / weight_sum).sqrt() * 1e6,
        orbital_phase_cycles,
        position: fitted_position(&fit, source),
        fit,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn isolated() -> TimingModel {
        TimingModel::from_toml("epoch_mjd_day_tdb = 60000\nfreq_hz = 11.3\nfreq_deriv_hz_per_s = -2e-13\nfit = [\"freq_hz\", \"freq_deriv_hz_per_s\"]\n", "t").unwrap()
    }

    #[test]
    fn fitted_position_applies_offsets_on_the_sphere() {
        // Source at (RA 10°, Dec 0°); offsets of θ east and θ north are steps along the
        // tangent plane, so the new direction is n̂₀ + θ ê (+ θ n̂_N), renormalised:
        // RA = 10° + atan θ, Dec = atan θ (gnomonic projection, common practice).
        let mut model = isolated();
        let theta_mas = 3.6e6; // 1°, large so renormalisation matters
        model.position_offset_ra_mas = theta_mas;
        model.proper_motion_dec_mas_per_yr = -4.0;
        let fit = TimingFit {
            model: model.clone(),
            parameters: vec![TimingParameter::PhaseOffsetCycles.into(), TimingParameter::PositionOffsetRaMas.into()],
            values: vec![0.0, theta_mas],
            uncertainties: vec![0.0, 0.25],
            covariance: vec![0.0; 4],
            chi2: 0.0,
            dof: 1,
            residual_cycles: vec![],
            residual_s: vec![],
            pulse_numbers: vec![],
            iterations: 1,
        };
        let source = Source::fixed_degrees("invented", 10.0, 0.0).unwrap();
        assert_eq!(fit.estimate(TimingParameter::PositionOffsetRaMas).unwrap().sigma, 0.25);
        assert_eq!(fit.by_name("position_offset_ra_mas").unwrap().value, theta_mas);
        let refused = fit.by_name("freq_hz").unwrap_err();
        assert_eq!(refused.known, vec!["phase_offset_cycles", "position_offset_ra_mas"]);
        assert!(fit.by_name("spin").is_err());
        assert_eq!(
            fit.covariance_of(TimingParameter::PhaseOffsetCycles, TimingParameter::PositionOffsetRaMas),
            Some(0.0)
        );
        let p = fitted_position(&fit, &source).unwrap();
        let theta = theta_mas * std::f64::consts::PI / 648_000_000.0;
        assert!((p.ra_deg - (10.0 + theta.atan().to_degrees())).abs() < 1e-12, "{}", p.ra_deg);
        assert!(p.dec_deg.abs() < 1e-12 && p.ra_uncertainty_mas == 0.25 && p.dec_uncertainty_mas == 0.0, "{p:?}");
        assert!((p.proper_motion_dec_mas_per_yr + 4.0).abs() < 1e-12);
        // the source's own proper motion is added to the fitted one
        let mut moving = source.clone();
        moving.proper_motion_dec_mas_per_yr = 1.5;
        assert!((fitted_position(&fit, &moving).unwrap().proper_motion_dec_mas_per_yr + 2.5).abs() < 1e-12);
        model.position_offset_ra_mas = 0.0;
        model.position_offset_dec_mas = theta_mas;
        let p = fitted_position(&TimingFit { model, ..fit.clone() }, &source).unwrap();
        assert!(
            (p.ra_deg - 10.0).abs() < 1e-12 && (p.dec_deg - theta.atan().to_degrees()).abs() < 1e-12,
            "{} {}",
            p.ra_deg,
            p.dec_deg
        );
        assert!(fitted_position(&TimingFit { model: isolated(), ..fit }, &source).is_none());
    }

    #[test]
    fn bad_arrival_times_are_named() {
        let m = isolated();
        let mut t: Vec<ArrivalTime> = (0..5)
            .map(|i| ArrivalTime {
                t_s: i as f64 * 1e5,
                error_s: 1e-4,
                freq_mhz: None,
                instrument: "a".into(),
                observer: None,
            })
            .collect();
        t[2].error_s = 0.0;
        assert!(fit_timing_model(&m, &t, 10).unwrap_err().to_string().contains("arrival time 3"));
        t[2].error_s = 1e-4;
        t[4].t_s = t[1].t_s;
        assert!(fit_timing_model(&m, &t, 10).unwrap_err().to_string().contains("duplicates"));
    }
}
