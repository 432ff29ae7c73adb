//! Upcoming events of an ephemeris and their observing conditions at a site.
//!
//! The events come from a fitted O–C model itself ([`FittedEphemeris`]: a linear or
//! quadratic ephemeris, common practice, Sterken 2005, ASP Conf. Ser. 335, 3, optionally
//! with the light time of one or two companions), with E integer for primary minima and
//! maxima and half-integer for secondary minima. The 1σ of a predicted time is the fit's
//! covariance propagated linearly ([`FittedEphemeris::sigma_d`]).
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
use crate::oc::{EventKind, FittedEphemeris};
use crate::time::{Instant, TimeScale};

/// The most events one call lists.
pub const MAX_EVENTS: u64 = 200_000;
/// Longest step between checks of an event window, minutes.
const WINDOW_STEP_MIN: f64 = 10.0;

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
    ephemeris: &FittedEphemeris,
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

    #[test]
    fn rejects_bad_options() {
        let o = PredictionOptions { sun_caution_deg: 5.0, ..Default::default() };
        assert!(o.validate().is_err());
        let o = PredictionOptions { event_duration_d: Some(-0.1), ..Default::default() };
        assert!(o.validate().is_err());
    }
}
