//! Property tests (proptest): what the library writes it reads back, and what it reads
//! agrees with a reference library.
//!
//! - Times: every day-number format (JD, MJD, reduced JD) on every scale, formatted and
//!   parsed again, moves by at most 1 ns (the written resolution is 1e-14 day = 0.86 ns);
//!   ISO 8601 on every scale (UTC leap seconds included) by at most 1 ns (9 decimals of a
//!   second). ISO dates agree with SOFA `iauCal2jd` (sofars 0.6.3).
//! - Clock labels: every label (any case, `_`, `-` or space between kind and scale) reads
//!   as the clock whose text form is the lower-case label, and that text reads back to the
//!   same clock; anything else is refused.
//! - Angles: sexagesimal right ascensions and declinations agree with SOFA `iauTf2a` /
//!   `iauAf2a`; angles written by SOFA `iauA2tf` / `iauA2af` read back to their written
//!   resolution; fields and values out of range are refused (as SOFA refuses them).
//!
//! The runs use a fixed seed, so that every run (and every day) checks the same cases.

use proptest::prelude::*;
use proptest::test_runner::{Config, RngSeed};
use skyclock::arrival::table::ClockSpec;
use skyclock::arrival::{parse_declination_deg, parse_right_ascension_deg};
use skyclock::time::format::{MJD_ACCEPTED, format_iso};
use skyclock::time::{Instant, LeapSecondTable, TimeFormat, TimeScale, format_time, parse_time};

const SECONDS_PER_DAY: f64 = 86_400.0;
/// The resolution of the written forms and the bound of the round trips, s.
const ONE_NANOSECOND: f64 = 1e-9;

fn config() -> Config {
    Config { cases: 400, rng_seed: RngSeed::Fixed(20_261_203), failure_persistence: None, ..Config::default() }
}

fn any_scale() -> impl Strategy<Value = TimeScale> {
    prop::sample::select(TimeScale::ALL.to_vec())
}

fn day_number_format() -> impl Strategy<Value = TimeFormat> {
    prop::sample::select(vec![TimeFormat::Jd, TimeFormat::Mjd, TimeFormat::ReducedJd])
}

/// MJD days whose JD, MJD and reduced JD all lie inside the accepted span.
fn accepted_mjd_day() -> impl Strategy<Value = i64> {
    (MJD_ACCEPTED.0.ceil() as i64)..(MJD_ACCEPTED.1 as i64)
}

/// MJD of 0001-01-01 and of 9999-12-31 (SOFA `iauCal2jd`): the span of four-digit years.
fn iso_mjd_span() -> (i64, i64) {
    let first = sofars::cal::cal2jd(1, 1, 1).unwrap().1 as i64;
    let last = sofars::cal::cal2jd(9999, 12, 31).unwrap().1 as i64;
    (first, last)
}

/// Days that end with a leap second in the built-in table.
fn leap_second_days() -> Vec<i64> {
    let leap = LeapSecondTable::builtin();
    (41_317..=leap.valid_until_mjd()).filter(|&d| leap.utc_day_length_s(d).is_ok_and(|l| l > 86_400.5)).collect()
}

proptest! {
    #![proptest_config(config())]

    /// JD, MJD and reduced JD on every scale: format then parse moves by ≤ 1 ns, and the
    /// text read twice gives the same text (Common practice: 1 ns is the resolution the
    /// day numbers are written with, 14 decimals of a day.)
    #[test]
    fn day_numbers_read_back_within_a_nanosecond(
        day in accepted_mjd_day(),
        seconds in 0.0..SECONDS_PER_DAY,
        format in day_number_format(),
        scale in any_scale(),
    ) {
        let leap = LeapSecondTable::builtin();
        let t = Instant::from_mjd_parts(scale, day, seconds);
        let written = format_time(&t, format);
        let back = parse_time(&written, format, scale, &leap)
            .map_err(|e| TestCaseError::fail(format!("{written}: {e}")))?;
        prop_assert_eq!(back.scale(), scale);
        let moved = back.seconds_since(&t).abs();
        prop_assert!(moved <= ONE_NANOSECOND, "{:?} {:?} {} → {} moved {} s", scale, format, seconds, written, moved);
        prop_assert_eq!(format_time(&back, format), written);
    }

    /// A day number typed with up to 15 decimals, in one part or two (`a+b`, `a b`), reads
    /// as the instant the digits say: checked against the integer day and the fraction
    /// computed here from the digits.
    #[test]
    fn typed_day_numbers_read_as_their_digits(
        whole in 0_i64..2_900_000,
        digits in 0_u64..1_000_000_000_000_000,
        two_part in any::<bool>(),
        scale in any_scale(),
    ) {
        let leap = LeapSecondTable::builtin();
        let fraction_text = format!("{digits:015}");
        let text = if two_part { format!("{whole}.5+0.{fraction_text}") } else { format!("{whole}.{fraction_text}") };
        let t = parse_time(&text, TimeFormat::Mjd, scale, &leap)
            .map_err(|e| TestCaseError::fail(format!("{text}: {e}")))?;
        let fraction = digits as f64 / 1e15 + if two_part { 0.5 } else { 0.0 };
        let expected = Instant::from_mjd_parts(scale, whole, fraction * SECONDS_PER_DAY);
        prop_assert!(t.seconds_since(&expected).abs() <= ONE_NANOSECOND, "{text}: {t:?}");
    }

    /// ISO 8601 on every scale, years 0001–9999: format then parse moves by ≤ 1 ns (9
    /// decimals of a second), and the date is SOFA's (`iauCal2jd`, sofars 0.6.3).
    #[test]
    fn iso_times_read_back_within_a_nanosecond(
        day_pick in 0.0..1.0_f64,
        seconds in 0.0..SECONDS_PER_DAY,
        scale in any_scale(),
    ) {
        let leap = LeapSecondTable::builtin();
        let (first, last) = iso_mjd_span();
        // `last − 1`: 9999-12-31 24:00 would round to the five-digit year 10000.
        let day = first + ((last - 1 - first) as f64 * day_pick) as i64;
        let t = Instant::from_mjd_parts(scale, day, seconds);
        let written = format_time(&t, TimeFormat::Iso);
        let back = parse_time(&written, TimeFormat::Iso, scale, &leap)
            .map_err(|e| TestCaseError::fail(format!("{written}: {e}")))?;
        let moved = back.seconds_since(&t).abs();
        prop_assert!(moved <= ONE_NANOSECOND, "{:?} {} moved {} s", scale, written, moved);
        let year: i32 = written[0..4].parse().unwrap();
        let month: i32 = written[5..7].parse().unwrap();
        let date: i32 = written[8..10].parse().unwrap();
        let sofa_mjd = sofars::cal::cal2jd(year, month, date).unwrap().1 as i64;
        prop_assert_eq!(back.mjd_day(), sofa_mjd, "{}", written);
    }

    /// A UTC leap second (23:59:60.x on a day the built-in table ends with one) reads back
    /// within 1 ns and is written as 23:59:60 again; the same text on the day before, or on
    /// any other scale, is refused.
    #[test]
    fn utc_leap_seconds_read_back(pick in any::<prop::sample::Index>(), into_leap in 0.0..1.0_f64) {
        let leap = LeapSecondTable::builtin();
        let days = leap_second_days();
        let day = days[pick.index(days.len())];
        let t = Instant::from_utc_parts_unchecked(day, SECONDS_PER_DAY + into_leap * 0.999_999_999);
        let written = format_iso(&t, 9);
        prop_assert!(written.contains("T23:59:60."), "{}", written);
        let back = parse_time(&written, TimeFormat::Iso, TimeScale::Utc, &leap)
            .map_err(|e| TestCaseError::fail(format!("{written}: {e}")))?;
        prop_assert!(back.seconds_since(&t).abs() <= ONE_NANOSECOND, "{}", written);
        let day_before = format_iso(&Instant::from_utc_parts_unchecked(day - 1, t.seconds_of_day()), 9);
        prop_assert!(parse_time(&day_before, TimeFormat::Iso, TimeScale::Utc, &leap).is_err(), "{}", day_before);
        for scale in TimeScale::ALL.into_iter().filter(|&s| s != TimeScale::Utc) {
            prop_assert!(parse_time(&written, TimeFormat::Iso, scale, &leap).is_err(), "{} on {:?}", written, scale);
        }
    }

    /// Every clock label, in any case and with `_`, `-` or a space, reads as the clock whose
    /// text form is the lower-case `<kind>_<scale>`; that text reads back to the same clock.
    #[test]
    fn clock_labels_read_back_to_themselves(
        kind in prop::sample::select(vec!["jd", "mjd", "rjd", "iso", "hjd", "hmjd", "bjd", "bmjd"]),
        scale in any_scale(),
        joint in prop::sample::select(vec!["_", "-", " "]),
        upper in prop::collection::vec(any::<bool>(), 8),
        padding in prop::sample::select(vec!["", " ", "\t"]),
    ) {
        let typed: String = format!("{kind}{joint}{}", scale.name())
            .chars()
            .zip(upper.iter().cycle())
            .map(|(c, &u)| if u { c.to_ascii_uppercase() } else { c })
            .collect();
        let typed = format!("{padding}{typed}{padding}");
        let clock = ClockSpec::parse_label(&typed).map_err(|e| TestCaseError::fail(e.to_string()))?;
        prop_assert_eq!(clock.scale, scale);
        let text = clock.label();
        prop_assert_eq!(&text, &format!("{kind}_{}", scale.name()));
        prop_assert_eq!(ClockSpec::parse_label(&text), Ok(clock));
        prop_assert_eq!(text.parse::<ClockSpec>(), Ok(clock));
    }

    /// Text that is not `<kind>_<scale>` is refused, with the text in the message; near
    /// misses (unknown kinds such as `tjd`, scales such as `ut1` or `et`) included.
    #[test]
    fn other_clock_labels_are_refused(
        text in prop_oneof![
            "[a-z]{0,6}[_-]?[a-z]{0,4}",
            (
                prop::sample::select(vec!["jd", "mjd", "rjd", "iso", "hjd", "hmjd", "bjd", "bmjd", "jdd", "bj", "tjd", ""]),
                prop::sample::select(vec!["_", "-", "", "__"]),
                prop::sample::select(vec!["utc", "tai", "tt", "tdb", "tcb", "gps", "ut1", "tdt", "et", ""]),
            )
                .prop_map(|(k, j, s)| format!("{k}{j}{s}")),
        ]
    ) {
        let kinds = ["jd", "mjd", "rjd", "iso", "hjd", "hmjd", "bjd", "bmjd"];
        let normalised = text.replace('-', "_");
        let is_label = normalised
            .rsplit_once('_')
            .is_some_and(|(k, s)| kinds.contains(&k) && TimeScale::parse(s).is_some());
        match ClockSpec::parse_label(&text) {
            Ok(clock) => prop_assert!(is_label, "{} read as {:?}", text, clock),
            Err(e) => {
                prop_assert!(!is_label, "{} refused: {}", text, e);
                prop_assert!(e.to_string().contains(&format!("'{text}'")), "{}", e);
            }
        }
    }

    /// Sexagesimal right ascensions (`hh:mm:ss.s`, `hh mm ss.s`, `hhhmmmss.ss`) read as SOFA
    /// `iauTf2a` reads the same fields (sofars 0.6.3), to 1e-12° (rounding only).
    #[test]
    fn sexagesimal_right_ascensions_agree_with_sofa(
        hours in 0_i32..24,
        minutes in 0_i32..60,
        micro_seconds in 0_u64..60_000_000,
        notation in 0_usize..3,
    ) {
        let seconds_text = format!("{:02}.{:06}", micro_seconds / 1_000_000, micro_seconds % 1_000_000);
        let text = match notation {
            0 => format!("{hours:02}:{minutes:02}:{seconds_text}"),
            1 => format!("{hours} {minutes} {seconds_text}"),
            _ => format!("{hours}h{minutes:02}m{seconds_text}s"),
        };
        let ours = parse_right_ascension_deg(&text).map_err(|e| TestCaseError::fail(e.to_string()))?;
        let sofa = sofars::vm::tf2a('+', hours, minutes, micro_seconds as f64 / 1e6).unwrap().to_degrees();
        prop_assert!((ours - sofa).abs() <= 1e-12, "{}: {} vs SOFA {}", text, ours, sofa);
    }

    /// Sexagesimal declinations read as SOFA `iauAf2a` reads the same fields, sign included
    /// (also for −00° …), to 1e-12°.
    #[test]
    fn sexagesimal_declinations_agree_with_sofa(
        degrees in 0_i32..90,
        minutes in 0_i32..60,
        micro_arcsec in 0_u64..60_000_000,
        negative in any::<bool>(),
        notation in 0_usize..3,
    ) {
        let sign = if negative { '-' } else { '+' };
        let seconds_text = format!("{:02}.{:06}", micro_arcsec / 1_000_000, micro_arcsec % 1_000_000);
        let text = match notation {
            0 => format!("{sign}{degrees:02}:{minutes:02}:{seconds_text}"),
            1 => format!("{sign}{degrees} {minutes} {seconds_text}"),
            _ => format!("{sign}{degrees}d{minutes:02}m{seconds_text}s"),
        };
        let ours = parse_declination_deg(&text).map_err(|e| TestCaseError::fail(e.to_string()))?;
        let sofa = sofars::vm::af2a(sign, degrees, minutes, micro_arcsec as f64 / 1e6).unwrap().to_degrees();
        prop_assert!((ours - sofa).abs() <= 1e-12, "{}: {} vs SOFA {}", text, ours, sofa);
    }

    /// Degrees → sexagesimal (written by SOFA `iauA2tf` / `iauA2af` with 6 decimals) →
    /// degrees: back to within the written resolution (0.5e-6 s of time = 7.5e-6″ for right
    /// ascension, 0.5e-6″ for declination), plus 1e-12° of rounding. Decimal degrees
    /// written in Rust's shortest form read back exactly.
    #[test]
    fn degrees_read_back_through_sexagesimal(ra in 0.0..359.999_f64, dec in -90.0..=90.0_f64) {
        let (_, [h, m, s, f]) = sofars::vm::a2tf(6, ra.to_radians());
        let ra_text = format!("{h:02}:{m:02}:{s:02}.{f:06}");
        let ra_back = parse_right_ascension_deg(&ra_text).map_err(|e| TestCaseError::fail(e.to_string()))?;
        prop_assert!((ra_back - ra).abs() <= 0.5e-6 * 15.0 / 3600.0 + 1e-12, "{} → {} → {}", ra, ra_text, ra_back);

        let (sign, [d, m, s, f]) = sofars::vm::a2af(6, dec.to_radians());
        let dec_text = format!("{sign}{d:02}:{m:02}:{s:02}.{f:06}");
        let dec_back = parse_declination_deg(&dec_text).map_err(|e| TestCaseError::fail(e.to_string()))?;
        prop_assert!((dec_back - dec).abs() <= 0.5e-6 / 3600.0 + 1e-12, "{} → {} → {}", dec, dec_text, dec_back);

        prop_assert_eq!(parse_right_ascension_deg(&format!("{ra}")).unwrap(), ra);
        prop_assert_eq!(parse_declination_deg(&format!("{dec}")).unwrap(), dec);
    }

    /// Fields out of range are refused exactly where SOFA `iauTf2a` / `iauAf2a` refuse them
    /// (hours 0–23, minutes 0–59, seconds [0, 60)); declinations beyond ±90° and right
    /// ascensions outside [0°, 360°) are refused as text and as decimal degrees.
    #[test]
    fn out_of_range_angles_are_refused(
        a in 0_i32..400,
        b in 0_i32..100,
        c in 0.0..100.0_f64,
        value in -1000.0..1000.0_f64,
    ) {
        let text = format!("{a:02}:{b:02}:{c:09.6}");
        let c_written: f64 = format!("{c:.6}").parse().unwrap();
        let sofa_ok = sofars::vm::tf2a('+', a, b, c_written).is_ok();
        prop_assert_eq!(parse_right_ascension_deg(&text).is_ok(), sofa_ok, "RA {}", text);
        let fields_ok = sofars::vm::af2a('+', a, b, c_written).is_ok();
        let dec_ok = fields_ok && f64::from(a) + f64::from(b) / 60.0 + c_written / 3600.0 <= 90.0;
        prop_assert_eq!(parse_declination_deg(&text).is_ok(), dec_ok, "Dec {}", text);
        let decimal = format!("{value}");
        prop_assert_eq!(parse_right_ascension_deg(&decimal).is_ok(), (0.0..360.0).contains(&value), "RA {}", decimal);
        prop_assert_eq!(parse_declination_deg(&decimal).is_ok(), value.abs() <= 90.0, "Dec {}", decimal);
        prop_assert!(parse_right_ascension_deg(&format!("-{text}")).is_err(), "RA -{}", text);
    }
}

/// The format and scale names read back to themselves (every one, so no sampling needed).
#[test]
fn format_and_scale_names_read_back() {
    for format in [TimeFormat::Jd, TimeFormat::Mjd, TimeFormat::ReducedJd, TimeFormat::Iso] {
        assert_eq!(TimeFormat::parse(format.name()), Some(format));
        assert_eq!(TimeFormat::parse(&format.name().to_ascii_uppercase()), Some(format));
    }
    for scale in TimeScale::ALL {
        assert_eq!(TimeScale::parse(scale.name()), Some(scale));
        assert_eq!(TimeScale::parse(&scale.to_string()), Some(scale));
    }
    // The table holds the leap seconds of 1972–2016 (27 of them; IERS Bulletin C).
    assert_eq!(leap_second_days().len(), 27);
}
