//! The absolute instant: whole days plus seconds within the day, on a stated time scale.
//!
//! A bare `f64` Julian Date near 2.46e6 resolves only ~40 µs, so no core API passes one.
//! [`Instant`] stores the Modified Julian Day number as an integer and the seconds elapsed
//! since that day's 0h as an `f64` (resolution better than 2e-11 s), which round-trips
//! far below 1 ns over 1900–2100 and beyond. The scale travels with the value.
//!
//! For UTC the seconds of a day may reach 86401 (or more) inside a leap second; every
//! other scale is uniform and keeps `0 <= seconds < 86400`.

use std::fmt;

pub use crate::constants::SECONDS_PER_DAY;
/// Julian Date of MJD 0 (1858-11-17 0h): JD = MJD + 2 400 000.5.
pub const MJD_ZERO_JD: f64 = 2_400_000.5;
/// MJD of the J2000.0 epoch day (2000-01-01); J2000.0 itself is MJD 51544.5 (TT).
pub const J2000_MJD_DAY: i64 = 51_544;

/// The time scales skyclock converts between.
///
/// Definitions: IAU 1991 Resolution A4 (TT), IAU 2006 Resolution B3 (TDB), IAU 2000
/// Resolution B1.5/B1.9 (TCB, L_B), IERS Conventions 2010 ch. 10 (UTC, TAI), and the
/// GPS interface specification IS-GPS-200 (GPS = TAI − 19 s).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, serde::Serialize, serde::Deserialize)]
pub enum TimeScale {
    /// Coordinated Universal Time (with leap seconds).
    Utc,
    /// International Atomic Time.
    Tai,
    /// Terrestrial Time, TT = TAI + 32.184 s.
    Tt,
    /// Barycentric Dynamical Time.
    Tdb,
    /// Barycentric Coordinate Time.
    Tcb,
    /// GPS system time, GPS = TAI − 19 s.
    Gps,
}

impl TimeScale {
    /// All scales, in a fixed order (for help texts and tests).
    pub const ALL: [TimeScale; 6] =
        [TimeScale::Utc, TimeScale::Tai, TimeScale::Tt, TimeScale::Tdb, TimeScale::Tcb, TimeScale::Gps];

    /// Lower-case name used in files and on the command line (`utc`, `tai`, `tt`, `tdb`, `tcb`, `gps`).
    pub fn name(self) -> &'static str {
        match self {
            TimeScale::Utc => "utc",
            TimeScale::Tai => "tai",
            TimeScale::Tt => "tt",
            TimeScale::Tdb => "tdb",
            TimeScale::Tcb => "tcb",
            TimeScale::Gps => "gps",
        }
    }

    /// Parses a scale name, case-insensitively; `None` for anything else.
    pub fn parse(text: &str) -> Option<TimeScale> {
        let lower = text.trim().to_ascii_lowercase();
        TimeScale::ALL.into_iter().find(|s| s.name() == lower)
    }
}

impl fmt::Display for TimeScale {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.name().to_ascii_uppercase())
    }
}

/// An absolute instant: integer MJD day plus seconds since that day's 0h, on `scale`.
///
/// Invariant for uniform scales: `0 <= seconds_of_day < 86400`. For UTC the seconds may
/// exceed 86400 only on a day that ends with a leap second (checked where UTC is parsed).
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Instant {
    scale: TimeScale,
    mjd_day: i64,
    seconds_of_day: f64,
}

impl Instant {
    /// Builds an instant from an MJD day number and seconds of day; the seconds may be any
    /// finite value and are carried into the day count (uniform 86400-s days).
    /// Use [`Instant::from_utc_parts_unchecked`] for UTC seconds inside a leap second.
    pub fn from_mjd_parts(scale: TimeScale, mjd_day: i64, seconds: f64) -> Instant {
        let carry = (seconds / SECONDS_PER_DAY).floor();
        let mut day = mjd_day + carry as i64;
        let mut sec = seconds - carry * SECONDS_PER_DAY;
        if sec >= SECONDS_PER_DAY {
            // Rounding can leave exactly 86400.
            sec -= SECONDS_PER_DAY;
            day += 1;
        }
        if sec < 0.0 {
            sec = 0.0;
        }
        Instant { scale, mjd_day: day, seconds_of_day: sec }
    }

    /// A UTC instant whose seconds of day may lie in `[86400, 86401)` (a leap second).
    /// The caller has checked that the day really ends with a leap second.
    pub fn from_utc_parts_unchecked(mjd_day: i64, seconds: f64) -> Instant {
        Instant { scale: TimeScale::Utc, mjd_day, seconds_of_day: seconds }
    }

    /// From a two-part Julian Date `jd1 + jd2` (any split, as in SOFA). Precision is that of
    /// the parts: with `jd1` integral or half-integral, better than 1 ns.
    pub fn from_jd_two_part(scale: TimeScale, jd1: f64, jd2: f64) -> Instant {
        // Move to MJD, peeling off whole days from each part separately to keep precision.
        let a = jd1 - MJD_ZERO_JD;
        let a_day = a.floor();
        let b_day = jd2.floor();
        let frac = (a - a_day) + (jd2 - b_day);
        Instant::from_mjd_parts(scale, a_day as i64 + b_day as i64, frac * SECONDS_PER_DAY)
    }

    /// From a two-part Modified Julian Date `mjd1 + mjd2`.
    pub fn from_mjd_two_part(scale: TimeScale, mjd1: f64, mjd2: f64) -> Instant {
        let a_day = mjd1.floor();
        let b_day = mjd2.floor();
        let frac = (mjd1 - a_day) + (mjd2 - b_day);
        Instant::from_mjd_parts(scale, a_day as i64 + b_day as i64, frac * SECONDS_PER_DAY)
    }

    /// The time scale this instant is expressed in.
    pub fn scale(&self) -> TimeScale {
        self.scale
    }

    /// Integer MJD day number.
    pub fn mjd_day(&self) -> i64 {
        self.mjd_day
    }

    /// Seconds since 0h of [`Instant::mjd_day`], s.
    pub fn seconds_of_day(&self) -> f64 {
        self.seconds_of_day
    }

    /// Fraction of the day elapsed (seconds / 86400; may exceed 1 inside a UTC leap second).
    pub fn day_fraction(&self) -> f64 {
        self.seconds_of_day / SECONDS_PER_DAY
    }

    /// Two-part Julian Date `(jd1, jd2)` with `jd1` half-integral (…​.5): the SOFA convention
    /// for full precision.
    pub fn jd_two_part(&self) -> (f64, f64) {
        (self.mjd_day as f64 + MJD_ZERO_JD, self.day_fraction())
    }

    /// Two-part MJD `(integer day, fraction)`.
    pub fn mjd_two_part(&self) -> (f64, f64) {
        (self.mjd_day as f64, self.day_fraction())
    }

    /// Single `f64` MJD (resolution ~1 µs near MJD 60000): for display and plots only.
    pub fn mjd_f64(&self) -> f64 {
        self.mjd_day as f64 + self.day_fraction()
    }

    /// Single `f64` JD (resolution ~40 µs): for display and plots only.
    pub fn jd_f64(&self) -> f64 {
        let (a, b) = self.jd_two_part();
        a + b
    }

    /// The same numbers relabelled with another scale (no conversion). For use by the
    /// scale-conversion code, which adds the offsets itself.
    pub fn relabel(&self, scale: TimeScale) -> Instant {
        Instant::from_mjd_parts(scale, self.mjd_day, self.seconds_of_day)
    }

    /// This instant shifted by `seconds` (uniform 86400-s days; not for UTC across a leap).
    pub fn add_seconds(&self, seconds: f64) -> Instant {
        // Split the shift into whole days and a remainder so large shifts keep precision.
        let days = (seconds / SECONDS_PER_DAY).trunc();
        let rest = seconds - days * SECONDS_PER_DAY;
        Instant::from_mjd_parts(self.scale, self.mjd_day + days as i64, self.seconds_of_day + rest)
    }

    /// `self − other` in seconds, counting 86400-s days (the scales should match; for two UTC
    /// instants across a leap second the leap is not counted). Exact to ~1e-11 s per day of
    /// separation's magnitude in `f64`.
    pub fn seconds_since(&self, other: &Instant) -> f64 {
        (self.mjd_day - other.mjd_day) as f64 * SECONDS_PER_DAY + (self.seconds_of_day - other.seconds_of_day)
    }

    /// Seconds since J2000.0 (2000-01-01 12h) on this instant's own scale.
    pub fn seconds_since_j2000(&self) -> f64 {
        (self.mjd_day - J2000_MJD_DAY) as f64 * SECONDS_PER_DAY + (self.seconds_of_day - 43_200.0)
    }

    /// Days since J2000.0 on this instant's own scale, as `f64` (for slowly varying models).
    pub fn days_since_j2000(&self) -> f64 {
        self.seconds_since_j2000() / SECONDS_PER_DAY
    }

    /// Julian centuries since J2000.0 on this instant's own scale.
    pub fn centuries_since_j2000(&self) -> f64 {
        self.days_since_j2000() / 36_525.0
    }

    /// Instant `seconds` after J2000.0 (2000-01-01 12h) on `scale`.
    pub fn from_seconds_since_j2000(scale: TimeScale, seconds: f64) -> Instant {
        Instant::from_mjd_parts(scale, J2000_MJD_DAY, 43_200.0).add_seconds(seconds)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn two_part_jd_round_trips_below_a_nanosecond_1900_to_2100() {
        // Property of the representation itself (no outside source needed).
        for k in 0..2000 {
            let mjd_day = 15_020 + k * 36; // 1900-01-01 .. ~2097
            let sec = (k as f64 * 7919.123456789) % SECONDS_PER_DAY;
            let t = Instant::from_mjd_parts(TimeScale::Tt, mjd_day, sec);
            let (a, b) = t.jd_two_part();
            let back = Instant::from_jd_two_part(TimeScale::Tt, a, b);
            assert!(back.seconds_since(&t).abs() < 1e-9, "k={k}");
            let (m1, m2) = t.mjd_two_part();
            let back = Instant::from_mjd_two_part(TimeScale::Tt, m1, m2);
            assert!(back.seconds_since(&t).abs() < 1e-9, "k={k}");
        }
    }

    #[test]
    fn add_and_subtract_are_inverse() {
        let t = Instant::from_mjd_parts(TimeScale::Tdb, 60_000, 1234.5);
        for s in [-1e9, -SECONDS_PER_DAY, -0.3, 0.0, 1e-9, 86_399.999, 3.2e9] {
            let u = t.add_seconds(s);
            assert!((u.seconds_since(&t) - s).abs() < 1e-6 * (1.0 + s.abs() * 1e-9));
            assert!(u.seconds_of_day() >= 0.0 && u.seconds_of_day() < SECONDS_PER_DAY);
        }
    }

    #[test]
    fn j2000_is_mjd_51544_5() {
        // J2000.0 = JD 2451545.0 = MJD 51544.5 (IAU 1976 / IERS Conventions; common practice).
        let t = Instant::from_seconds_since_j2000(TimeScale::Tt, 0.0);
        assert_eq!(t.jd_two_part(), (2_451_544.5, 0.5));
    }
}
