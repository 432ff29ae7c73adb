//! Conversions between the time scales UTC, TAI, TT, TDB, TCB and GPS.
//!
//! - UTC ↔ TAI: leap-second table ([`LeapSecondTable`]); 1960–1971 with the rate formula.
//! - TAI ↔ TT: TT = TAI + 32.184 s exactly (IAU 1991 Resolution A4).
//! - TAI ↔ GPS: GPS = TAI − 19 s exactly (IS-GPS-200).
//! - TT ↔ TDB: Fairhead & Bretagnon (1990, A&A 229, 240) series as in SOFA `iauDtdb`
//!   (via sofars), with the observer's topocentric term when a site is given. Accuracy of
//!   the series: a few ns over 1600–2200 against numerical time ephemerides.
//! - TDB ↔ TCB: IAU 2006 Resolution B3, L_B = 1.550519768e−8, TDB0 = −6.55e−5 s,
//!   T0 = 1977-01-01 00:00:32.184 TAI (JD 2443144.5003725).

use super::error::TimeError;
use super::instant::{Instant, TimeScale};
use super::leap_seconds::LeapSecondTable;
use crate::constants::SECONDS_PER_DAY;

/// TT − TAI, s (IAU 1991 Resolution A4).
pub const TT_MINUS_TAI_S: f64 = 32.184;
/// TAI − GPS, s (IS-GPS-200).
pub const TAI_MINUS_GPS_S: f64 = 19.0;
/// L_B: rate of TCB relative to TDB (IAU 2006 Resolution B3).
pub const L_B: f64 = 1.550_519_768e-8;
/// TDB0, s (IAU 2006 Resolution B3).
pub const TDB0_S: f64 = -6.55e-5;

/// Where the observer is, for the topocentric part of TDB − TT (SOFA `iauDtdb` arguments).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DtdbSite {
    /// East longitude, rad.
    pub east_longitude_rad: f64,
    /// Distance from the Earth's spin axis, km.
    pub spin_axis_distance_km: f64,
    /// Distance north of the equatorial plane, km.
    pub equator_distance_km: f64,
}

/// TDB − TT in seconds at `instant` (TT or TDB; the difference in argument is negligible),
/// with the topocentric term for `site` (geocentric when `None`). `ut1_day_fraction` is the
/// UT1 fraction of day used only by the topocentric term (UTC is within 1 s; the term is
/// at most ~2 µs, so the UT1−UTC error contributes < 1e-10 s).
/// Source: Fairhead & Bretagnon 1990 via SOFA `iauDtdb`. Accuracy: ~ns (see module doc).
pub fn tdb_minus_tt_s(instant: &Instant, site: Option<&DtdbSite>, ut1_day_fraction: f64) -> f64 {
    let (jd1, jd2) = instant.jd_two_part();
    match site {
        None => sofars::ts::dtdb(jd1, jd2, ut1_day_fraction, 0.0, 0.0, 0.0),
        Some(s) => sofars::ts::dtdb(
            jd1,
            jd2,
            ut1_day_fraction,
            s.east_longitude_rad,
            s.spin_axis_distance_km,
            s.equator_distance_km,
        ),
    }
}

/// The topocentric part of TDB − TT, s, for an observer at `site` (Moyer 1981, Murray 1983):
/// the terms SOFA `iauDtdb` adds for a site, evaluated exactly as there (same fundamental
/// arguments, Simon et al. 1994, same order), so that
/// `tdb_minus_tt_s(t, Some(site), ut) = tdb_minus_tt_s(t, None, ut) + topocentric_tdb_minus_tt_s(t, site, ut)`
/// to rounding (~1e-19 s). Dominated by the diurnal 3.18e-10·u·sin(local solar time) term
/// (u in km: ≤ 2 µs). `ut1_day_fraction` as for [`tdb_minus_tt_s`].
pub fn topocentric_tdb_minus_tt_s(instant: &Instant, site: &DtdbSite, ut1_day_fraction: f64) -> f64 {
    const DEG_TO_RAD: f64 = std::f64::consts::PI / 180.0;
    let (jd1, jd2) = instant.jd_two_part();
    // Julian millennia since J2000.0 (as iauDtdb).
    let t = ((jd1 - 2_451_545.0) + jd2) / 365_250.0;
    let tsol = (ut1_day_fraction % 1.0) * std::f64::consts::TAU + site.east_longitude_rad;
    let w = t / 3600.0;
    let elsun = (280.46645683 + 1296027711.03429 * w).rem_euclid(360.0) * DEG_TO_RAD;
    let emsun = (357.52910918 + 1295965810.481 * w).rem_euclid(360.0) * DEG_TO_RAD;
    let d = (297.85019547 + 16029616012.090 * w).rem_euclid(360.0) * DEG_TO_RAD;
    let elj = (34.35151874 + 109306899.89453 * w).rem_euclid(360.0) * DEG_TO_RAD;
    let els = (50.07744430 + 44046398.47038 * w).rem_euclid(360.0) * DEG_TO_RAD;
    let (u, v) = (site.spin_axis_distance_km, site.equator_distance_km);
    0.00029e-10 * u * (tsol + elsun - els).sin()
        + 0.00100e-10 * u * (tsol - 2.0 * emsun).sin()
        + 0.00133e-10 * u * (tsol - d).sin()
        + 0.00133e-10 * u * (tsol + elsun - elj).sin()
        - 0.00229e-10 * u * (tsol + 2.0 * elsun + emsun).sin()
        - 0.02200e-10 * v * (elsun + emsun).cos()
        + 0.05312e-10 * u * (tsol - emsun).sin()
        - 0.13677e-10 * u * (tsol + 2.0 * elsun).sin()
        - 1.31840e-10 * v * elsun.cos()
        + 3.17679e-10 * u * tsol.sin()
}

/// Converts between time scales. Holds the leap-second table and, for TDB/TCB, the site
/// whose topocentric TDB − TT term is wanted (geocentre by default).
#[derive(Debug, Clone)]
pub struct ScaleConverter {
    leap_seconds: LeapSecondTable,
    site: Option<DtdbSite>,
}

impl ScaleConverter {
    /// A converter with the given leap-second table, geocentric TDB.
    pub fn new(leap_seconds: LeapSecondTable) -> ScaleConverter {
        ScaleConverter { leap_seconds, site: None }
    }

    /// The same converter evaluating TDB − TT at `site` instead of the geocentre.
    pub fn at_site(&self, site: Option<DtdbSite>) -> ScaleConverter {
        ScaleConverter { leap_seconds: self.leap_seconds.clone(), site }
    }

    /// The leap-second table in use.
    pub fn leap_seconds(&self) -> &LeapSecondTable {
        &self.leap_seconds
    }

    /// `t` expressed on scale `to`. Accuracy: exact for UTC/TAI/TT/GPS (to the `f64`
    /// seconds resolution, ~1e-11 s); TDB and TCB as the Fairhead & Bretagnon series (~ns).
    pub fn convert(&self, t: &Instant, to: TimeScale) -> Result<Instant, TimeError> {
        if t.scale() == to {
            return Ok(*t);
        }
        let tai = self.to_tai(t)?;
        self.tai_to(&tai, to)
    }

    fn to_tai(&self, t: &Instant) -> Result<Instant, TimeError> {
        Ok(match t.scale() {
            TimeScale::Tai => *t,
            TimeScale::Utc => self.utc_to_tai(t)?,
            TimeScale::Tt => t.add_seconds(-TT_MINUS_TAI_S).relabel(TimeScale::Tai),
            TimeScale::Gps => t.add_seconds(TAI_MINUS_GPS_S).relabel(TimeScale::Tai),
            TimeScale::Tdb => self.tdb_to_tt(t).add_seconds(-TT_MINUS_TAI_S).relabel(TimeScale::Tai),
            TimeScale::Tcb => {
                let tdb = tcb_to_tdb(t);
                self.tdb_to_tt(&tdb).add_seconds(-TT_MINUS_TAI_S).relabel(TimeScale::Tai)
            }
        })
    }

    fn tai_to(&self, tai: &Instant, to: TimeScale) -> Result<Instant, TimeError> {
        Ok(match to {
            TimeScale::Tai => *tai,
            TimeScale::Utc => self.tai_to_utc(tai)?,
            TimeScale::Tt => tai.add_seconds(TT_MINUS_TAI_S).relabel(TimeScale::Tt),
            TimeScale::Gps => tai.add_seconds(-TAI_MINUS_GPS_S).relabel(TimeScale::Gps),
            TimeScale::Tdb => self.tt_to_tdb(&tai.add_seconds(TT_MINUS_TAI_S).relabel(TimeScale::Tt)),
            TimeScale::Tcb => tdb_to_tcb(&self.tt_to_tdb(&tai.add_seconds(TT_MINUS_TAI_S).relabel(TimeScale::Tt))),
        })
    }

    /// TT → TDB at this converter's site. The UT1 fraction for the topocentric term is
    /// approximated by the TT fraction minus 69 s (error ≪ 1 ns in the term).
    pub fn tt_to_tdb(&self, tt: &Instant) -> Instant {
        let ut_fraction = (tt.seconds_of_day() - 69.0).rem_euclid(SECONDS_PER_DAY) / SECONDS_PER_DAY;
        self.tt_to_tdb_with_ut(tt, ut_fraction)
    }

    /// TT → TDB at this converter's site with the UT fraction of day given (UTC or UT1;
    /// the difference changes the topocentric term by < 2e-10 s).
    pub fn tt_to_tdb_with_ut(&self, tt: &Instant, ut_day_fraction: f64) -> Instant {
        let dt = tdb_minus_tt_s(tt, self.site.as_ref(), ut_day_fraction);
        tt.add_seconds(dt).relabel(TimeScale::Tdb)
    }

    /// A UTC instant from a SOFA-style two-part quasi-JD (`iauDtf2d` convention: on a day
    /// ending with a leap second the fraction counts 86401-s days).
    pub fn utc_from_sofa_two_part(&self, jd1: f64, jd2: f64) -> Result<Instant, TimeError> {
        let rough = Instant::from_jd_two_part(TimeScale::Utc, jd1, jd2);
        let day = rough.mjd_day();
        let length = self.leap_seconds.utc_day_length_s(day)?;
        if length == SECONDS_PER_DAY {
            return Ok(rough);
        }
        let seconds = rough.day_fraction() * length;
        Ok(if seconds >= SECONDS_PER_DAY {
            Instant::from_utc_parts_unchecked(day, seconds)
        } else {
            Instant::from_mjd_parts(TimeScale::Utc, day, seconds)
        })
    }

    /// TDB → TT at this converter's site (two fixed-point iterations; converged to < 1e-15 s).
    pub fn tdb_to_tt(&self, tdb: &Instant) -> Instant {
        let ut_fraction = (tdb.seconds_of_day() - 69.0).rem_euclid(SECONDS_PER_DAY) / SECONDS_PER_DAY;
        let mut tt = tdb.relabel(TimeScale::Tt);
        for _ in 0..3 {
            let dt = tdb_minus_tt_s(&tt, self.site.as_ref(), ut_fraction);
            tt = tdb.add_seconds(-dt).relabel(TimeScale::Tt);
        }
        tt
    }

    /// UTC → TAI: TAI = UTC + (TAI − UTC); in 1961–1971 the UTC second is scaled by the
    /// published rate (as SOFA `iauUtctai`).
    pub fn utc_to_tai(&self, utc: &Instant) -> Result<Instant, TimeError> {
        let day = utc.mjd_day();
        let dat0 = self.leap_seconds.tai_minus_utc(day, 0.0)?;
        let drift = self.leap_seconds.rate_drift_per_day_s(day)?;
        let tai_seconds = utc.seconds_of_day() * (1.0 + drift / SECONDS_PER_DAY) + dat0;
        Ok(Instant::from_mjd_parts(TimeScale::Tai, day, tai_seconds))
    }

    /// TAI → UTC, placing instants inside a leap second at 23:59:60.x of the right day.
    pub fn tai_to_utc(&self, tai: &Instant) -> Result<Instant, TimeError> {
        // Candidate UTC day: the TAI day or the one before it.
        for day in [tai.mjd_day(), tai.mjd_day() - 1] {
            let dat0 = self.leap_seconds.tai_minus_utc(day, 0.0)?;
            let drift = self.leap_seconds.rate_drift_per_day_s(day)?;
            let since_utc_midnight = tai.seconds_since(&Instant::from_mjd_parts(TimeScale::Tai, day, 0.0)) - dat0;
            let utc_seconds = since_utc_midnight / (1.0 + drift / SECONDS_PER_DAY);
            let length = self.leap_seconds.utc_day_length_s(day)?;
            if utc_seconds >= 0.0 && utc_seconds < length {
                return Ok(if utc_seconds >= SECONDS_PER_DAY {
                    Instant::from_utc_parts_unchecked(day, utc_seconds)
                } else {
                    Instant::from_mjd_parts(TimeScale::Utc, day, utc_seconds)
                });
            }
        }
        // A negative leap second (never used so far) or a table gap: fall back to day start.
        let day = tai.mjd_day();
        let dat0 = self.leap_seconds.tai_minus_utc(day, 0.0)?;
        Ok(Instant::from_mjd_parts(TimeScale::Utc, day, tai.seconds_of_day() - dat0))
    }
}

/// Seconds of TDB since T0 = 1977-01-01 00:00:32.184 (the IAU 2006 B3 reference epoch).
fn since_t0(t: &Instant) -> f64 {
    t.seconds_since(&Instant::from_mjd_parts(t.scale(), 43_144, 32.184))
}

/// TDB → TCB (IAU 2006 Resolution B3). Exact by definition.
pub fn tdb_to_tcb(tdb: &Instant) -> Instant {
    let x = since_t0(tdb);
    // (x − TDB0)/(1 − L_B) − x written without cancellation (as SOFA iauTdbtcb).
    let offset = (x - TDB0_S) * (L_B / (1.0 - L_B)) - TDB0_S;
    tdb.add_seconds(offset).relabel(TimeScale::Tcb)
}

/// TCB → TDB (IAU 2006 Resolution B3). Exact by definition.
pub fn tcb_to_tdb(tcb: &Instant) -> Instant {
    let x = since_t0(tcb);
    let offset = -L_B * x + TDB0_S;
    tcb.add_seconds(offset).relabel(TimeScale::Tdb)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn conv() -> ScaleConverter {
        ScaleConverter::new(LeapSecondTable::builtin())
    }

    #[test]
    fn topocentric_part_is_what_sofa_adds_for_a_site() {
        // Reference: SOFA iauDtdb via sofars 0.6.3, with and without the site arguments.
        let site = DtdbSite { east_longitude_rad: -1.83, spin_axis_distance_km: 4_903.1, equator_distance_km: 4_047.6 };
        for (day, sec, ut) in [(41_000_i64, 100.0, 0.0012), (58_000, 43_210.5, 0.5), (70_000, 86_000.0, 0.995)] {
            let t = Instant::from_mjd_parts(TimeScale::Tt, day, sec);
            let with_site = tdb_minus_tt_s(&t, Some(&site), ut);
            let split = tdb_minus_tt_s(&t, None, ut) + topocentric_tdb_minus_tt_s(&t, &site, ut);
            assert!((with_site - split).abs() < 1e-18, "{with_site} vs {split}");
            assert!(topocentric_tdb_minus_tt_s(&t, &site, ut).abs() > 1e-8);
        }
    }

    #[test]
    fn utc_tai_round_trip_including_leap_second() {
        let c = conv();
        // 2016-12-31 23:59:60.5 UTC is inside the leap second (IERS Bulletin C 52).
        let utc = Instant::from_utc_parts_unchecked(57_753, 86_400.5);
        let tai = c.utc_to_tai(&utc).unwrap();
        // TAI - UTC was 36 s on that day: TAI = 2017-01-01 00:00:36.5.
        assert_eq!((tai.mjd_day(), tai.seconds_of_day()), (57_754, 36.5));
        let back = c.tai_to_utc(&tai).unwrap();
        assert_eq!((back.mjd_day(), back.seconds_of_day()), (57_753, 86_400.5));
        for &(day, sec) in &[(40_000_i64, 1000.25), (41_317, 0.0), (57_754, 0.0), (60_000, 86_399.75)] {
            let u = Instant::from_mjd_parts(TimeScale::Utc, day, sec);
            let b = c.tai_to_utc(&c.utc_to_tai(&u).unwrap()).unwrap();
            assert!(b.seconds_since(&u).abs() < 1e-9 && b.mjd_day() == day, "{day} {sec}");
        }
    }

    #[test]
    fn tt_minus_tai_and_gps() {
        // TT - TAI = 32.184 s (IAU 1991 A4); GPS = TAI - 19 s (IS-GPS-200).
        let c = conv();
        let tai = Instant::from_mjd_parts(TimeScale::Tai, 60_000, 100.0);
        let tt = c.convert(&tai, TimeScale::Tt).unwrap();
        assert!((tt.seconds_since(&tai) - 32.184).abs() < 1e-12);
        let gps = c.convert(&tai, TimeScale::Gps).unwrap();
        assert!((gps.seconds_since(&tai) + 19.0).abs() < 1e-12);
    }

    #[test]
    fn tcb_tdb_match_sofa() {
        // SOFA iauTdbtcb / iauTcbtdb (sofars 0.6.3) as reference.
        for k in 0..50 {
            let tdb = Instant::from_mjd_parts(TimeScale::Tdb, 36_000 + k * 1_500, 1234.567);
            let tcb = tdb_to_tcb(&tdb);
            let (a, b) = tdb.jd_two_part();
            let (s1, s2) = sofars::ts::tdbtcb(a, b).unwrap();
            let sofa = Instant::from_jd_two_part(TimeScale::Tcb, s1, s2);
            assert!(tcb.seconds_since(&sofa).abs() < 2e-9, "k={k}: {}", tcb.seconds_since(&sofa));
            assert!(tcb_to_tdb(&tcb).seconds_since(&tdb).abs() < 1e-9);
        }
    }

    #[test]
    fn tdb_round_trip() {
        let c = conv();
        let tt = Instant::from_mjd_parts(TimeScale::Tt, 59_000, 5000.0);
        let tdb = c.tt_to_tdb(&tt);
        assert!(tdb.seconds_since(&tt).abs() < 2e-3);
        assert!(c.tdb_to_tt(&tdb).seconds_since(&tt).abs() < 1e-12);
    }
}
