//! The barycentric correction of one arrival time, term by term, and its inverse.
//!
//! t_BJD_TDB = t_obs(TDB) + Rømer + curvature − Shapiro, where t_obs(TDB) is the clock
//! reading carried to TT (leap seconds, TT − TAI) and then to TDB at the observer
//! (Einstein delay: Fairhead & Bretagnon 1990 with the topocentric term). Legacy
//! heliocentric times (HJD) are first carried back to the observer by removing the
//! heliocentric light time, then corrected as above (Eastman, Siverd & Gaudi 2010).

use crate::constants::SECONDS_PER_DAY;
use thiserror::Error;

use super::delays::{
    JUPITER_RADIUS_KM, SATURN_RADIUS_KM, SUN_RADIUS_KM, curvature_delay_s, roemer_delay_s, shapiro_delay_s,
};
use super::slow_terms::SlowParts;
use super::source::Source;
use crate::ephemeris::{
    Body, Ephemeris, EphemerisError, GM_JUPITER_SYSTEM_KM3_PER_S2, GM_SATURN_SYSTEM_KM3_PER_S2, GM_SUN_KM3_PER_S2,
    SPEED_OF_LIGHT_KM_PER_S, SharedEphemeris,
};
use crate::observer::{EarthOrientation, Observer, PositionOrigin};
use crate::time::scales::{tdb_minus_tt_s, topocentric_tdb_minus_tt_s};
use crate::time::{Instant, ScaleConverter, TimeError, TimeScale};

/// Where the given times were referred to.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum ReferencePoint {
    /// Arrival at the observer (site, geocentre or spacecraft), any clock.
    Observer,
    /// Already corrected to the Sun's centre (legacy HJD); repaired to BJD.
    Heliocentric,
    /// Already at the barycentre; only the clock is changed (e.g. BJD_UTC → BJD_TDB).
    Barycentric,
}

impl ReferencePoint {
    /// Name used on the command line and in outputs.
    pub fn name(self) -> &'static str {
        match self {
            ReferencePoint::Observer => "observer",
            ReferencePoint::Heliocentric => "heliocentric",
            ReferencePoint::Barycentric => "barycentric",
        }
    }
}

/// Which delays to include.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct DelayOptions {
    /// Shapiro delay of the Sun (default on).
    pub shapiro_sun: bool,
    /// Shapiro delays of Jupiter and Saturn (default off; ≤ 0.2 µs except near the planets).
    pub shapiro_planets: bool,
}

impl Default for DelayOptions {
    fn default() -> Self {
        DelayOptions { shapiro_sun: true, shapiro_planets: false }
    }
}

/// Every term of one correction, s, so a user can audit each row.
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize)]
pub struct DelayBreakdown {
    /// TT − (input clock) at the arrival instant, s (leap seconds, 32.184 s, …).
    pub clock_to_tt_s: f64,
    /// Einstein delay: TDB − TT at the observer, s.
    pub einstein_s: f64,
    /// Rømer delay r·n̂/c for a source at infinity, s.
    pub roemer_s: f64,
    /// Wavefront-curvature (parallax) term, s (0 without a parallax).
    pub curvature_s: f64,
    /// Shapiro delay of the Sun, s (subtracted).
    pub shapiro_sun_s: f64,
    /// Shapiro delays of Jupiter and Saturn, s (subtracted).
    pub shapiro_planets_s: f64,
    /// Heliocentric light time removed from a legacy HJD, s (0 otherwise).
    pub heliocentric_removed_s: f64,
}

impl DelayBreakdown {
    /// BJD_TDB − observer TDB: Rømer + curvature − Shapiro, s.
    pub fn barycentric_s(&self) -> f64 {
        self.roemer_s + self.curvature_s - self.shapiro_sun_s - self.shapiro_planets_s
    }
}

/// One corrected time.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Corrected {
    /// Arrival time at the solar-system barycentre, TDB.
    pub bjd_tdb: Instant,
    /// Arrival time at the observer, TDB.
    pub observer_tdb: Instant,
    /// The terms.
    pub delays: DelayBreakdown,
    /// True when Earth orientation came from a table (false: UT1 = UTC assumed).
    pub earth_orientation_from_table: bool,
    /// The observer's barycentric position (ICRS axes, km) at `observer_tdb`, the vector
    /// whose projection on the source direction is the Rømer delay; `None` for times given
    /// already at the barycentre (no observer is involved).
    pub observer_barycentric_km: Option<[f64; 3]>,
}

/// The smooth terms of one correction at a TT instant, in the order of
/// [`NodeTerms::EINSTEIN`] … [`NodeTerms::POSITION`]: Einstein delay, Rømer delay, curvature,
/// Shapiro (Sun), Shapiro (planets), the Sun's projection r_Sun·n̂/c (all s), and the
/// observer's barycentric position x, y, z (km, ICRS axes).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct NodeTerms {
    /// The values, s and km (see the type's doc for the order).
    pub values: [f64; NodeTerms::COUNT],
    /// Whether Earth orientation came from a table at this instant.
    pub earth_orientation_from_table: bool,
}

impl NodeTerms {
    /// Number of tabulated values.
    pub const COUNT: usize = 9;
    /// Index of the Einstein delay TDB − TT at the observer, s.
    pub const EINSTEIN: usize = 0;
    /// Index of the Rømer delay, s.
    pub const ROEMER: usize = 1;
    /// Index of the wavefront-curvature term, s.
    pub const CURVATURE: usize = 2;
    /// Index of the Sun's Shapiro delay, s.
    pub const SHAPIRO_SUN: usize = 3;
    /// Index of the planets' Shapiro delay, s.
    pub const SHAPIRO_PLANETS: usize = 4;
    /// Index of r_Sun·n̂/c, s (the Rømer delay minus this is the heliocentric light time).
    pub const SUN_PROJECTION: usize = 5;
    /// Index of the first of the three position components, km.
    pub const POSITION: usize = 6;
}

/// Why a time could not be corrected.
#[derive(Debug, Error)]
pub enum ArrivalError {
    /// A time could not be converted between scales.
    #[error(transparent)]
    Time(#[from] TimeError),
    /// The ephemeris could not give a body's state at the instant needed.
    #[error(transparent)]
    Ephemeris(#[from] EphemerisError),
    /// A ground site's time is before 1960, where UTC (and so the Earth's rotation) is not
    /// defined; holds the instant.
    #[error(
        "a ground site needs UTC for the Earth's rotation, but {0} is before 1960; give the site's times as geocentric or already barycentric"
    )]
    SiteBeforeUtc(String),
    /// The arrival time at the observer for a barycentric time did not converge in 10
    /// iterations; holds the barycentric instant.
    #[error("the inverse correction did not converge for {0}")]
    NoConvergence(String),
    /// An event time (seconds from the event list's zero) beyond the span an event list may
    /// cover (± `interpolated::MAX_EVENT_OFFSET_S`).
    #[error(
        "event time {0} s from the reference is outside the ±{max:e} s (about ±3170 years) an event list may span",
        max = super::interpolated::MAX_EVENT_OFFSET_S
    )]
    EventOutOfRange(f64),
}

/// Corrects arrival times of one source to the barycentre.
#[derive(Debug, Clone)]
pub struct BarycentricCorrector {
    ephemeris: SharedEphemeris,
    converter: ScaleConverter,
    orientation: EarthOrientation,
    source: Source,
    options: DelayOptions,
}

impl BarycentricCorrector {
    /// A corrector for `source` using `ephemeris`, the scale converter (leap seconds) and
    /// the Earth-orientation source.
    pub fn new(
        ephemeris: impl Into<SharedEphemeris>,
        converter: ScaleConverter,
        orientation: EarthOrientation,
        source: Source,
        options: DelayOptions,
    ) -> BarycentricCorrector {
        BarycentricCorrector { ephemeris: ephemeris.into(), converter, orientation, source, options }
    }

    /// The source being corrected for.
    pub fn source(&self) -> &Source {
        &self.source
    }

    /// The ephemeris in use.
    pub fn ephemeris(&self) -> &dyn Ephemeris {
        &*self.ephemeris
    }

    /// The scale converter in use.
    pub fn converter(&self) -> &ScaleConverter {
        &self.converter
    }

    /// Corrects `time` (any scale) recorded by `observer` and referred to `reference`.
    /// Accuracy: see `docs/arrival.md` (ns-level with a JPL kernel; the embedded pack adds
    /// its own ≤ ~100 ns).
    pub fn correct(
        &self,
        time: &Instant,
        observer: &Observer,
        reference: ReferencePoint,
    ) -> Result<Corrected, ArrivalError> {
        self.correct_with_slow_parts(time, observer, reference, SlowParts::Exact)
    }

    /// As [`BarycentricCorrector::correct`], taking the slowly varying parts (precession–
    /// nutation X, Y, s and the geocentric TDB − TT) from `slow`: with [`SlowParts::Exact`]
    /// this is `correct`; with nodes it is the two-speed exact path of
    /// [`super::slow_terms`] (≤ 3e-12 s from `correct`, bound derived there). Readings on
    /// TDB or TCB at an observer always take the series themselves.
    pub fn correct_with_slow_parts(
        &self,
        time: &Instant,
        observer: &Observer,
        reference: ReferencePoint,
        slow: SlowParts<'_>,
    ) -> Result<Corrected, ArrivalError> {
        match reference {
            ReferencePoint::Barycentric => {
                // Only the clock changes; evaluated as at the geocentre.
                let (tt, tdb) = match slow {
                    SlowParts::Exact => {
                        (self.converter.convert(time, TimeScale::Tt)?, self.converter.convert(time, TimeScale::Tdb)?)
                    }
                    SlowParts::Interpolated(_) => self.geocentric_tt_and_tdb(time, slow)?,
                };
                let delays = DelayBreakdown {
                    clock_to_tt_s: tt.seconds_since(time),
                    einstein_s: tdb.seconds_since(&tt),
                    ..Default::default()
                };
                Ok(Corrected {
                    bjd_tdb: tdb,
                    observer_tdb: tdb,
                    delays,
                    earth_orientation_from_table: false,
                    observer_barycentric_km: None,
                })
            }
            ReferencePoint::Observer => self.correct_observer_time(time, observer, 0.0, slow),
            ReferencePoint::Heliocentric => {
                // Undo t_H = t_obs + (r_obs − r_sun)·n̂/c by fixed-point iteration on the
                // same clock (the HJD clock is kept), then correct normally.
                let mut obs_time = *time;
                let mut helio = 0.0;
                for _ in 0..4 {
                    helio = self.heliocentric_delay_with(&obs_time, observer, slow)?;
                    obs_time = time.add_seconds(-helio);
                }
                self.correct_observer_time(&obs_time, observer, helio, slow)
            }
        }
    }

    /// TT and geocentric TDB of a reading on any clock, with TDB − TT from `slow` (TDB and
    /// TCB readings: the fixed-point iteration of [`ScaleConverter::tdb_to_tt`]).
    fn geocentric_tt_and_tdb(&self, time: &Instant, slow: SlowParts<'_>) -> Result<(Instant, Instant), ArrivalError> {
        let dtdb = |tt: &Instant| slow.at(tt).geocentric_tdb_minus_tt_s;
        Ok(match time.scale() {
            TimeScale::Tdb | TimeScale::Tcb => {
                let tdb = self.converter.convert(time, TimeScale::Tdb)?;
                let mut tt = tdb.relabel(TimeScale::Tt);
                for _ in 0..3 {
                    tt = tdb.add_seconds(-dtdb(&tt)).relabel(TimeScale::Tt);
                }
                (tt, tdb)
            }
            _ => {
                let tt = self.converter.convert(time, TimeScale::Tt)?;
                (tt, tt.add_seconds(dtdb(&tt)).relabel(TimeScale::Tdb))
            }
        })
    }

    /// Heliocentric light time (r_obs − r_Sun)·n̂/c, s, of a clock reading at the observer:
    /// what a legacy HJD added to the observed time (Eastman, Siverd & Gaudi 2010 eq. 2,
    /// without Shapiro or Einstein terms).
    pub fn heliocentric_delay_s(&self, clock: &Instant, observer: &Observer) -> Result<f64, ArrivalError> {
        self.heliocentric_delay_with(clock, observer, SlowParts::Exact)
    }

    fn heliocentric_delay_with(
        &self,
        clock: &Instant,
        observer: &Observer,
        slow: SlowParts<'_>,
    ) -> Result<f64, ArrivalError> {
        let (tdb, _, tt) = self.observer_tdb(clock, observer, slow)?;
        let r_obs = self.observer_barycentric_km(&tdb, &tt, clock, observer, slow)?.0;
        let sun = self.ephemeris.state(Body::Sun, &tdb)?;
        let rel = [r_obs[0] - sun.position_km[0], r_obs[1] - sun.position_km[1], r_obs[2] - sun.position_km[2]];
        Ok(roemer_delay_s(&rel, &self.source.direction_at(&tdb).unit))
    }

    /// TDB at the observer for a clock reading, with the clock-to-TT offset, s.
    fn observer_tdb(
        &self,
        time: &Instant,
        observer: &Observer,
        slow: SlowParts<'_>,
    ) -> Result<(Instant, f64, Instant), ArrivalError> {
        let tt = self.converter.convert(time, TimeScale::Tt)?;
        let clock_to_tt = tt.seconds_since(time);
        let tdb = match observer {
            Observer::Site(site) => {
                // The topocentric term wants the UT fraction of day (UTC is used, as SOFA
                // allows: the UT1 difference changes the term by < 2e-10 s).
                let ut_fraction = |tt: &Instant| match self.converter.convert(tt, TimeScale::Utc) {
                    Ok(utc) => utc.day_fraction().min(1.0),
                    Err(_) => (tt.seconds_of_day() - 69.0).rem_euclid(SECONDS_PER_DAY) / SECONDS_PER_DAY,
                };
                let dtdb_site = site.dtdb_site();
                // TDB at the site, as `ScaleConverter::at_site(..).tt_to_tdb_with_ut` (without
                // copying the converter for every row).
                let site_tdb = |tt: &Instant| {
                    tt.add_seconds(tdb_minus_tt_s(tt, Some(&dtdb_site), ut_fraction(tt))).relabel(TimeScale::Tdb)
                };
                if matches!(time.scale(), TimeScale::Tdb | TimeScale::Tcb) {
                    // A TDB (or TCB) clock read at the site already holds the site's
                    // topocentric term: keep it as the observer's TDB, and find the TT of
                    // that instant by removing the site's TDB − TT (one step from the
                    // geocentric TT; the term changes by < 1e-13 s over its 2 µs).
                    let tdb = self.converter.convert(time, TimeScale::Tdb)?;
                    let guess = site_tdb(&tt);
                    let tt = tt.add_seconds(-guess.seconds_since(&tdb));
                    return Ok((tdb, tt.seconds_since(time), tt));
                }
                match slow {
                    SlowParts::Exact => site_tdb(&tt),
                    SlowParts::Interpolated(_) => {
                        let topocentric = topocentric_tdb_minus_tt_s(&tt, &dtdb_site, ut_fraction(&tt));
                        tt.add_seconds(slow.at(&tt).geocentric_tdb_minus_tt_s + topocentric).relabel(TimeScale::Tdb)
                    }
                }
            }
            Observer::Geocentre => self.geocentric_tdb(&tt, slow),
            Observer::Spacecraft(sc) => {
                let geo = self.geocentric_tdb(&tt, slow);
                // Topocentric term v_E·(r − r_E)/c² for an observer off the geocentre.
                let earth = self.ephemeris.state(Body::Earth, &geo)?;
                let offset = match sc.origin {
                    PositionOrigin::Geocentric => sc.position_km,
                    PositionOrigin::Barycentric => [
                        sc.position_km[0] - earth.position_km[0],
                        sc.position_km[1] - earth.position_km[1],
                        sc.position_km[2] - earth.position_km[2],
                    ],
                };
                let term = super::delays::dot(&earth.velocity_km_per_s, &offset)
                    / (SPEED_OF_LIGHT_KM_PER_S * SPEED_OF_LIGHT_KM_PER_S);
                geo.add_seconds(term)
            }
        };
        Ok((tdb, clock_to_tt, tt))
    }

    /// Geocentric TDB of TT instant `tt`, with TDB − TT from `slow`.
    fn geocentric_tdb(&self, tt: &Instant, slow: SlowParts<'_>) -> Instant {
        match slow {
            SlowParts::Exact => self.converter.tt_to_tdb(tt),
            SlowParts::Interpolated(_) => tt.add_seconds(slow.at(tt).geocentric_tdb_minus_tt_s).relabel(TimeScale::Tdb),
        }
    }

    /// Barycentric position of the observer, km, at observer TDB `tdb` (`tt` and `clock` are
    /// the same instant on TT and on the input scale, used for the Earth's rotation at a site).
    fn observer_barycentric_km(
        &self,
        tdb: &Instant,
        tt: &Instant,
        clock: &Instant,
        observer: &Observer,
        slow: SlowParts<'_>,
    ) -> Result<([f64; 3], bool), ArrivalError> {
        let earth = || self.ephemeris.state(Body::Earth, tdb);
        Ok(match observer {
            Observer::Geocentre => (earth()?.position_km, false),
            Observer::Spacecraft(sc) => match sc.origin {
                PositionOrigin::Barycentric => (sc.position_km, false),
                PositionOrigin::Geocentric => {
                    let e = earth()?.position_km;
                    ([e[0] + sc.position_km[0], e[1] + sc.position_km[1], e[2] + sc.position_km[2]], false)
                }
            },
            Observer::Site(site) => {
                let utc = self.converter.convert(clock, TimeScale::Utc).map_err(|e| match e {
                    TimeError::UtcBefore1960 { .. } => {
                        ArrivalError::SiteBeforeUtc(crate::ephemeris::describe_instant(clock))
                    }
                    other => ArrivalError::Time(other),
                })?;
                let (eop, from_table) = self.orientation.at_utc_mjd(utc.mjd_f64());
                let g = match slow {
                    SlowParts::Exact => site.gcrs_state(tt, &utc, &eop),
                    SlowParts::Interpolated(_) => site.gcrs_state_with_precession_nutation(
                        tt,
                        &utc,
                        &eop,
                        &slow.at(tt).celestial_to_intermediate(),
                    ),
                };
                let e = earth()?.position_km;
                ([e[0] + g.position_km[0], e[1] + g.position_km[1], e[2] + g.position_km[2]], from_table)
            }
        })
    }

    fn correct_observer_time(
        &self,
        time: &Instant,
        observer: &Observer,
        helio_removed: f64,
        slow: SlowParts<'_>,
    ) -> Result<Corrected, ArrivalError> {
        let (tdb, clock_to_tt, tt) = self.observer_tdb(time, observer, slow)?;
        let (r_obs, from_table) = self.observer_barycentric_km(&tdb, &tt, time, observer, slow)?;
        let delays = self.delays_at(&tdb, &r_obs, clock_to_tt, tdb.seconds_since(&tt), helio_removed)?;
        Ok(Corrected {
            bjd_tdb: tdb.add_seconds(delays.barycentric_s()),
            observer_tdb: tdb,
            delays,
            earth_orientation_from_table: from_table,
            observer_barycentric_km: Some(r_obs),
        })
    }

    fn delays_at(
        &self,
        tdb: &Instant,
        r_obs: &[f64; 3],
        clock_to_tt_s: f64,
        einstein_s: f64,
        heliocentric_removed_s: f64,
    ) -> Result<DelayBreakdown, ArrivalError> {
        let dir = self.source.direction_at(tdb);
        let roemer_s = roemer_delay_s(r_obs, &dir.unit);
        let curvature_s = dir.distance_km.map(|d| curvature_delay_s(r_obs, &dir.unit, d)).unwrap_or(0.0);
        let shapiro_sun_s = if self.options.shapiro_sun {
            let sun = self.ephemeris.state(Body::Sun, tdb)?;
            shapiro_delay_s(r_obs, &sun.position_km, &dir.unit, GM_SUN_KM3_PER_S2, SUN_RADIUS_KM)
        } else {
            0.0
        };
        let shapiro_planets_s = if self.options.shapiro_planets {
            let j = self.ephemeris.state(Body::Jupiter, tdb)?;
            let s = self.ephemeris.state(Body::Saturn, tdb)?;
            shapiro_delay_s(r_obs, &j.position_km, &dir.unit, GM_JUPITER_SYSTEM_KM3_PER_S2, JUPITER_RADIUS_KM)
                + shapiro_delay_s(r_obs, &s.position_km, &dir.unit, GM_SATURN_SYSTEM_KM3_PER_S2, SATURN_RADIUS_KM)
        } else {
            0.0
        };
        Ok(DelayBreakdown {
            clock_to_tt_s,
            einstein_s,
            roemer_s,
            curvature_s,
            shapiro_sun_s,
            shapiro_planets_s,
            heliocentric_removed_s,
        })
    }

    /// The smooth terms of the correction at TT instant `tt` for `observer` (ground site or
    /// geocentre), as tabulated at the nodes of the table corrector
    /// ([`super::interpolated::NodeGrid`]). Every value is computed exactly as
    /// [`BarycentricCorrector::correct`] computes it for an arrival at `tt`.
    pub fn node_terms(&self, tt: &Instant, observer: &Observer) -> Result<NodeTerms, ArrivalError> {
        self.node_terms_with_slow_parts(tt, observer, SlowParts::Exact)
    }

    /// As [`BarycentricCorrector::node_terms`], with precession–nutation and the geocentric
    /// TDB − TT from `slow` (the two-speed exact path of [`super::slow_terms`]: ≤ 3e-12 s
    /// from `node_terms` in every delay term).
    pub fn node_terms_with_slow_parts(
        &self,
        tt: &Instant,
        observer: &Observer,
        slow: SlowParts<'_>,
    ) -> Result<NodeTerms, ArrivalError> {
        let clock = tt.relabel(TimeScale::Tt);
        let (tdb, _, tt) = self.observer_tdb(&clock, observer, slow)?;
        let (r_obs, from_table) = self.observer_barycentric_km(&tdb, &tt, &clock, observer, slow)?;
        let d = self.delays_at(&tdb, &r_obs, 0.0, tdb.seconds_since(&tt), 0.0)?;
        let sun = self.ephemeris.state(Body::Sun, &tdb)?;
        let sun_projection_s = roemer_delay_s(&sun.position_km, &self.source.direction_at(&tdb).unit);
        Ok(NodeTerms {
            values: [
                d.einstein_s,
                d.roemer_s,
                d.curvature_s,
                d.shapiro_sun_s,
                d.shapiro_planets_s,
                sun_projection_s,
                r_obs[0],
                r_obs[1],
                r_obs[2],
            ],
            earth_orientation_from_table: from_table,
        })
    }

    /// The inverse: the clock reading on `scale` at which a signal reaching the barycentre
    /// at `bjd_tdb` arrives at `observer`. Iterates until the observer time changes by
    /// < 1e-10 s (normally 3–4 iterations). Used for predictions.
    pub fn arrival_at_observer(
        &self,
        bjd_tdb: &Instant,
        observer: &Observer,
        scale: TimeScale,
    ) -> Result<Instant, ArrivalError> {
        let bjd = bjd_tdb.relabel(TimeScale::Tdb);
        let mut guess_tdb = bjd;
        for _ in 0..10 {
            let clock = self.converter.convert(&guess_tdb, scale)?;
            let corrected = self.correct(&clock, observer, ReferencePoint::Observer)?;
            let miss = corrected.bjd_tdb.seconds_since(&bjd);
            guess_tdb = guess_tdb.add_seconds(-miss);
            if miss.abs() < 1e-10 {
                return Ok(self.converter.convert(&guess_tdb, scale)?);
            }
        }
        Err(ArrivalError::NoConvergence(crate::ephemeris::describe_instant(bjd_tdb)))
    }
}
