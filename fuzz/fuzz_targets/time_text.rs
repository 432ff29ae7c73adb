//! Any text as a time, in every format and on every scale, and as a clock label: parsing
//! must refuse or succeed, never panic; what parses must format and convert without panic,
//! and a parsed day number must read back (formatted, then parsed) within 1 ns.
#![no_main]

use libfuzzer_sys::fuzz_target;
use skyclock::arrival::table::ClockSpec;
use skyclock::time::{LeapSecondTable, ScaleConverter, TimeFormat, TimeScale, format_time, parse_time};

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else { return };
    let _ = ClockSpec::parse_label(text);
    let _ = TimeFormat::parse(text);
    let _ = TimeScale::parse(text);
    let _ = skyclock::time::format::parse_split_decimal(text);
    let leap = LeapSecondTable::builtin();
    let converter = ScaleConverter::new(leap.clone());
    for format in [TimeFormat::Jd, TimeFormat::Mjd, TimeFormat::ReducedJd, TimeFormat::Iso] {
        for scale in TimeScale::ALL {
            let Ok(t) = parse_time(text, format, scale, &leap) else { continue };
            let written = format_time(&t, format);
            if format != TimeFormat::Iso && scale != TimeScale::Utc {
                let back = parse_time(&written, format, scale, &leap)
                    .unwrap_or_else(|e| panic!("'{text}' parsed, its text '{written}' did not: {e}"));
                let gap = back.seconds_since(&t).abs();
                assert!(gap <= 1e-9, "'{text}' → '{written}' moved by {gap} s");
            }
            for to in TimeScale::ALL {
                let _ = converter.convert(&t, to);
            }
        }
    }
});
