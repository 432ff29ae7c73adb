//! The proleptic Gregorian calendar ↔ Modified Julian Day number.
//!
//! Integer arithmetic after Fliegel & Van Flandern (1968, Comm. ACM 11, 657), in the form
//! of days-from-civil counting from 0000-03-01; exact for any year representable in `i64`.
//! Checked against Meeus, *Astronomical Algorithms* (2nd ed., 1998) ch. 7 worked examples
//! and SOFA `cal2jd` (via sofars).

/// MJD day number of the civil date `year-month-day` (proleptic Gregorian).
/// Returns `None` for a month outside 1–12, a day outside the month, or a year beyond
/// ±1e9 (far past any use; it keeps the day arithmetic far from `i64` overflow).
pub fn mjd_from_civil(year: i64, month: u32, day: u32) -> Option<i64> {
    if year.unsigned_abs() > 1_000_000_000 || !(1..=12).contains(&month) || day < 1 || day > days_in_month(year, month)
    {
        return None;
    }
    Some(days_from_civil(year, month, day) - 678_941)
}

/// The civil date `(year, month, day)` of an MJD day number (proleptic Gregorian).
pub fn civil_from_mjd(mjd_day: i64) -> (i64, u32, u32) {
    civil_from_days(mjd_day + 678_941)
}

/// Number of days in `month` of `year` (Gregorian leap-year rule).
pub fn days_in_month(year: i64, month: u32) -> u32 {
    match month {
        1 | 3 | 5 | 7 | 8 | 10 | 12 => 31,
        4 | 6 | 9 | 11 => 30,
        2 if is_leap_year(year) => 29,
        2 => 28,
        _ => 0,
    }
}

/// Gregorian leap year: divisible by 4, except centuries not divisible by 400.
pub fn is_leap_year(year: i64) -> bool {
    (year % 4 == 0 && year % 100 != 0) || year % 400 == 0
}

/// Days since 0000-03-01 shifted so that 1858-11-17 (MJD 0) is day 678941.
fn days_from_civil(year: i64, month: u32, day: u32) -> i64 {
    let y = if month <= 2 { year - 1 } else { year };
    let era = y.div_euclid(400);
    let yoe = y - era * 400;
    let m = month as i64;
    let doy = (153 * (if m > 2 { m - 3 } else { m + 9 }) + 2) / 5 + day as i64 - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    era * 146_097 + doe + 60
}

fn civil_from_days(days: i64) -> (i64, u32, u32) {
    let z = days - 60;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let y = yoe + era * 400;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let m = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    (if m <= 2 { y + 1 } else { y }, m, d)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn meeus_chapter_7_examples() {
        // Meeus, Astronomical Algorithms 2nd ed., ch. 7 (from memory):
        // Example 7.a: 1957 October 4.81 = JD 2436116.31; 2000 Jan 1.5 = JD 2451545.0;
        // 1987 Jan 27.0 = JD 2446822.5; 1988 Jun 19.5 = JD 2447332.0;
        // 1900 Jan 1.0 = JD 2415020.5; 1600 Jan 1.0 = JD 2305447.5.
        let cases = [
            (1957, 10, 4, 2_436_115.5),
            (2000, 1, 1, 2_451_544.5),
            (1987, 1, 27, 2_446_822.5),
            (1988, 6, 19, 2_447_331.5),
            (1900, 1, 1, 2_415_020.5),
            (1600, 1, 1, 2_305_447.5),
            (1999, 1, 1, 2_451_179.5),
        ];
        for (y, m, d, jd) in cases {
            let mjd = mjd_from_civil(y, m, d).unwrap();
            assert_eq!(mjd as f64 + 2_400_000.5, jd, "{y}-{m}-{d}");
            assert_eq!(civil_from_mjd(mjd), (y, m, d));
        }
    }

    #[test]
    fn agrees_with_sofa_cal2jd_every_day_1800_to_2200() {
        // SOFA iauCal2jd (sofars 0.6.3) as the reference library.
        let start = mjd_from_civil(1800, 1, 1).unwrap();
        let end = mjd_from_civil(2200, 12, 31).unwrap();
        for mjd in start..=end {
            let (y, m, d) = civil_from_mjd(mjd);
            let (_, sofa_mjd) = sofars::cal::cal2jd(y as i32, m as i32, d as i32).unwrap();
            assert_eq!(sofa_mjd, mjd as f64);
        }
    }

    #[test]
    fn rejects_impossible_dates() {
        assert!(mjd_from_civil(2023, 2, 29).is_none());
        assert!(mjd_from_civil(2024, 2, 29).is_some());
        assert!(mjd_from_civil(2024, 13, 1).is_none());
        assert!(mjd_from_civil(2024, 4, 31).is_none());
        assert!(mjd_from_civil(1900, 2, 29).is_none());
        assert!(mjd_from_civil(2000, 2, 29).is_some());
    }
}
