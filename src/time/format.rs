//! Text formats of times: Julian Date, Modified Julian Date, reduced JD (JD − 2400000),
//! two-part JD strings and ISO 8601 calendar strings (up to 9 decimals of a second,
//! including 23:59:60.x inside a leap second).
//!
//! Decimal strings are read digit by digit into an integer day and a fraction, so a string
//! such as `2459000.123456789012` keeps its nanoseconds (an `f64` JD would keep ~40 µs).

use super::calendar::{civil_from_mjd, mjd_from_civil};
use super::error::TimeError;
use super::instant::{Instant, MJD_ZERO_JD, SECONDS_PER_DAY, TimeScale};
use super::leap_seconds::LeapSecondTable;

/// How a time is written.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum TimeFormat {
    /// Julian Date, e.g. `2460000.5`, or two-part `2460000.5+0.25` / `2460000.5 0.25`.
    Jd,
    /// Modified Julian Date, MJD = JD − 2400000.5.
    Mjd,
    /// Reduced Julian Date, RJD = JD − 2400000.
    ReducedJd,
    /// ISO 8601 calendar date and time, `YYYY-MM-DDThh:mm:ss.sssssssss` (`T` or space; a
    /// trailing `Z` is accepted for UTC).
    Iso,
}

impl TimeFormat {
    /// Name used in files and on the command line.
    pub fn name(self) -> &'static str {
        match self {
            TimeFormat::Jd => "jd",
            TimeFormat::Mjd => "mjd",
            TimeFormat::ReducedJd => "reduced-jd",
            TimeFormat::Iso => "iso",
        }
    }

    /// Parses a format name (`jd`, `mjd`, `reduced-jd`, `iso`).
    pub fn parse(text: &str) -> Option<TimeFormat> {
        match text.trim().to_ascii_lowercase().replace('_', "-").as_str() {
            "jd" => Some(TimeFormat::Jd),
            "mjd" => Some(TimeFormat::Mjd),
            "reduced-jd" | "rjd" => Some(TimeFormat::ReducedJd),
            "iso" | "iso8601" | "iso-8601" => Some(TimeFormat::Iso),
            _ => None,
        }
    }

    /// Offset added to the written number to get an MJD: −2400000.5, 0 or −0.5.
    fn to_mjd_offset_halfdays(self) -> i64 {
        // In half days, to stay in integers: JD → MJD subtracts 4800001 half days.
        match self {
            TimeFormat::Jd => -4_800_001,
            TimeFormat::Mjd => 0,
            TimeFormat::ReducedJd => -1,
            TimeFormat::Iso => 0,
        }
    }
}

/// The day numbers accepted, as MJD: JD 0 (4713 BC January 1.5) to 10000-01-01 (MJD
/// 2 973 484). Wider than any ephemeris or TDB−TT series; it keeps the integer day arithmetic
/// exact and far from overflow. Common practice: the span of the Julian Day count and of a
/// four-digit ISO 8601 year.
pub const MJD_ACCEPTED: (f64, f64) = (-2_400_000.5, 2_973_484.0);

/// A decimal number read exactly as integer part plus fraction in [0, 1).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SplitDecimal {
    /// Whole part (floor of the value).
    pub whole: i64,
    /// Fractional part in [0, 1).
    pub fraction: f64,
}

/// The value of `0.<digits>` (ASCII digits), correctly rounded as `str::parse` rounds it,
/// without an allocation for the usual lengths.
fn parse_fraction_digits(digits: &str) -> Option<f64> {
    let mut text = [0u8; 64];
    if digits.len() + 2 > text.len() {
        return format!("0.{digits}").parse().ok();
    }
    text[..2].copy_from_slice(b"0.");
    text[2..2 + digits.len()].copy_from_slice(digits.as_bytes());
    std::str::from_utf8(&text[..2 + digits.len()]).ok()?.parse().ok()
}

/// Reads a decimal string such as `-12.5`, `2460000.123456789012` or `1.5e3` into whole and
/// fractional parts, keeping every digit of the fraction (to `f64` relative precision of the
/// fraction alone). Exponent notation falls back to `f64` parsing.
pub fn parse_split_decimal(text: &str) -> Option<SplitDecimal> {
    let s = text.trim();
    if s.is_empty() {
        return None;
    }
    if s.contains(['e', 'E']) {
        let v: f64 = s.parse().ok()?;
        if !v.is_finite() {
            return None;
        }
        // Beyond 2^53 an f64 holds no fraction, and an i64 would soon overflow.
        if v.abs() >= 9.0e15 {
            return None;
        }
        let w = v.floor();
        return Some(SplitDecimal { whole: w as i64, fraction: v - w });
    }
    let (negative, body) = match s.as_bytes()[0] {
        b'-' => (true, &s[1..]),
        b'+' => (false, &s[1..]),
        _ => (false, s),
    };
    let (int_str, frac_str) = match body.split_once('.') {
        Some((i, f)) => (i, f),
        None => (body, ""),
    };
    if int_str.is_empty() && frac_str.is_empty() {
        return None;
    }
    if !int_str.bytes().all(|b| b.is_ascii_digit()) || !frac_str.bytes().all(|b| b.is_ascii_digit()) {
        return None;
    }
    let whole: i64 = if int_str.is_empty() { 0 } else { int_str.parse().ok()? };
    let fraction: f64 = if frac_str.is_empty() { 0.0 } else { parse_fraction_digits(frac_str)? };
    Some(if !negative {
        SplitDecimal { whole, fraction }
    } else if fraction == 0.0 {
        SplitDecimal { whole: -whole, fraction: 0.0 }
    } else {
        SplitDecimal { whole: -whole - 1, fraction: 1.0 - fraction }
    })
}

/// Reads a time string in `format` on `scale`. For UTC ISO strings with second 60 the
/// leap-second table confirms that the day ends with a leap second.
/// Errors name the text and what would be accepted.
pub fn parse_time(
    text: &str,
    format: TimeFormat,
    scale: TimeScale,
    leap_seconds: &LeapSecondTable,
) -> Result<Instant, TimeError> {
    match format {
        TimeFormat::Iso => parse_iso(text, scale, leap_seconds),
        _ => parse_day_number(text, format, scale),
    }
}

fn parse_day_number(text: &str, format: TimeFormat, scale: TimeScale) -> Result<Instant, TimeError> {
    let bad = || TimeError::Unparseable {
        text: text.to_string(),
        format: format.name(),
        expected: "a decimal day number such as 2460000.123456789, or two parts such as 2460000.5+0.123456789"
            .to_string(),
    };
    let trimmed = text.trim();
    let unsigned = trimmed.trim_start_matches(['+', '-']);
    let is = |word: &str| unsigned.eq_ignore_ascii_case(word);
    if is("nan") || is("inf") || is("infinity") {
        let value = if is("nan") {
            f64::NAN
        } else if trimmed.starts_with('-') {
            f64::NEG_INFINITY
        } else {
            f64::INFINITY
        };
        return Err(TimeError::NotFinite { value });
    }
    // Two-part: "a+b" (not a leading sign) or "a b". The search starts after the first
    // character (its full UTF-8 length, so that a multi-byte first character is no slice
    // inside a character).
    let first_len = trimmed.chars().next().map_or(0, char::len_utf8);
    let two_parts: [&str; 2];
    let parts: &[&str] = match trimmed[first_len..].find(['+', ' ', '\t']) {
        Some(pos) if !trimmed[..pos + first_len].contains(['e', 'E']) => {
            let (a, b) = trimmed.split_at(pos + first_len);
            two_parts = [a, b.trim_start_matches(['+', ' ', '\t'])];
            &two_parts
        }
        _ => std::slice::from_ref(&trimmed),
    };
    // The range, checked on the value as a float before any integer arithmetic.
    let offset_d = format.to_mjd_offset_halfdays() as f64 / 2.0;
    let approx: f64 = parts.iter().filter_map(|p| p.trim().parse::<f64>().ok()).sum();
    let (low, high) = (MJD_ACCEPTED.0 - offset_d, MJD_ACCEPTED.1 - offset_d);
    if approx.is_infinite() || (approx.is_finite() && !(low..=high).contains(&approx)) {
        return Err(TimeError::OutOfRange { text: text.to_string(), format: format.name(), low, high });
    }
    let mut whole = 0_i64;
    let mut fraction = 0.0_f64;
    for p in parts {
        let d = parse_split_decimal(p).ok_or_else(bad)?;
        whole += d.whole;
        fraction += d.fraction;
    }
    // whole + fraction is the number in `format`; convert to MJD with half-day integers.
    let halfdays = 2 * whole + format.to_mjd_offset_halfdays();
    let mjd_day = halfdays.div_euclid(2);
    let extra_half = halfdays.rem_euclid(2) as f64 * 0.5;
    Ok(Instant::from_mjd_parts(scale, mjd_day, (extra_half + fraction) * SECONDS_PER_DAY))
}

fn parse_iso(text: &str, scale: TimeScale, leap_seconds: &LeapSecondTable) -> Result<Instant, TimeError> {
    let bad = |why: &str| TimeError::Unparseable {
        text: text.to_string(),
        format: "ISO 8601",
        expected: format!("YYYY-MM-DDThh:mm:ss[.fffffffff] ({why})"),
    };
    let s = text.trim();
    let s = s.strip_suffix('Z').unwrap_or(s);
    let (date, time) = match s.split_once(['T', ' ']) {
        Some((d, t)) => (d, t.trim()),
        None => (s, "00:00:00"),
    };
    let dparts: Vec<&str> = date.split('-').collect();
    if dparts.len() != 3 || dparts[0].len() != 4 {
        return Err(bad("date must be YYYY-MM-DD"));
    }
    let year: i64 = dparts[0].parse().map_err(|_| bad("year"))?;
    let month: u32 = dparts[1].parse().map_err(|_| bad("month"))?;
    let day: u32 = dparts[2].parse().map_err(|_| bad("day"))?;
    let mjd_day = mjd_from_civil(year, month, day).ok_or_else(|| bad("no such calendar date"))?;
    let tparts: Vec<&str> = time.split(':').collect();
    if tparts.len() < 2 || tparts.len() > 3 {
        return Err(bad("time must be hh:mm or hh:mm:ss"));
    }
    let hour: u32 = tparts[0].parse().map_err(|_| bad("hour"))?;
    let minute: u32 = tparts[1].parse().map_err(|_| bad("minute"))?;
    let sec = match tparts.get(2) {
        Some(t) => parse_split_decimal(t).filter(|d| d.whole >= 0).ok_or_else(|| bad("seconds"))?,
        None => SplitDecimal { whole: 0, fraction: 0.0 },
    };
    if hour > 23 || minute > 59 || sec.whole > 60 {
        return Err(bad("hour 0-23, minute 0-59, second 0-60"));
    }
    let seconds = (hour * 3600 + minute * 60) as f64 + sec.whole as f64 + sec.fraction;
    if sec.whole == 60 {
        let leap_day = scale == TimeScale::Utc
            && hour == 23
            && minute == 59
            && leap_seconds.utc_day_length_s(mjd_day).map(|l| l > 86_400.5).unwrap_or(false);
        if !leap_day {
            return Err(TimeError::NoLeapSecondThatDay { text: text.to_string(), date: date.to_string() });
        }
        return Ok(Instant::from_utc_parts_unchecked(mjd_day, seconds));
    }
    Ok(Instant::from_mjd_parts(scale, mjd_day, seconds))
}

/// Writes `value` in `format` with enough decimals for ~1 ns (14 decimals of a day for the
/// day numbers; 9 decimals of a second for ISO). Day numbers are written from the integer
/// day and the fraction separately, so no precision is lost in `f64`.
pub fn format_time(t: &Instant, format: TimeFormat) -> String {
    match format {
        TimeFormat::Iso => format_iso(t, 9),
        _ => {
            // number = MJD + offset; offsets in half days.
            let halfdays = 2 * t.mjd_day() - format.to_mjd_offset_halfdays();
            let mut whole = halfdays.div_euclid(2);
            let mut fraction = t.day_fraction() + halfdays.rem_euclid(2) as f64 * 0.5;
            if fraction >= 1.0 {
                fraction -= 1.0;
                whole += 1;
            }
            format_whole_and_fraction(whole, fraction, 14)
        }
    }
}

/// Writes a two-part day number `whole + fraction` (`fraction` in [0, 1)) as `whole.fffff…`
/// with `decimals` digits, carrying rounding. A negative number is written with its sign in
/// front of its magnitude: whole −1 and fraction 0.7 is `-0.3000…`, not `-1.7000…`.
pub fn format_whole_and_fraction(whole: i64, fraction: f64, decimals: usize) -> String {
    let scale = 10f64.powi(decimals as i32);
    let mut digits = (fraction * scale).round();
    let mut whole = whole;
    if digits >= scale {
        digits -= scale;
        whole += 1;
    }
    if whole < 0 && digits > 0.0 {
        // whole + digits/scale = −((−whole − 1) + (scale − digits)/scale)
        return format!("-{}.{:0width$}", -(whole + 1), (scale - digits) as u64, width = decimals);
    }
    format!("{whole}.{:0width$}", digits as u64, width = decimals)
}

/// ISO 8601 with `decimals` digits of a second (0–9); UTC leap seconds print as 23:59:60.x.
pub fn format_iso(t: &Instant, decimals: usize) -> String {
    let decimals = decimals.min(9);
    let scale = 10f64.powi(decimals as i32);
    let mut day = t.mjd_day();
    let mut ticks = (t.seconds_of_day() * scale).round();
    let day_ticks =
        if t.seconds_of_day() >= SECONDS_PER_DAY { (SECONDS_PER_DAY + 1.0) * scale } else { SECONDS_PER_DAY * scale };
    if ticks >= day_ticks {
        ticks -= day_ticks;
        day += 1;
    }
    let (y, m, d) = civil_from_mjd(day);
    let whole_seconds = (ticks / scale).floor();
    let sub = ticks - whole_seconds * scale;
    let ws = whole_seconds as i64;
    let (hh, mm, ss) = if ws >= 86_400 { (23, 59, 60 + (ws - 86_400)) } else { (ws / 3600, (ws / 60) % 60, ws % 60) };
    if decimals == 0 {
        format!("{y:04}-{m:02}-{d:02}T{hh:02}:{mm:02}:{ss:02}")
    } else {
        format!("{y:04}-{m:02}-{d:02}T{hh:02}:{mm:02}:{ss:02}.{:0w$}", sub as u64, w = decimals)
    }
}

/// JD of an instant as written in `format` for use in plots, `f64` (not for storage).
pub fn day_number_f64(t: &Instant, format: TimeFormat) -> f64 {
    match format {
        TimeFormat::Jd => t.jd_f64(),
        TimeFormat::Mjd | TimeFormat::Iso => t.mjd_f64(),
        TimeFormat::ReducedJd => t.mjd_f64() + (MJD_ZERO_JD - 2_400_000.0),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fraction_digits_parse_as_the_standard_library_parses_them() {
        // Reference: Rust's `str::parse::<f64>` (correctly rounded) on the same text, for
        // short and long digit strings (the long ones take the allocating path).
        for digits in ["5", "123456789", "99999999999999999999", &"31415926535".repeat(7)] {
            let expected: f64 = format!("0.{digits}").parse().unwrap();
            assert_eq!(parse_fraction_digits(digits), Some(expected), "{digits}");
        }
    }

    fn table() -> LeapSecondTable {
        LeapSecondTable::builtin()
    }

    #[test]
    fn negative_day_numbers_format_as_they_parse() {
        // Fuzz finding (time_text, base64 `LS4z`, "-.3"): read as −0.3, written as "-1.7…".
        assert_eq!(format_whole_and_fraction(-1, 0.7, 3), "-0.300");
        assert_eq!(format_whole_and_fraction(-2, 0.25, 2), "-1.75");
        assert_eq!(format_whole_and_fraction(-3, 0.0, 2), "-3.00");
        assert_eq!(format_whole_and_fraction(-1, 0.9999999, 3), "0.000");
        for text in ["-.3", "-0.3", "-1.7", "-12345.000000000001", "-0.5"] {
            let t = parse_time(text, TimeFormat::Mjd, TimeScale::Tt, &table()).unwrap();
            let written = format_time(&t, TimeFormat::Mjd);
            let back = parse_time(&written, TimeFormat::Mjd, TimeScale::Tt, &table()).unwrap();
            assert!(back.seconds_since(&t).abs() <= 1e-9, "{text} -> {written}");
            assert!(written.starts_with('-'), "{text} -> {written}");
        }
    }

    #[test]
    fn a_multi_byte_first_character_is_refused_not_a_panic() {
        // Fuzz findings (time_text, base64 `zo0A`; description_toml, base64 `2Yh+f393fg==`):
        // the two-part split sliced the text one byte in, inside the first character.
        for text in ["\u{38D}\0", "\u{648}~\u{7f}\u{7f}w~", "é+0.5", "\u{1F600} 1"] {
            for format in [TimeFormat::Jd, TimeFormat::Mjd, TimeFormat::ReducedJd] {
                let r = parse_time(text, format, TimeScale::Tt, &table());
                assert!(matches!(r, Err(TimeError::Unparseable { .. })), "{text:?} as {format:?}: {r:?}");
            }
        }
        // The split itself still works after a one-byte first character.
        let t = parse_time("2460000.5+0.25", TimeFormat::Jd, TimeScale::Tt, &table()).unwrap();
        assert_eq!((t.mjd_day(), t.seconds_of_day()), (60_000, 0.25 * SECONDS_PER_DAY));
    }

    #[test]
    fn day_numbers_keep_nanoseconds() {
        let t = parse_time("2459000.123456789012", TimeFormat::Jd, TimeScale::Tdb, &table()).unwrap();
        assert_eq!(t.mjd_day(), 58_999);
        let expected_s = (0.623456789012) * SECONDS_PER_DAY;
        assert!((t.seconds_of_day() - expected_s).abs() < 1e-9);
        assert_eq!(format_time(&t, TimeFormat::Jd), "2459000.12345678901200");
        let m = parse_time("58999.623456789012", TimeFormat::Mjd, TimeScale::Tdb, &table()).unwrap();
        assert!(m.seconds_since(&t).abs() < 1e-9);
        let r = parse_time("59000.123456789012", TimeFormat::ReducedJd, TimeScale::Tdb, &table()).unwrap();
        assert!(r.seconds_since(&t).abs() < 1e-9);
        let two = parse_time("2458999.5+0.623456789012", TimeFormat::Jd, TimeScale::Tdb, &table()).unwrap();
        assert!(two.seconds_since(&t).abs() < 1e-9);
        let two = parse_time("2459000.5 -0.376543210988", TimeFormat::Jd, TimeScale::Tdb, &table()).unwrap();
        assert!(two.seconds_since(&t).abs() < 1e-9, "{}", two.seconds_since(&t));
    }

    #[test]
    fn iso_round_trip_and_leap_second() {
        let t = parse_time("2016-12-31T23:59:60.123456789", TimeFormat::Iso, TimeScale::Utc, &table()).unwrap();
        assert_eq!(format_iso(&t, 9), "2016-12-31T23:59:60.123456789");
        let e = parse_time("2017-12-31T23:59:60.5", TimeFormat::Iso, TimeScale::Utc, &table()).unwrap_err();
        assert!(matches!(e, TimeError::NoLeapSecondThatDay { .. }));
        let t = parse_time("2024-02-29 06:07:08.5Z", TimeFormat::Iso, TimeScale::Utc, &table()).unwrap();
        assert_eq!(format_iso(&t, 3), "2024-02-29T06:07:08.500");
        assert!(parse_time("2023-02-29T00:00:00", TimeFormat::Iso, TimeScale::Utc, &table()).is_err());
        assert!(parse_time("2023-02-28T24:00:00", TimeFormat::Iso, TimeScale::Utc, &table()).is_err());
    }

    #[test]
    fn rejects_garbage() {
        for s in ["", "abc", "24.5.6", "nan", "1,5", "--3"] {
            assert!(parse_time(s, TimeFormat::Mjd, TimeScale::Tt, &table()).is_err(), "{s}");
        }
    }

    #[test]
    fn negative_split_decimal() {
        let d = parse_split_decimal("-0.25").unwrap();
        assert_eq!((d.whole, d.fraction), (-1, 0.75));
    }
}
