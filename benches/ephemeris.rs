//! Speed of barycentric state evaluation.
//!
//! `cargo bench --bench ephemeris` (release profile). Measures Earth states per second from
//! the embedded pack, for instants in time order (as photon events arrive: a new Chebyshev
//! interval only every few weeks) and in random order over 1950–2100, and, as the
//! reference measured in the same run, from the SPK reader on the sliced DE440 kernel in
//! tests/data (two segments chained, records cached per thread).

use std::hint::black_box;
use std::path::PathBuf;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use skyclock::ephemeris::{Body, Ephemeris, SpkKernel, embedded};
use skyclock::time::{Instant, TimeScale};

const N: usize = 10_000;

fn instants_in_order(start_mjd: i64, days: f64) -> Vec<Instant> {
    (0..N).map(|i| Instant::from_mjd_parts(TimeScale::Tdb, start_mjd, days * 86_400.0 * i as f64 / N as f64)).collect()
}

fn bench(c: &mut Criterion) {
    let pack = embedded();
    let kernel = SpkKernel::open(PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/data/de440_slice_le.bsp"))
        .expect("sliced kernel");
    let ordered = instants_in_order(60_305, 30.0);
    // Pseudo-random instants over the whole span of the pack (fixed LCG seed).
    let mut state = 0x2545_f491_4f6c_dd1du64;
    let random: Vec<Instant> = (0..N)
        .map(|_| {
            state = state.wrapping_mul(6_364_136_223_846_793_005).wrapping_add(1_442_695_040_888_963_407);
            let day = 33_282 + ((state >> 33) % 55_152) as i64;
            let sec = ((state >> 11) % 86_400_000) as f64 / 1000.0;
            Instant::from_mjd_parts(TimeScale::Tdb, day, sec)
        })
        .collect();

    let mut g = c.benchmark_group("earth_state");
    g.throughput(Throughput::Elements(N as u64));
    g.bench_function("spk_slice_in_time_order (reference)", |b| {
        b.iter(|| {
            for t in &ordered {
                black_box(kernel.state(Body::Earth, black_box(t)).unwrap());
            }
        })
    });
    g.bench_function("embedded_pack_in_time_order", |b| {
        b.iter(|| {
            for t in &ordered {
                black_box(pack.state(Body::Earth, black_box(t)).unwrap());
            }
        })
    });
    g.bench_function("embedded_pack_random_1950_2100", |b| {
        b.iter(|| {
            for t in &random {
                black_box(pack.state(Body::Earth, black_box(t)).unwrap());
            }
        })
    });
    g.bench_function("embedded_pack_sun_in_time_order", |b| {
        b.iter(|| {
            for t in &ordered {
                black_box(pack.state(Body::Sun, black_box(t)).unwrap());
            }
        })
    });
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
