//! Upcoming events of an ephemeris and their observing conditions at a site.
//!
//! Ephemeris (common practice; Sterken 2005, ASP Conf. Ser. 335, 3):
//! T(E) = T₀ + P·E + Q·E², Q = ½ dP/dE, with E integer for primary minima and maxima and
//! half-integer for secondary minima. The 1σ of a predicted time follows from the
//! parameter covariance C of (T₀, P, Q) by linear propagation, σ² = gᵀ C g with
//! g = ∂T/∂(T₀, P, Q) = (1, E, E²) (exact here, since T is linear in the parameters).
//!
//! Each event's BJD_TDB is carried back to the clock time at the site (UTC) with the
//! inverse barycentric correction ([`BarycentricCorrector::arrival_at_observer`]), and the
//! sky there is described by [`SkyGeometry`]. An event is observable when the target is at
//! least `min_target_altitude_deg` high, the Sun at most `max_sun_altitude_deg` and the
//! Moon at least `min_moon_separation_deg` away; with an event duration the whole window is checked every ≤ 10 minutes. An event with the target
//! within [`SUN_CAUTION_DEG`] (or a larger chosen limit) of the Sun is never observable and
//! carries a caution message.

use super::sky::{SkyCondition, SkyGeometry, SkySnapshot};
use super::{PredictError, SUN_CAUTION_DEG};
use crate::arrival::BarycentricCorrector;
use crate::constants::SECONDS_PER_DAY;
use crate::observer::{Observer, Site};
use crate::oc::EventKind;
use crate::time::{Instant, TimeScale};

/// The most events one call lists.
pub const MAX_EVENTS: u64 = 200_000;
/// Longest step between checks of an event window, minutes.
const WINDOW_STEP_MIN: f64 = 10.0;

/// The light time of one or two fitted companions (O–C models of `oc`), carried into the
/// predictions with the full covariance of all ephemeris parameters.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CompanionLightTime {
    /// Number of companions (1 or 2).
    pub companions: usize,
    /// Each companion's `[a₁₂ sin i / c (d), P₃ (d), √e cos ω, √e sin ω, M₀ (rad)]` as in
    /// `oc::models`; the mean anomaly runs from the reference epoch of the O–C series.
    pub params: [[f64; 5]; 2],
    /// Days from that reference epoch to [`EventEphemeris::epoch`] (the fitted ΔT₀).
    pub reference_offset_d: f64,
    /// Covariance of (T₀, P, Q, companion 1, companion 2), d² and mixed units, row-major;
    /// rows of absent parameters are zero.
    pub covariance: [[f64; 13]; 13],
}

/// A linear or quadratic ephemeris with the covariance of its parameters, optionally with
/// the light time of fitted companions.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EventEphemeris {
    /// Epoch of the primary event E = 0, BJD_TDB (scale TDB).
    pub epoch: Instant,
    /// Period at E = 0, days.
    pub period_d: f64,
    /// Quadratic coefficient Q = ½ dP/dE, days (0 for a linear ephemeris).
    pub quadratic_d: f64,
    /// Covariance of (T₀ [d], P [d], Q [d]), d², row-major, symmetric.
    pub covariance_d2: [[f64; 3]; 3],
    /// Light time of fitted companions, if the ephemeris has any.
    pub light_time: Option<CompanionLightTime>,
}

impl EventEphemeris {
    /// Builds and checks an ephemeris: the epoch must be on TDB, the period positive and
    /// finite, the covariance finite and symmetric with non-negative variances.
    pub fn new(
        epoch: Instant,
        period_d: f64,
        quadratic_d: f64,
        covariance_d2: [[f64; 3]; 3],
    ) -> Result<EventEphemeris, PredictError> {
        if epoch.scale() != TimeScale::Tdb {
            return Err(PredictError::BadEphemeris(format!(
                "the epoch must be a BJD_TDB (scale TDB), got scale {}",
                epoch.scale()
            )));
        }
        if !(period_d.is_finite() && period_d > 0.0) {
            return Err(PredictError::BadEphemeris(format!(
                "the period must be a positive number of days, got {period_d}"
            )));
        }
        if !quadratic_d.is_finite() {
            return Err(PredictError::BadEphemeris(format!("the quadratic term must be finite, got {quadratic_d}")));
        }
        for i in 0..3 {
            if covariance_d2[i][i] < 0.0 {
                return Err(PredictError::BadEphemeris(format!(
                    "covariance element ({i},{i}) is a variance and cannot be negative: {}",
                    covariance_d2[i][i]
                )));
            }
            for j in 0..3 {
                let v = covariance_d2[i][j];
                if !v.is_finite() {
                    return Err(PredictError::BadEphemeris(format!("covariance element ({i},{j}) is not finite: {v}")));
                }
                let w = covariance_d2[j][i];
                if (v - w).abs() > 1e-9 * (v.abs() + w.abs()) + f64::MIN_POSITIVE {
                    return Err(PredictError::BadEphemeris(format!(
                        "covariance is not symmetric: ({i},{j}) = {v} but ({j},{i}) = {w}"
                    )));
                }
            }
        }
        Ok(EventEphemeris { epoch, period_d, quadratic_d, covariance_d2, light_time: None })
    }

    /// A linear ephemeris with independent 1σ errors of epoch and period (days).
    pub fn linear(
        epoch: Instant,
        period_d: f64,
        epoch_sigma_d: f64,
        period_sigma_d: f64,
    ) -> Result<EventEphemeris, PredictError> {
        for (name, v) in [("epoch", epoch_sigma_d), ("period", period_sigma_d)] {
            if !(v.is_finite() && v >= 0.0) {
                return Err(PredictError::BadEphemeris(format!(
                    "the {name} 1σ must be a non-negative number of days, got {v}"
                )));
            }
        }
        let mut c = [[0.0; 3]; 3];
        c[0][0] = epoch_sigma_d * epoch_sigma_d;
        c[1][1] = period_sigma_d * period_sigma_d;
        EventEphemeris::new(epoch, period_d, 0.0, c)
    }

    /// From a fitted O–C model relative to a reference ephemeris (T_ref, P_ref), as written
    /// by `timing-residuals`: `shifts` = (ΔT₀, ΔP[, Q]) in days and their row-major
    /// covariance (2×2 or 3×3). T₀ = T_ref + ΔT₀, P = P_ref + ΔP.
    pub fn from_fitted_shifts(
        reference_epoch: Instant,
        reference_period_d: f64,
        shifts: &[f64],
        covariance: &[f64],
    ) -> Result<EventEphemeris, PredictError> {
        let n = shifts.len();
        if !(n == 2 || n == 3) {
            return Err(PredictError::BadEphemeris(format!(
                "a linear or quadratic model has 2 or 3 parameters, got {n}"
            )));
        }
        if covariance.len() != n * n {
            return Err(PredictError::BadEphemeris(format!(
                "{n} parameters need a {n}×{n} covariance ({} numbers), got {}",
                n * n,
                covariance.len()
            )));
        }
        let mut c = [[0.0; 3]; 3];
        for i in 0..n {
            for j in 0..n {
                c[i][j] = covariance[i * n + j];
            }
        }
        let q = if n == 3 { shifts[2] } else { 0.0 };
        EventEphemeris::new(
            reference_epoch.add_seconds(shifts[0] * SECONDS_PER_DAY),
            reference_period_d + shifts[1],
            q,
            c,
        )
    }

    /// From a fitted O–C model of any kind (`oc::ModelKind`), as written by
    /// `timing-residuals`: parameters (ΔT₀, ΔP[, Q][, companion 1][, companion 2]) and their
    /// row-major covariance. Light-time models keep the companions' delays in the
    /// predictions and their parameters' covariance in the σ.
    pub fn from_fitted_model(
        reference_epoch: Instant,
        reference_period_d: f64,
        kind: crate::oc::ModelKind,
        params: &[f64],
        covariance: &[f64],
    ) -> Result<EventEphemeris, PredictError> {
        let n = kind.n_params();
        if params.len() != n || covariance.len() != n * n {
            return Err(PredictError::BadEphemeris(format!(
                "the {} model has {n} parameters and a {n}×{n} covariance, got {} and {} numbers",
                kind.name(),
                params.len(),
                covariance.len()
            )));
        }
        let np = kind.n_polynomial();
        // Position of each fitted parameter in the 13-slot layout (T₀, P, Q, 5 + 5).
        let slot = |j: usize| if j < np { if j < 2 { j } else { 2 } } else { 3 + (j - np) };
        let poly_shifts: Vec<f64> = params[..np].to_vec();
        let poly_cov: Vec<f64> =
            (0..np).flat_map(|a| (0..np).map(move |b| (a, b))).map(|(a, b)| covariance[a * n + b]).collect();
        let mut e = EventEphemeris::from_fitted_shifts(reference_epoch, reference_period_d, &poly_shifts, &poly_cov)?;
        if kind.companions() == 0 {
            return Ok(e);
        }
        let mut full = [[0.0; 13]; 13];
        for a in 0..n {
            for b in 0..n {
                let v = covariance[a * n + b];
                if !v.is_finite() {
                    return Err(PredictError::BadEphemeris(format!("covariance element ({a},{b}) is not finite: {v}")));
                }
                full[slot(a)][slot(b)] = v;
            }
        }
        let mut companion = [[0.0; 5]; 2];
        for c in 0..kind.companions() {
            companion[c].copy_from_slice(&params[np + 5 * c..np + 5 * c + 5]);
            if !(companion[c][1].is_finite() && companion[c][1] > 0.0) {
                return Err(PredictError::BadEphemeris(format!(
                    "companion {} has period {} d; it must be positive",
                    c + 1,
                    companion[c][1]
                )));
            }
        }
        e.light_time = Some(CompanionLightTime {
            companions: kind.companions(),
            params: companion,
            reference_offset_d: params[0],
            covariance: full,
        });
        Ok(e)
    }

    /// Days since the O–C reference epoch at cycle `cycle` (argument of the light time).
    fn since_reference_d(&self, lt: &CompanionLightTime, cycle: f64) -> f64 {
        lt.reference_offset_d + self.period_d * cycle + self.quadratic_d * cycle * cycle
    }

    /// T(E) − T₀, days (with the companions' light time when present).
    pub fn offset_d(&self, cycle: f64) -> f64 {
        let mut v = self.period_d * cycle + self.quadratic_d * cycle * cycle;
        if let Some(lt) = &self.light_time {
            let t = self.since_reference_d(lt, cycle);
            for c in 0..lt.companions {
                v += crate::oc::models::light_time_d(&lt.params[c], t);
            }
        }
        v
    }

    /// Predicted BJD_TDB of cycle `cycle`.
    pub fn time_at(&self, cycle: f64) -> Instant {
        self.epoch.add_seconds(self.offset_d(cycle) * SECONDS_PER_DAY)
    }

    /// Instantaneous period P + 2QE at cycle `cycle`, days.
    pub fn period_at_d(&self, cycle: f64) -> f64 {
        self.period_d + 2.0 * self.quadratic_d * cycle
    }

    /// 1σ of T(E), days: √(gᵀ C g), g = (1, E, E²[, ∂τ/∂companion parameters]).
    pub fn sigma_d(&self, cycle: f64) -> f64 {
        if let Some(lt) = &self.light_time {
            let mut g = [0.0; 13];
            g[0] = 1.0;
            g[1] = cycle;
            g[2] = cycle * cycle;
            let t = self.since_reference_d(lt, cycle);
            for c in 0..lt.companions {
                let (_, grad) = crate::oc::models::light_time_with_gradient_d(&lt.params[c], t);
                g[3 + 5 * c..8 + 5 * c].copy_from_slice(&grad);
            }
            let mut v = 0.0;
            for i in 0..13 {
                for j in 0..13 {
                    v += g[i] * lt.covariance[i][j] * g[j];
                }
            }
            return v.max(0.0).sqrt();
        }
        let g = [1.0, cycle, cycle * cycle];
        let mut v = 0.0;
        for i in 0..3 {
            for j in 0..3 {
                v += g[i] * self.covariance_d2[i][j] * g[j];
            }
        }
        v.max(0.0).sqrt()
    }

    /// The (fractional) cycle at BJD_TDB `t`: the root of P·E + Q·E² = t − T₀ on the branch
    /// through E = 0. Errors when the quadratic ephemeris never reaches `t` there.
    pub fn cycle_at(&self, t: &Instant) -> Result<f64, PredictError> {
        let polynomial = self.polynomial_cycle_at(t)?;
        if self.light_time.is_none() {
            return Ok(polynomial);
        }
        // With companions: Newton steps on T(E) − T₀ = t − T₀ from the polynomial root (the
        // light time changes far more slowly than one cycle).
        let dt = t.relabel(TimeScale::Tdb).seconds_since(&self.epoch) / SECONDS_PER_DAY;
        let mut e = polynomial;
        for _ in 0..8 {
            e -= (self.offset_d(e) - dt) / self.period_at_d(e);
        }
        Ok(e)
    }

    fn polynomial_cycle_at(&self, t: &Instant) -> Result<f64, PredictError> {
        let dt = t.relabel(TimeScale::Tdb).seconds_since(&self.epoch) / SECONDS_PER_DAY;
        if self.quadratic_d == 0.0 {
            return Ok(dt / self.period_d);
        }
        let disc = self.period_d * self.period_d + 4.0 * self.quadratic_d * dt;
        if disc <= 0.0 {
            return Err(PredictError::BadEphemeris(format!(
                "the quadratic ephemeris (P = {} d, Q = {} d) never reaches {}: its period would have fallen to zero",
                self.period_d,
                self.quadratic_d,
                crate::ephemeris::describe_instant(t)
            )));
        }
        // Stable form of the root through E = 0.
        Ok(2.0 * dt / (self.period_d + disc.sqrt()))
    }
}

/// Limits that decide whether an event can be observed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PredictionOptions {
    /// Lowest useful target altitude, degrees (default 30°, airmass 2; common practice).
    pub min_target_altitude_deg: f64,
    /// Highest acceptable Sun altitude, degrees (default −12°, end of nautical twilight).
    pub max_sun_altitude_deg: f64,
    /// Full duration of the event, days; when given the whole window centred on the event
    /// must be observable for `window_observable` to be true.
    pub event_duration_d: Option<f64>,
    /// Angular distance from the Sun inside which an event carries the caution, degrees;
    /// at least [`SUN_CAUTION_DEG`].
    pub sun_caution_deg: f64,
    /// Smallest acceptable angular distance from the Moon, degrees (default 0: no limit).
    /// The Moon is computed to ~0.3°.
    pub min_moon_separation_deg: f64,
}

impl Default for PredictionOptions {
    fn default() -> Self {
        PredictionOptions {
            min_target_altitude_deg: 30.0,
            max_sun_altitude_deg: -12.0,
            event_duration_d: None,
            sun_caution_deg: SUN_CAUTION_DEG,
            min_moon_separation_deg: 0.0,
        }
    }
}

impl PredictionOptions {
    /// Checks the limits; errors name the option and the accepted range.
    pub fn validate(&self) -> Result<(), PredictError> {
        if !(-90.0..=90.0).contains(&self.min_target_altitude_deg) {
            return Err(PredictError::BadOption(format!(
                "the minimum target altitude must lie in -90..90°, got {}",
                self.min_target_altitude_deg
            )));
        }
        if !(-90.0..=90.0).contains(&self.max_sun_altitude_deg) {
            return Err(PredictError::BadOption(format!(
                "the maximum Sun altitude must lie in -90..90°, got {}",
                self.max_sun_altitude_deg
            )));
        }
        if let Some(d) = self.event_duration_d
            && !(d.is_finite() && d > 0.0 && d <= 10.0)
        {
            return Err(PredictError::BadOption(format!(
                "the event duration must be a positive number of days up to 10, got {d}"
            )));
        }
        if !(0.0..=180.0).contains(&self.min_moon_separation_deg) {
            return Err(PredictError::BadOption(format!(
                "the minimum Moon separation must lie in 0..180°, got {}",
                self.min_moon_separation_deg
            )));
        }
        if !(self.sun_caution_deg >= SUN_CAUTION_DEG && self.sun_caution_deg <= 180.0) {
            return Err(PredictError::BadOption(format!(
                "the Sun caution distance cannot be below {SUN_CAUTION_DEG}° (or above 180°), got {}",
                self.sun_caution_deg
            )));
        }
        Ok(())
    }
}

/// One predicted event.
#[derive(Debug, Clone, PartialEq)]
pub struct PredictedEvent {
    /// Kind of event.
    pub kind: EventKind,
    /// Cycle number (half-integer for secondary minima).
    pub cycle: f64,
    /// Predicted time at the barycentre, BJD_TDB.
    pub bjd_tdb: Instant,
    /// 1σ of the predicted time from the ephemeris covariance, days.
    pub sigma_d: f64,
    /// When the event is seen at the site, UTC.
    pub utc: Instant,
    /// The sky at the site at that moment.
    pub sky: SkySnapshot,
    /// Twilight class of the Sun's altitude.
    pub condition: SkyCondition,
    /// Target high enough, Sun low enough, and not near the Sun.
    pub observable: bool,
    /// With an event duration: the whole window is observable.
    pub window_observable: Option<bool>,
    /// Set when the target is within the caution distance of the Sun.
    pub sun_caution: Option<String>,
}

/// The caution text for a target `separation_deg` from the Sun.
pub fn sun_caution_message(separation_deg: f64) -> String {
    format!(
        "caution: the target is {separation_deg:.1}° from the Sun; this event cannot be observed safely — \
         do not point any telescope, binoculars or camera near the Sun"
    )
}

/// Lists the events of `kinds` whose BJD_TDB lies in `[start, end]` (both on any scale;
/// compared as TDB), seen from `site`: clock time, uncertainty and observing conditions,
/// in time order. `corrector` carries the source, ephemeris and leap seconds used for the
/// inverse barycentric correction; `sky` computes the conditions.
#[allow(clippy::too_many_arguments)]
pub fn predict_events(
    ephemeris: &EventEphemeris,
    kinds: &[EventKind],
    start: &Instant,
    end: &Instant,
    site: &Site,
    corrector: &BarycentricCorrector,
    sky: &SkyGeometry,
    options: &PredictionOptions,
) -> Result<Vec<PredictedEvent>, PredictError> {
    options.validate()?;
    let conv = corrector.converter();
    let start_tdb = conv.convert(start, TimeScale::Tdb)?;
    let end_tdb = conv.convert(end, TimeScale::Tdb)?;
    if end_tdb.seconds_since(&start_tdb) <= 0.0 {
        return Err(PredictError::EmptyRange {
            start: crate::ephemeris::describe_instant(start),
            end: crate::ephemeris::describe_instant(end),
        });
    }
    let e_start = ephemeris.cycle_at(&start_tdb)?;
    let e_end = ephemeris.cycle_at(&end_tdb)?;
    for e in [e_start, e_end] {
        if ephemeris.period_at_d(e) <= 0.0 {
            return Err(PredictError::BadEphemeris(format!(
                "the quadratic ephemeris gives a non-positive period at cycle {e:.1}"
            )));
        }
    }
    let mut cycles: Vec<(f64, EventKind)> = Vec::new();
    let mut kinds_seen: Vec<EventKind> = Vec::new();
    for &kind in kinds {
        if kinds_seen.contains(&kind) {
            continue;
        }
        kinds_seen.push(kind);
        let off = kind.cycle_offset();
        let first = (e_start - off).ceil();
        let last = (e_end - off).floor();
        if last < first {
            continue;
        }
        let count = (last - first + 1.0) as u64;
        if count + cycles.len() as u64 > MAX_EVENTS {
            return Err(PredictError::TooManyEvents { count: count + cycles.len() as u64, limit: MAX_EVENTS });
        }
        let mut n = first;
        while n <= last {
            cycles.push((n + off, kind));
            n += 1.0;
        }
    }
    cycles.sort_by(|a, b| a.0.total_cmp(&b.0).then((a.1 as u8).cmp(&(b.1 as u8))));
    let observer = Observer::Site(site.clone());
    let source = corrector.source();
    let mut out = Vec::with_capacity(cycles.len());
    for (cycle, kind) in cycles {
        let bjd = ephemeris.time_at(cycle);
        let utc = corrector.arrival_at_observer(&bjd, &observer, TimeScale::Utc)?;
        let snap = sky.snapshot(site, &utc, source)?;
        let near_sun = snap.sun_separation_deg < options.sun_caution_deg;
        let ok = |s: &SkySnapshot| {
            s.target.altitude_deg >= options.min_target_altitude_deg
                && s.sun.altitude_deg <= options.max_sun_altitude_deg
                && s.sun_separation_deg >= options.sun_caution_deg
                && s.moon_separation_deg >= options.min_moon_separation_deg
        };
        let observable = ok(&snap);
        let mut min_sun_sep = snap.sun_separation_deg;
        let window_observable = match options.event_duration_d {
            None => None,
            Some(d) => {
                let steps = ((d * 1440.0 / WINDOW_STEP_MIN).ceil() as usize).max(2);
                let mut all = true;
                for k in 0..=steps {
                    let offset_s = (k as f64 / steps as f64 - 0.5) * d * SECONDS_PER_DAY;
                    let s = sky.snapshot(site, &utc.add_seconds(offset_s), source)?;
                    min_sun_sep = min_sun_sep.min(s.sun_separation_deg);
                    all &= ok(&s);
                }
                Some(all)
            }
        };
        let caution = (near_sun || min_sun_sep < options.sun_caution_deg).then(|| sun_caution_message(min_sun_sep));
        out.push(PredictedEvent {
            kind,
            cycle,
            bjd_tdb: bjd,
            sigma_d: ephemeris.sigma_d(cycle),
            utc,
            sky: snap,
            condition: SkyCondition::from_sun_altitude_deg(snap.sun.altitude_deg),
            observable,
            window_observable,
            sun_caution: caution,
        });
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn epoch() -> Instant {
        Instant::from_jd_two_part(TimeScale::Tdb, 2_460_000.5, 0.25)
    }

    #[test]
    fn cycle_at_inverts_time_at_for_quadratic_ephemerides() {
        let e = EventEphemeris::new(epoch(), 0.8, 3e-10, [[0.0; 3]; 3]).unwrap();
        for cycle in [-5000.0, -1.5, 0.0, 2.5, 12_345.0] {
            let t = e.time_at(cycle);
            assert!((e.cycle_at(&t).unwrap() - cycle).abs() < 1e-9, "{cycle}");
        }
    }

    #[test]
    fn sigma_is_the_quadratic_form() {
        let c = [[1e-8, 2e-11, 0.0], [2e-11, 1e-13, 0.0], [0.0, 0.0, 0.0]];
        let e = EventEphemeris::new(epoch(), 1.1, 0.0, c).unwrap();
        let cycle = 1000.0;
        let want = (1e-8 + 2.0 * cycle * 2e-11 + cycle * cycle * 1e-13f64).sqrt();
        assert!((e.sigma_d(cycle) - want).abs() < 1e-15);
    }

    #[test]
    fn rejects_bad_ephemerides_and_options() {
        assert!(EventEphemeris::linear(epoch(), -1.0, 0.0, 0.0).is_err());
        assert!(EventEphemeris::linear(epoch().relabel(TimeScale::Utc), 1.0, 0.0, 0.0).is_err());
        assert!(EventEphemeris::new(epoch(), 1.0, 0.0, [[1.0, 0.5, 0.0], [0.4, 1.0, 0.0], [0.0, 0.0, 0.0]]).is_err());
        assert!(EventEphemeris::from_fitted_shifts(epoch(), 1.0, &[0.0, 0.0], &[0.0; 3]).is_err());
        let o = PredictionOptions { sun_caution_deg: 5.0, ..Default::default() };
        assert!(o.validate().is_err());
        let o = PredictionOptions { event_duration_d: Some(-0.1), ..Default::default() };
        assert!(o.validate().is_err());
    }
}
