//! Benchmark: barycentric correction of photon events with the embedded ephemeris.
//! Reports events per second of the interpolated corrector and of the exact per-event
//! corrector (the reference measured in the same run), their ratio, and the largest
//! difference between the two. Run: `cargo bench --bench arrival_events`.

use std::time::Instant as Clock;

use skyclock::arrival::interpolated::{DEFAULT_NODE_SPACING_S, InterpolatedCorrector};
use skyclock::arrival::{BarycentricCorrector, DelayOptions, ReferencePoint, Source};
use skyclock::ephemeris::embedded;
use skyclock::fit::random::SeededRng;
use skyclock::observer::{EarthOrientation, Observer, Site};
use skyclock::time::{Instant, LeapSecondTable, ScaleConverter, TimeScale};

fn main() {
    let events: usize = std::env::var("SKYCLOCK_BENCH_EVENTS").ok().and_then(|v| v.parse().ok()).unwrap_or(10_000_000);
    let site = Site::from_degrees("Invented Ridge", -105.123, 39.456, 2150.0).unwrap();
    let source = Source::fixed_degrees("invented pulsar", 127.418, -14.277).unwrap();
    let exact = BarycentricCorrector::new(
        embedded(),
        ScaleConverter::new(LeapSecondTable::builtin()),
        EarthOrientation::Ignored,
        source,
        DelayOptions::default(),
    );
    let observer = Observer::Site(site);
    let zero = Instant::from_mjd_parts(TimeScale::Tt, 60_370, 0.0);
    let span_s = 86_400.0 * 2.0;
    let mut rng = SeededRng::new(1);
    let mut times: Vec<f64> = (0..events).map(|_| rng.uniform() * span_s).collect();
    times.sort_by(f64::total_cmp);
    let original = times.clone();

    let interp = InterpolatedCorrector::new(&exact, observer.clone(), zero, DEFAULT_NODE_SPACING_S);
    let start = Clock::now();
    interp.correct_in_place(&mut times).unwrap();
    let fast_s = start.elapsed().as_secs_f64();
    let fast_rate = events as f64 / fast_s;

    let reference_n = 2_000.min(events);
    let step = events / reference_n;
    let start = Clock::now();
    let mut worst = 0.0_f64;
    for k in 0..reference_n {
        let i = k * step;
        let t = zero.add_seconds(original[i]);
        let out = exact.correct(&t, &observer, ReferencePoint::Observer).unwrap();
        let exact_s = out.bjd_tdb.seconds_since(&zero.relabel(TimeScale::Tdb));
        worst = worst.max((exact_s - times[i]).abs());
    }
    let exact_s = start.elapsed().as_secs_f64();
    let exact_rate = reference_n as f64 / exact_s;
    println!(
        "arrival_events: {events} topocentric events over 2 days, embedded DE440 pack, {} threads",
        rayon::current_num_threads()
    );
    println!("  interpolated: {fast_s:.3} s  → {fast_rate:.3e} events/s");
    println!("  exact (reference, {reference_n} events): {exact_rate:.3e} events/s");
    println!("  ratio interpolated/exact: {:.0}", fast_rate / exact_rate);
    println!("  largest |interpolated − exact|: {:.3e} s (includes f64 resolution of seconds since zero)", worst);
}
