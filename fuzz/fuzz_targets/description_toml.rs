//! Any text as a site/source description (the TOML of `--sites-file`/`--source-file`) and
//! as an epoch: refused or read, never a panic.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else { return };
    let _ = skyclock::config::parse_description(text, "fuzz.toml");
    let _ = skyclock::config::parse_epoch(text);
    let _ = skyclock::arrival::source::parse_right_ascension_deg(text);
    let _ = skyclock::arrival::source::parse_declination_deg(text);
});
