//! Leap seconds: TAI − UTC at any UTC instant from 1960 on.
//!
//! The built-in table holds the integer steps since 1972 as published in IERS Bulletin C
//! (TAI − UTC = 37 s since 2017-01-01). Between 1960-01-01 and 1972-01-01 UTC followed
//! TAI through published offsets and rates; that era is evaluated with SOFA `iauDat`
//! (via sofars), which carries the rate formula. UTC before 1960 is refused.
//! A newer table can be loaded from the IERS files `Leap_Second.dat` or `leap-seconds.list`.

use crate::constants::SECONDS_PER_DAY;
use std::path::Path;

use super::calendar::{civil_from_mjd, mjd_from_civil};
use super::error::TimeError;

/// MJD of 1960-01-01, the start of UTC as a defined scale.
pub const UTC_START_MJD: i64 = 36_934;
/// MJD of 1972-01-01, from which TAI − UTC is an integer number of seconds.
pub const INTEGER_STEPS_START_MJD: i64 = 41_317;

/// Built-in integer steps: (MJD from which the value holds, TAI − UTC in s).
/// Source: IERS Bulletin C (values as in SOFA `iauDat` 2017 release and IERS `Leap_Second.dat`).
const BUILTIN_STEPS: &[(i64, f64)] = &[
    (41_317, 10.0), // 1972-01-01
    (41_499, 11.0), // 1972-07-01
    (41_683, 12.0), // 1973-01-01
    (42_048, 13.0), // 1974-01-01
    (42_413, 14.0), // 1975-01-01
    (42_778, 15.0), // 1976-01-01
    (43_144, 16.0), // 1977-01-01
    (43_509, 17.0), // 1978-01-01
    (43_874, 18.0), // 1979-01-01
    (44_239, 19.0), // 1980-01-01
    (44_786, 20.0), // 1981-07-01
    (45_151, 21.0), // 1982-07-01
    (45_516, 22.0), // 1983-07-01
    (46_247, 23.0), // 1985-07-01
    (47_161, 24.0), // 1988-01-01
    (47_892, 25.0), // 1990-01-01
    (48_257, 26.0), // 1991-01-01
    (48_804, 27.0), // 1992-07-01
    (49_169, 28.0), // 1993-07-01
    (49_534, 29.0), // 1994-07-01
    (50_083, 30.0), // 1996-01-01
    (50_630, 31.0), // 1997-07-01
    (51_179, 32.0), // 1999-01-01
    (53_736, 33.0), // 2006-01-01
    (54_832, 34.0), // 2009-01-01
    (56_109, 35.0), // 2012-07-01
    (57_204, 36.0), // 2015-07-01
    (57_754, 37.0), // 2017-01-01
];

/// Validity horizon of the built-in table: 2026-06-28 (MJD 61219), the expiry announced
/// with IERS Bulletin C 70 (July 2025, "no leap second at the end of December 2025";
/// from memory). UTC instants later than this get a staleness warning.
const BUILTIN_VALID_UNTIL_MJD: i64 = 61_219;

/// A table of TAI − UTC steps with its validity horizon and provenance.
#[derive(Debug, Clone, PartialEq)]
pub struct LeapSecondTable {
    steps: Vec<(i64, f64)>,
    valid_until_mjd: i64,
    source: String,
}

impl LeapSecondTable {
    /// The table compiled into skyclock (IERS Bulletin C up to TAI − UTC = 37 s).
    pub fn builtin() -> LeapSecondTable {
        LeapSecondTable {
            steps: BUILTIN_STEPS.to_vec(),
            valid_until_mjd: BUILTIN_VALID_UNTIL_MJD,
            source: "built-in (IERS Bulletin C, TAI-UTC = 37 s since 2017-01-01, valid until 2026-06-28)".to_string(),
        }
    }

    /// Loads a table from an IERS `Leap_Second.dat` file (columns: MJD, day, month, year,
    /// TAI−UTC; `#  File expires on dd Month yyyy` header) or an IERS/NIST
    /// `leap-seconds.list` file (NTP seconds since 1900, TAI−UTC; `#@` expiry line).
    /// Only the steps from 1972 on are taken; earlier UTC uses the rate formula.
    pub fn from_file(path: &Path) -> Result<LeapSecondTable, TimeError> {
        let text = std::fs::read_to_string(path).map_err(|e| TimeError::LeapFile {
            file: path.display().to_string(),
            line: 0,
            message: format!("cannot read: {e}"),
        })?;
        Self::parse(&text, &path.display().to_string())
    }

    /// Parses the text of a leap-second file (see [`LeapSecondTable::from_file`]);
    /// `name` is used in messages and provenance.
    pub fn parse(text: &str, name: &str) -> Result<LeapSecondTable, TimeError> {
        let err = |line: usize, message: String| TimeError::LeapFile { file: name.to_string(), line, message };
        let mut steps = Vec::new();
        let mut expiry_mjd: Option<i64> = None;
        // NTP epoch 1900-01-01 is MJD 15020.
        const NTP_EPOCH_MJD: i64 = 15_020;
        for (i, raw) in text.lines().enumerate() {
            let line_no = i + 1;
            let line = raw.trim();
            if line.is_empty() {
                continue;
            }
            if let Some(rest) = line.strip_prefix("#@") {
                let ntp: i64 = rest.trim().parse().map_err(|_| {
                    err(line_no, format!("expiry line '#@' needs NTP seconds, found '{}'", rest.trim()))
                })?;
                let mjd = NTP_EPOCH_MJD + ntp.div_euclid(86_400);
                check_entry_mjd(mjd as f64, |m| err(line_no, format!("expiry line '#@': {m}")))?;
                expiry_mjd = Some(mjd);
                continue;
            }
            if line.starts_with('#') {
                if let Some(pos) = line.find("File expires on") {
                    expiry_mjd = parse_expiry_date(&line[pos + "File expires on".len()..]);
                    if let Some(mjd) = expiry_mjd {
                        check_entry_mjd(mjd as f64, |m| err(line_no, format!("expiry date: {m}")))?;
                    }
                }
                continue;
            }
            let fields: Vec<&str> = line.split_whitespace().collect();
            let parsed = match fields.len() {
                // leap-seconds.list: NTP seconds, TAI-UTC, optional comment
                n if n >= 2 && fields[0].len() >= 9 && fields.get(2).is_none_or(|f| f.starts_with('#')) => {
                    let ntp: i64 =
                        fields[0].parse().map_err(|_| err(line_no, format!("'{}' is not NTP seconds", fields[0])))?;
                    let dat: f64 = fields[1]
                        .parse()
                        .map_err(|_| err(line_no, format!("'{}' is not TAI-UTC seconds", fields[1])))?;
                    (NTP_EPOCH_MJD + ntp.div_euclid(86_400), dat)
                }
                // Leap_Second.dat: MJD day month year TAI-UTC
                n if n >= 5 => {
                    let mjd: f64 =
                        fields[0].parse().map_err(|_| err(line_no, format!("'{}' is not an MJD", fields[0])))?;
                    let dat: f64 = fields[4]
                        .parse()
                        .map_err(|_| err(line_no, format!("'{}' is not TAI-UTC seconds", fields[4])))?;
                    check_entry_mjd(mjd, |m| err(line_no, m))?;
                    (mjd.round() as i64, dat)
                }
                _ => {
                    return Err(err(
                        line_no,
                        format!("expected 'MJD day month year TAI-UTC' or 'NTP-seconds TAI-UTC', found '{line}'"),
                    ));
                }
            };
            check_entry_mjd(parsed.0 as f64, |m| err(line_no, m))?;
            if !(parsed.1.is_finite() && parsed.1.abs() <= MAX_ABS_TAI_MINUS_UTC_S) {
                return Err(err(
                    line_no,
                    format!("TAI-UTC of {} s is outside -1000…1000 s; is this a leap-second table?", parsed.1),
                ));
            }
            if parsed.0 >= INTEGER_STEPS_START_MJD {
                steps.push(parsed);
            }
        }
        if steps.is_empty() {
            return Err(err(0, "no leap-second entries from 1972 on were found".to_string()));
        }
        for w in steps.windows(2) {
            if w[1].0 <= w[0].0 {
                return Err(err(0, format!("entries are not in date order at MJD {}", w[1].0)));
            }
        }
        let last = steps[steps.len() - 1].0;
        let valid_until_mjd = expiry_mjd.unwrap_or(last);
        Ok(LeapSecondTable { steps, valid_until_mjd, source: format!("{name} (valid until MJD {valid_until_mjd})") })
    }

    /// Provenance text for outputs.
    pub fn source(&self) -> &str {
        &self.source
    }

    /// MJD up to which the table is known to be complete.
    pub fn valid_until_mjd(&self) -> i64 {
        self.valid_until_mjd
    }

    /// Days by which a UTC day lies beyond the table's validity horizon (`None` if within).
    pub fn days_beyond_horizon(&self, mjd_day: i64) -> Option<i64> {
        (mjd_day > self.valid_until_mjd).then(|| mjd_day - self.valid_until_mjd)
    }

    /// TAI − UTC in seconds at the start (0h UTC) of UTC day `mjd_day`, plus the drift of the
    /// 1961–1971 rate formula at `seconds_of_day`. Errors for UTC before 1960.
    /// Accuracy: exact as published (IERS Bulletin C; SOFA `iauDat` for 1960–1971).
    pub fn tai_minus_utc(&self, mjd_day: i64, seconds_of_day: f64) -> Result<f64, TimeError> {
        if mjd_day < UTC_START_MJD {
            return Err(TimeError::UtcBefore1960 { mjd_day });
        }
        if mjd_day < INTEGER_STEPS_START_MJD {
            let (y, m, d) = civil_from_mjd(mjd_day);
            let fd = (seconds_of_day / SECONDS_PER_DAY).clamp(0.0, 1.0);
            return sofars::ts::dat(y as i32, m as i32, d as i32, fd).map_err(|_| TimeError::UtcBefore1960 { mjd_day });
        }
        let idx = self.steps.partition_point(|&(mjd, _)| mjd <= mjd_day);
        Ok(if idx == 0 { self.steps[0].1 } else { self.steps[idx - 1].1 })
    }

    /// Length of UTC day `mjd_day` in UTC seconds: 86400 plus the leap second (if any)
    /// inserted at its end. From 1972 on this is 86400 ± 1; before, the small steps of the
    /// rate era count as well.
    pub fn utc_day_length_s(&self, mjd_day: i64) -> Result<f64, TimeError> {
        let today = self.tai_minus_utc(mjd_day, 0.0)?;
        let tomorrow = self.tai_minus_utc(mjd_day.saturating_add(1), 0.0)?;
        let drift = self.rate_drift_per_day_s(mjd_day)?;
        Ok(SECONDS_PER_DAY + (tomorrow - today - drift))
    }

    /// Change of TAI − UTC over one UTC day due to the 1961–1971 rate formula (0 from 1972).
    pub fn rate_drift_per_day_s(&self, mjd_day: i64) -> Result<f64, TimeError> {
        if mjd_day >= INTEGER_STEPS_START_MJD {
            return Ok(0.0);
        }
        let start = self.tai_minus_utc(mjd_day, 0.0)?;
        let noon = self.tai_minus_utc(mjd_day, 43_200.0)?;
        Ok(2.0 * (noon - start))
    }
}

/// Largest |TAI − UTC| a table entry may hold, s (37 s in 2017; common practice: any
/// plausible future of leap seconds stays far below this).
const MAX_ABS_TAI_MINUS_UTC_S: f64 = 1000.0;

/// An entry's (or expiry's) MJD must be a day number from JD 0 to the end of AD 9999, the
/// span of every time this program reads (`time::format::MJD_ACCEPTED`). `refuse` turns the
/// description of the problem into the error of the line being read.
fn check_entry_mjd(mjd: f64, refuse: impl FnOnce(String) -> TimeError) -> Result<(), TimeError> {
    let (low, high) = super::format::MJD_ACCEPTED;
    if mjd.is_finite() && (low..=high).contains(&mjd) {
        Ok(())
    } else {
        Err(refuse(format!("MJD {mjd} is outside {low}…{high} (JD 0 to the end of AD 9999)")))
    }
}

fn parse_expiry_date(text: &str) -> Option<i64> {
    // "28 June 2026"
    let parts: Vec<&str> = text.split_whitespace().collect();
    if parts.len() < 3 {
        return None;
    }
    let day: u32 = parts[0].parse().ok()?;
    let month = month_from_name(parts[1])?;
    let year: i64 = parts[2].trim_end_matches('.').parse().ok()?;
    mjd_from_civil(year, month, day)
}

fn month_from_name(name: &str) -> Option<u32> {
    const NAMES: [&str; 12] = ["jan", "feb", "mar", "apr", "may", "jun", "jul", "aug", "sep", "oct", "nov", "dec"];
    let lower = name.to_ascii_lowercase();
    NAMES.iter().position(|n| lower.starts_with(n)).map(|i| i as u32 + 1)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Fuzz finding (reference_tables): an entry with the MJD 1.4e26 was read as `i64::MAX`
    /// (saturating cast), made the validity horizon `i64::MAX`, and the day length there
    /// overflowed `mjd + 1`. Entries, expiry lines and TAI − UTC values are now range-checked
    /// with their line, and the day length saturates at the end of the `i64` days.
    #[test]
    fn absurd_entries_are_refused_with_their_line() {
        let cases = [
            ("41317 1 1 1972 10\n0142100000000000000000000000 @87 0.00002710  2.6057 0.1916\n", 2, "MJD"),
            ("41317 1 1 1972 10\n41499 1 7 1972 1e300\n", 2, "TAI-UTC"),
            ("41317 1 1 1972 nan\n", 1, "TAI-UTC"),
            ("#@ 9000000000000000000\n2272060800 10\n", 1, "expiry"),
            ("# File expires on 28 June 99999999999999999\n2272060800 10\n", 0, ""),
        ];
        for (text, line, word) in cases {
            match LeapSecondTable::parse(text, "odd.list") {
                Err(e) => {
                    let message = e.to_string();
                    assert!(message.contains("odd.list") && message.contains(word), "{message}");
                    assert!(matches!(e, TimeError::LeapFile { line: l, .. } if l == line), "{message}");
                }
                // An expiry date that is no calendar date is ignored, as before.
                Ok(t) => assert_eq!((line, t.valid_until_mjd()), (0, 41_317), "{text}"),
            }
        }
        let t = LeapSecondTable::builtin();
        assert_eq!(t.utc_day_length_s(i64::MAX).unwrap(), 86_400.0);
    }

    #[test]
    fn bulletin_c_values_at_dated_instants() {
        // IERS Bulletin C: TAI-UTC = 10 s from 1972-01-01, 32 s from 1999-01-01,
        // 37 s from 2017-01-01 (common practice; also SOFA iauDat).
        let t = LeapSecondTable::builtin();
        assert_eq!(t.tai_minus_utc(41_317, 0.0).unwrap(), 10.0);
        assert_eq!(t.tai_minus_utc(51_179, 0.0).unwrap(), 32.0);
        assert_eq!(t.tai_minus_utc(51_178, 86_000.0).unwrap(), 31.0);
        assert_eq!(t.tai_minus_utc(57_754, 0.0).unwrap(), 37.0);
        assert_eq!(t.tai_minus_utc(61_000, 0.0).unwrap(), 37.0);
    }

    #[test]
    fn leap_days_have_86401_seconds() {
        let t = LeapSecondTable::builtin();
        assert_eq!(t.utc_day_length_s(57_753).unwrap(), 86_401.0); // 2016-12-31
        assert_eq!(t.utc_day_length_s(57_754).unwrap(), SECONDS_PER_DAY);
        assert_eq!(t.utc_day_length_s(41_498).unwrap(), 86_401.0); // 1972-06-30
    }

    #[test]
    fn rate_era_matches_sofa_formula() {
        // SOFA iauDat example: 1965-01-01 uses 3.5401300 + (MJD - 38761) * 0.001296 s.
        let t = LeapSecondTable::builtin();
        let mjd = mjd_from_civil(1965, 1, 1).unwrap();
        let expected = 3.540_130_0 + ((mjd as f64) - 38_761.0) * 0.001_296;
        assert!((t.tai_minus_utc(mjd, 0.0).unwrap() - expected).abs() < 1e-12);
    }

    #[test]
    fn refuses_utc_before_1960() {
        let t = LeapSecondTable::builtin();
        assert!(matches!(t.tai_minus_utc(36_933, 0.0), Err(TimeError::UtcBefore1960 { .. })));
    }

    #[test]
    fn reads_both_iers_file_layouts() {
        let dat =
            "#  File expires on 28 June 2027\n    41317.0    1  1 1972       10\n    57754.0    1  1 2017       37\n";
        let t = LeapSecondTable::parse(dat, "Leap_Second.dat").unwrap();
        assert_eq!(t.valid_until_mjd(), mjd_from_civil(2027, 6, 28).unwrap());
        assert_eq!(t.tai_minus_utc(58_000, 0.0).unwrap(), 37.0);
        // NTP seconds for 1972-01-01 = 2272060800 and for 2017-01-01 = 3692217600 (IERS file).
        let list = "#@\t3960057600\n2272060800\t10\t# 1 Jan 1972\n3692217600\t37\t# 1 Jan 2017\n";
        let t = LeapSecondTable::parse(list, "leap-seconds.list").unwrap();
        assert_eq!(t.tai_minus_utc(57_754, 1.0).unwrap(), 37.0);
        assert_eq!(t.tai_minus_utc(57_753, 1.0).unwrap(), 10.0);
        // 3960057600 NTP s = 2025-06-28 (MJD 60854), the expiry printed in that IERS file.
        assert_eq!(t.valid_until_mjd(), 60_854);
    }

    #[test]
    fn bad_file_names_the_line() {
        let e = LeapSecondTable::parse("41317.0 1 1 1972 ten\n", "x.dat").unwrap_err();
        assert!(e.to_string().contains("x.dat") && e.to_string().contains("line 1"), "{e}");
    }
}
