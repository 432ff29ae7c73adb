//! Any text as a leap-second table and as an IERS finals2000A Earth-orientation table:
//! refused or read, never a panic; a table that was read answers queries without panic.
#![no_main]

use libfuzzer_sys::fuzz_target;
use skyclock::observer::EarthOrientationTable;
use skyclock::time::LeapSecondTable;

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else { return };
    if let Ok(leap) = LeapSecondTable::parse(text, "fuzz.list") {
        for mjd in [-1_000_000, 0, 41_317, 57_754, 60_000, leap.valid_until_mjd(), i64::MAX / 4] {
            let _ = leap.tai_minus_utc(mjd, 43_200.0);
            let _ = leap.utc_day_length_s(mjd);
            let _ = leap.rate_drift_per_day_s(mjd);
            let _ = leap.days_beyond_horizon(mjd);
        }
    }
    if let Ok(table) = EarthOrientationTable::parse(text, "fuzz.all") {
        for mjd in [f64::NAN, -1e300, 0.0, 41_684.0, 60_000.5, 1e300] {
            let _ = table.interpolate(mjd);
        }
    }
});
