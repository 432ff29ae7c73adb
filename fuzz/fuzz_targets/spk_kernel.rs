//! Any bytes as a JPL SPK (DAF) kernel: refused or opened, never a panic; an opened kernel
//! answers position queries (inside and outside its span) without panic.
#![no_main]

use libfuzzer_sys::fuzz_target;
use skyclock::ephemeris::{Body, Ephemeris, SpkKernel};
use skyclock::time::{Instant, TimeScale};

fuzz_target!(|data: &[u8]| {
    let path = std::env::temp_dir().join(format!("skyclock-fuzz-spk-{}.bsp", std::process::id()));
    if std::fs::write(&path, data).is_err() {
        return;
    }
    let Ok(kernel) = SpkKernel::open(&path) else { return };
    let _ = kernel.segments();
    let _ = kernel.available_bodies();
    for k in 0..kernel.segments().len().min(8) {
        let _ = kernel.directory(k);
    }
    let _ = kernel.read_words(0, 16);
    let _ = kernel.read_words(u64::MAX / 2, 16);
    let (start, end) = kernel.span();
    let mid = start.add_seconds(end.seconds_since(&start) / 2.0);
    for t in [start, mid, end, Instant::from_jd_two_part(TimeScale::Tdb, 2_451_545.0, 0.0)] {
        for body in [Body::Earth, Body::Sun, Body::Moon, Body::Jupiter] {
            let _ = kernel.state(body, &t);
        }
    }
});
