//! The core time types read and print the same everywhere: `Instant` implements `Display`
//! and `FromStr` (one text form, `JD <Julian Date, 14 decimals> <SCALE>`, e.g.
//! `JD 2459000.50000000000000 TDB`, which round-trips at ≤ 1 ns), a partial order within one
//! scale (instants on different scales are not comparable without a conversion, so
//! `partial_cmp` answers `None` for them), and arithmetic with [`Duration`] (seconds).
//! `TimeScale` parses from its name (`utc`, `TT`, …).

use std::cmp::Ordering;
use std::fmt;
use std::ops::{Add, Sub};
use std::str::FromStr;

use super::TimeError;
use super::format::{TimeFormat, format_time, parse_time};
use super::instant::{Instant, TimeScale};
use super::leap_seconds::LeapSecondTable;

/// A span of time in SI seconds (uniform 86 400-s days; a UTC leap second is not counted).
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default, serde::Serialize, serde::Deserialize)]
pub struct Duration {
    /// Length, seconds (negative: backwards).
    pub seconds: f64,
}

impl Duration {
    /// A duration of `seconds`.
    pub fn from_seconds(seconds: f64) -> Duration {
        Duration { seconds }
    }

    /// A duration of `days` (86 400 s each).
    pub fn from_days(days: f64) -> Duration {
        Duration { seconds: days * crate::constants::SECONDS_PER_DAY }
    }

    /// Length in days.
    pub fn days(self) -> f64 {
        self.seconds / crate::constants::SECONDS_PER_DAY
    }
}

impl Add<Duration> for Instant {
    type Output = Instant;
    fn add(self, d: Duration) -> Instant {
        self.add_seconds(d.seconds)
    }
}

impl Sub<Duration> for Instant {
    type Output = Instant;
    fn sub(self, d: Duration) -> Instant {
        self.add_seconds(-d.seconds)
    }
}

impl Instant {
    /// `self − earlier` as a [`Duration`]; instants on different scales are refused (convert
    /// one first with `ScaleConverter`).
    pub fn duration_since(&self, earlier: &Instant) -> Result<Duration, TimeError> {
        if self.scale() != earlier.scale() {
            return Err(TimeError::Conversion {
                from: earlier.scale().name().to_string(),
                to: self.scale().name().to_string(),
                reason: "a difference of instants needs one scale; convert one of them first".to_string(),
            });
        }
        Ok(Duration { seconds: self.seconds_since(earlier) })
    }
}

impl PartialOrd for Instant {
    /// Later is greater, within one scale; `None` across scales.
    fn partial_cmp(&self, other: &Instant) -> Option<Ordering> {
        if self.scale() != other.scale() {
            return None;
        }
        match self.mjd_day().cmp(&other.mjd_day()) {
            Ordering::Equal => self.seconds_of_day().partial_cmp(&other.seconds_of_day()),
            o => Some(o),
        }
    }
}

impl fmt::Display for Instant {
    /// "JD 2459000.50000000000000 TDB".
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "JD {} {}", format_time(self, TimeFormat::Jd), self.scale().name().to_ascii_uppercase())
    }
}

impl FromStr for Instant {
    type Err = TimeError;
    /// Reads the [`Display`](fmt::Display) form (`JD <number> <scale>`; the `JD` is optional).
    /// UTC uses the built-in leap-second table.
    fn from_str(text: &str) -> Result<Instant, TimeError> {
        let unreadable = || TimeError::Unparseable {
            text: text.to_string(),
            format: "instant",
            expected: "'JD <Julian Date> <scale>', e.g. 'JD 2459000.5 TDB' (scales utc, tai, tt, tdb, tcb, gps)"
                .to_string(),
        };
        let mut parts: Vec<&str> = text.split_whitespace().collect();
        if parts.first().is_some_and(|p| p.eq_ignore_ascii_case("jd")) {
            parts.remove(0);
        }
        let [number, scale] = parts.as_slice() else { return Err(unreadable()) };
        let scale: TimeScale = scale.parse().map_err(|_| unreadable())?;
        parse_time(number, TimeFormat::Jd, scale, &LeapSecondTable::builtin())
    }
}

/// A scale name that is none of ours.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("unknown time scale '{0}'; use utc, tai, tt, tdb, tcb or gps")]
pub struct UnknownScale(pub String);

impl FromStr for TimeScale {
    type Err = UnknownScale;
    fn from_str(text: &str) -> Result<TimeScale, UnknownScale> {
        TimeScale::parse(text).ok_or_else(|| UnknownScale(text.to_string()))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// SplitMix64 uniform deviates (Steele, Lea & Flood 2014); `time` sits below `fit`,
    /// whose generator it may not import (DEVELOPERS.md, Layering).
    struct Uniform(u64);

    impl Uniform {
        fn next(&mut self) -> f64 {
            self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
            let mut z = self.0;
            z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
            z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
            ((z ^ (z >> 31)) >> 11) as f64 / (1u64 << 53) as f64
        }
    }

    #[test]
    fn text_form_round_trips_within_a_nanosecond_from_1900_to_2100() {
        let mut rng = Uniform(2026);
        for scale in [TimeScale::Tdb, TimeScale::Tt, TimeScale::Tai] {
            for _ in 0..2000 {
                // MJD 15020 (1900-01-01) to MJD 88069 (2100-01-01).
                let day = 15_020 + (rng.next() * 73_049.0) as i64;
                let t = Instant::from_mjd_parts(scale, day, rng.next() * 86_399.999);
                let text = t.to_string();
                let back: Instant = text.parse().unwrap();
                assert_eq!(back.scale(), scale);
                assert!(back.seconds_since(&t).abs() <= 1e-9, "{text}: {} s", back.seconds_since(&t));
            }
        }
    }

    #[test]
    fn order_and_arithmetic_within_one_scale() {
        let a: Instant = "JD 2459000.5 TDB".parse().unwrap();
        let b = a + Duration::from_days(1.5);
        assert!(b > a && a < b);
        assert_eq!(b.duration_since(&a).unwrap().days(), 1.5);
        assert_eq!((b - Duration::from_days(1.5)).seconds_since(&a), 0.0);
        let tt = a.relabel(TimeScale::Tt);
        assert_eq!(a.partial_cmp(&tt), None);
        assert!(a.duration_since(&tt).is_err());
    }

    #[test]
    fn unreadable_text_is_refused_with_the_accepted_form() {
        for bad in ["", "2459000.5", "JD 2459000.5 XYZ", "JD two TDB", "JD 1 2 TDB"] {
            let e = bad.parse::<Instant>().unwrap_err().to_string();
            assert!(!e.is_empty(), "{bad}");
        }
        assert!("JD 2459000.5 XYZ".parse::<Instant>().unwrap_err().to_string().contains("JD <Julian Date> <scale>"));
        assert_eq!("Tdb".parse::<TimeScale>().unwrap(), TimeScale::Tdb);
        assert!("xyz".parse::<TimeScale>().is_err());
    }
}
