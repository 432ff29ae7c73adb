//! The embedded default ephemeris: a compact Chebyshev pack fitted to JPL DE440, compiled
//! into the binary, so that barycentric corrections need no kernel file.
//!
//! Contents: barycentric positions of the Earth (399) and the Sun (10), and of the Jupiter
//! (5) and Saturn (6) system barycentres (for the Shapiro delay), 1950-01-01 to
//! 2101-01-01 TDB. Each body is one series per fixed-length interval (lengths and
//! degrees chosen per body by the generator to meet its error tolerance with the fewest
//! bytes); velocities are the derivative of the position series.
//! Accuracy against DE440 (measured by the generator over every interval, and by
//! `tests/ephemeris.rs` against jplephem): see `src/ephemeris/README.md`; the Earth and the
//! Sun are within a few metres (well under 10 ns of light time).
//!
//! # File format (little-endian), version 1
//! ```text
//! magic           16 bytes  "SKYCLOCK-EPHPACK"
//! version         u32       1
//! provenance_len  u32, provenance text (UTF-8)
//! start_mjd       i64       MJD (TDB) of the pack's first instant, at 0h
//! end_mjd         i64       MJD (TDB) of the pack's last instant, at 0h
//! bodies          u32
//! per body:
//!   naif_id       i32
//!   start_seconds f64       TDB seconds past J2000 of the first interval's start (whole days)
//!   interval_s    f64       interval length (whole days, even number of days)
//!   intervals     u32
//!   coefficients  u32       per component
//!   quantum_km    f64       coefficients are integers × quantum_km
//!   bits          u8 × 3·coefficients   width of each (component, order) in the bit stream
//!   data_len      u32, data: bit stream, for each interval, component x,y,z, order k:
//!                 zigzag-encoded integer in `bits[c·n + k]` bits, least significant first
//! ```
//! The pack is decoded once into `f64` arrays ([`embedded`] keeps it in a `OnceLock`), so an
//! evaluation is one Chebyshev sum with no allocation.

use std::sync::OnceLock;

use super::chebyshev;
use super::{Body, BodyState, Ephemeris, EphemerisError, describe_instant, j2000_seconds_two_part, require_tdb};
use crate::time::{Instant, TimeScale};

/// Magic bytes opening a pack file.
pub const PACK_MAGIC: &[u8; 16] = b"SKYCLOCK-EPHPACK";
/// The pack format version written and read here.
pub const PACK_VERSION: u32 = 1;

/// The pack compiled into skyclock (made by `examples/make_ephemeris_pack.rs` from DE440).
static EMBEDDED_PACK: &[u8] = include_bytes!("data/de440_1950_2100.skypack");

/// One body's series.
#[derive(Debug, Clone)]
pub struct PackedBody {
    /// NAIF code.
    pub naif_id: i32,
    /// Start of the first interval, TDB s past J2000 (a whole number of days).
    pub start_seconds: f64,
    /// Interval length, s.
    pub interval_seconds: f64,
    /// Number of intervals.
    pub intervals: usize,
    /// Coefficients per component.
    pub coefficients: usize,
    /// Quantum of the stored coefficients, km.
    pub quantum_km: f64,
    /// Coefficients, interval-major: `[interval][component][order]`, km.
    pub data: Vec<f64>,
}

impl PackedBody {
    /// Position (km) and velocity (km/s) at `(whole + rest)` TDB s past J2000.
    #[inline]
    fn evaluate(&self, whole: f64, rest: f64) -> BodyState {
        let offset = (whole - self.start_seconds) + rest;
        let raw = (offset / self.interval_seconds).floor();
        let i = if raw <= 0.0 { 0 } else { (raw as usize).min(self.intervals - 1) };
        let half = 0.5 * self.interval_seconds;
        // Interval midpoints are whole seconds: the difference below is exact to ~1e-11 s.
        let mid = self.start_seconds + (i as f64) * self.interval_seconds + half;
        let x = ((whole - mid) + rest) / half;
        let n = self.coefficients;
        let coefs = &self.data[i * 3 * n..(i + 1) * 3 * n];
        let (p, s) = chebyshev::evaluate3(coefs, n, x);
        BodyState { position_km: p, velocity_km_per_s: [s[0] / half, s[1] / half, s[2] / half] }
    }

    /// Stored size of this body's series in bytes (bit stream only).
    pub fn stored_bytes(&self, bits: &[u8]) -> usize {
        let per_interval: usize = bits.iter().map(|&b| b as usize).sum();
        (per_interval * self.intervals).div_ceil(8)
    }
}

/// A Chebyshev pack in memory. Implements [`Ephemeris`].
#[derive(Debug, Clone)]
pub struct EmbeddedEphemeris {
    provenance: String,
    start: Instant,
    end: Instant,
    bodies: Vec<PackedBody>,
    /// Index into `bodies` by [`Body`] order in [`Body::ALL`].
    lookup: [Option<usize>; 11],
}

/// The pack compiled into skyclock, parsed on first use.
pub fn embedded() -> &'static EmbeddedEphemeris {
    static PACK: OnceLock<EmbeddedEphemeris> = OnceLock::new();
    PACK.get_or_init(|| {
        EmbeddedEphemeris::from_bytes(EMBEDDED_PACK, "embedded")
            .expect("the embedded ephemeris pack is checked by the test suite")
    })
}

struct Reader<'a> {
    bytes: &'a [u8],
    pos: usize,
    name: &'a str,
}

impl<'a> Reader<'a> {
    fn take(&mut self, n: usize) -> Result<&'a [u8], EphemerisError> {
        if self.pos + n > self.bytes.len() {
            return Err(EphemerisError::BadPack {
                name: self.name.to_string(),
                message: format!(
                    "truncated: needed {n} bytes at offset {}, the pack has {}",
                    self.pos,
                    self.bytes.len()
                ),
            });
        }
        let s = &self.bytes[self.pos..self.pos + n];
        self.pos += n;
        Ok(s)
    }
    fn u32(&mut self) -> Result<u32, EphemerisError> {
        Ok(u32::from_le_bytes(self.take(4)?.try_into().unwrap()))
    }
    fn i32(&mut self) -> Result<i32, EphemerisError> {
        Ok(i32::from_le_bytes(self.take(4)?.try_into().unwrap()))
    }
    fn i64(&mut self) -> Result<i64, EphemerisError> {
        Ok(i64::from_le_bytes(self.take(8)?.try_into().unwrap()))
    }
    fn f64(&mut self) -> Result<f64, EphemerisError> {
        Ok(f64::from_le_bytes(self.take(8)?.try_into().unwrap()))
    }
}

/// One body's series to encode with [`encode_pack`].
#[derive(Debug, Clone)]
pub struct BodySeries {
    /// NAIF code.
    pub naif_id: i32,
    /// Start of the first interval, TDB s past J2000 (a whole number of days).
    pub start_seconds: f64,
    /// Interval length, s.
    pub interval_seconds: f64,
    /// Number of intervals.
    pub intervals: usize,
    /// Chebyshev coefficients per component and interval.
    pub coefficients: usize,
    /// Quantum the coefficients are rounded to when encoded, km.
    pub quantum_km: f64,
    /// `[interval][component][order]`, km (before quantisation).
    pub data: Vec<f64>,
}

fn zigzag(v: i64) -> u64 {
    ((v << 1) ^ (v >> 63)) as u64
}

fn unzigzag(u: u64) -> i64 {
    ((u >> 1) as i64) ^ -((u & 1) as i64)
}

/// Encodes a pack (format version 1; see the module doc). Returns the bytes.
pub fn encode_pack(provenance: &str, start_mjd: i64, end_mjd: i64, bodies: &[BodySeries]) -> Vec<u8> {
    let mut out = Vec::new();
    out.extend_from_slice(PACK_MAGIC);
    out.extend_from_slice(&PACK_VERSION.to_le_bytes());
    out.extend_from_slice(&(provenance.len() as u32).to_le_bytes());
    out.extend_from_slice(provenance.as_bytes());
    out.extend_from_slice(&start_mjd.to_le_bytes());
    out.extend_from_slice(&end_mjd.to_le_bytes());
    out.extend_from_slice(&(bodies.len() as u32).to_le_bytes());
    for b in bodies {
        let n = b.coefficients;
        let q: Vec<i64> = b.data.iter().map(|v| (v / b.quantum_km).round() as i64).collect();
        let mut bits = vec![0u8; 3 * n];
        for (j, w) in bits.iter_mut().enumerate() {
            let max = (0..b.intervals).map(|i| zigzag(q[i * 3 * n + j])).max().unwrap_or(0);
            *w = (64 - max.leading_zeros()) as u8;
        }
        out.extend_from_slice(&b.naif_id.to_le_bytes());
        out.extend_from_slice(&b.start_seconds.to_le_bytes());
        out.extend_from_slice(&b.interval_seconds.to_le_bytes());
        out.extend_from_slice(&(b.intervals as u32).to_le_bytes());
        out.extend_from_slice(&(n as u32).to_le_bytes());
        out.extend_from_slice(&b.quantum_km.to_le_bytes());
        out.extend_from_slice(&bits);
        let mut stream = Vec::new();
        let mut acc: u128 = 0;
        let mut filled = 0u32;
        for i in 0..b.intervals {
            for j in 0..3 * n {
                let w = bits[j] as u32;
                if w == 0 {
                    continue;
                }
                acc |= (zigzag(q[i * 3 * n + j]) as u128) << filled;
                filled += w;
                while filled >= 8 {
                    stream.push(acc as u8);
                    acc >>= 8;
                    filled -= 8;
                }
            }
        }
        if filled > 0 {
            stream.push(acc as u8);
        }
        out.extend_from_slice(&(stream.len() as u32).to_le_bytes());
        out.extend_from_slice(&stream);
    }
    out
}

impl EmbeddedEphemeris {
    /// Parses a pack (format version 1). `name` labels errors.
    pub fn from_bytes(bytes: &[u8], name: &str) -> Result<EmbeddedEphemeris, EphemerisError> {
        let bad = |message: String| EphemerisError::BadPack { name: name.to_string(), message };
        let mut r = Reader { bytes, pos: 0, name };
        if r.take(16)? != PACK_MAGIC {
            return Err(bad("not a skyclock ephemeris pack (magic bytes differ)".to_string()));
        }
        let version = r.u32()?;
        if version != PACK_VERSION {
            return Err(bad(format!("format version {version}; this skyclock reads version {PACK_VERSION}")));
        }
        let plen = r.u32()? as usize;
        let provenance = String::from_utf8_lossy(r.take(plen)?).to_string();
        let start_mjd = r.i64()?;
        let end_mjd = r.i64()?;
        let count = r.u32()? as usize;
        if count > 64 {
            return Err(bad(format!("{count} bodies")));
        }
        let mut bodies = Vec::with_capacity(count);
        let mut lookup = [None; 11];
        for _ in 0..count {
            let naif_id = r.i32()?;
            let start_seconds = r.f64()?;
            let interval_seconds = r.f64()?;
            let intervals = r.u32()? as usize;
            let n = r.u32()? as usize;
            let quantum_km = r.f64()?;
            if !(interval_seconds > 0.0 && quantum_km > 0.0 && start_seconds.is_finite())
                || intervals == 0
                || n == 0
                || n > chebyshev::MAX_COEFFICIENTS
                || intervals.saturating_mul(3 * n) > (1 << 28)
            {
                return Err(bad(format!("body {naif_id} has an invalid header")));
            }
            let bits = r.take(3 * n)?.to_vec();
            if bits.iter().any(|&b| b > 64) {
                return Err(bad(format!("body {naif_id}: a bit width exceeds 64")));
            }
            let data_len = r.u32()? as usize;
            let stream = r.take(data_len)?;
            let needed: usize = bits.iter().map(|&b| b as usize).sum::<usize>() * intervals;
            if needed.div_ceil(8) > stream.len() {
                return Err(bad(format!("body {naif_id}: coefficient stream truncated")));
            }
            let mut data = vec![0.0; intervals * 3 * n];
            let mut bitpos = 0usize;
            for i in 0..intervals {
                for j in 0..3 * n {
                    let w = bits[j] as usize;
                    let mut u: u64 = 0;
                    let mut got = 0usize;
                    while got < w {
                        let byte = stream[(bitpos + got) / 8] as u64;
                        let shift = (bitpos + got) % 8;
                        let take = (8 - shift).min(w - got);
                        let part = (byte >> shift) & ((1u64 << take) - 1);
                        u |= part << got;
                        got += take;
                    }
                    bitpos += w;
                    data[i * 3 * n + j] = unzigzag(u) as f64 * quantum_km;
                }
            }
            if let Some(body) = Body::from_naif_id(naif_id) {
                let k = Body::ALL.iter().position(|&b| b == body).unwrap();
                lookup[k] = Some(bodies.len());
            }
            bodies.push(PackedBody {
                naif_id,
                start_seconds,
                interval_seconds,
                intervals,
                coefficients: n,
                quantum_km,
                data,
            });
        }
        Ok(EmbeddedEphemeris {
            provenance,
            start: Instant::from_mjd_parts(TimeScale::Tdb, start_mjd, 0.0),
            end: Instant::from_mjd_parts(TimeScale::Tdb, end_mjd, 0.0),
            bodies,
            lookup,
        })
    }

    /// The series held, one per body.
    pub fn bodies(&self) -> &[PackedBody] {
        &self.bodies
    }

    /// Bodies this pack has.
    pub fn available_bodies(&self) -> Vec<Body> {
        Body::ALL.iter().zip(self.lookup).filter(|(_, l)| l.is_some()).map(|(b, _)| *b).collect()
    }

    /// Size in bytes of the pack compiled into skyclock.
    pub fn embedded_size_bytes() -> usize {
        EMBEDDED_PACK.len()
    }
}

impl Ephemeris for EmbeddedEphemeris {
    fn name(&self) -> String {
        self.provenance.clone()
    }

    fn span(&self) -> (Instant, Instant) {
        (self.start, self.end)
    }

    #[inline]
    fn state(&self, body: Body, tdb: &Instant) -> Result<BodyState, EphemerisError> {
        require_tdb(tdb)?;
        let k = Body::ALL.iter().position(|&b| b == body).unwrap_or(0);
        let Some(index) = self.lookup[k] else {
            let available: Vec<String> = self.available_bodies().iter().map(|b| b.to_string()).collect();
            return Err(EphemerisError::BodyNotAvailable {
                source_name: self.name(),
                body,
                available: available.join(", "),
            });
        };
        let before = tdb.seconds_since(&self.start);
        let after = tdb.seconds_since(&self.end);
        if !(before >= 0.0 && after <= 0.0) {
            return Err(EphemerisError::OutOfRange {
                source_name: self.name(),
                body,
                instant: describe_instant(tdb),
                span_start: describe_instant(&self.start),
                span_end: describe_instant(&self.end),
            });
        }
        let (whole, rest) = j2000_seconds_two_part(tdb);
        Ok(self.bodies[index].evaluate(whole, rest))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn encode_then_decode_round_trips_within_half_a_quantum() {
        let n = 5;
        let intervals = 3;
        let data: Vec<f64> = (0..intervals * 3 * n).map(|i| ((i * 7919) % 1000) as f64 * 1.234567 - 600.0).collect();
        let series = BodySeries {
            naif_id: 399,
            start_seconds: 0.0,
            interval_seconds: crate::constants::SECONDS_PER_DAY,
            intervals,
            coefficients: n,
            quantum_km: 1e-5,
            data: data.clone(),
        };
        let bytes = encode_pack("test pack", 51_544, 51_547, &[series]);
        let p = EmbeddedEphemeris::from_bytes(&bytes, "test").unwrap();
        for (a, b) in p.bodies()[0].data.iter().zip(&data) {
            assert!((a - b).abs() <= 0.5e-5 + 1e-12, "{a} {b}");
        }
        assert_eq!(p.available_bodies(), vec![Body::Earth]);
        assert!(matches!(
            p.state(Body::Sun, &Instant::from_mjd_parts(TimeScale::Tdb, 51_545, 0.0)),
            Err(EphemerisError::BodyNotAvailable { .. })
        ));
        // Truncated packs are refused, not panicked on.
        for cut in [0, 10, 40, bytes.len() - 1] {
            assert!(EmbeddedEphemeris::from_bytes(&bytes[..cut], "cut").is_err());
        }
    }

    #[test]
    fn embedded_pack_parses_and_refuses_outside_its_span() {
        let e = embedded();
        assert!(e.name().contains("DE440"), "{}", e.name());
        let (a, b) = e.span();
        assert!(a.mjd_day() <= 33_282 && b.mjd_day() >= 88_434);
        for body in [Body::Earth, Body::Sun, Body::Jupiter, Body::Saturn] {
            assert!(e.state(body, &a).is_ok() && e.state(body, &b).is_ok());
        }
        let late = b.add_seconds(1.0);
        let msg = e.state(Body::Earth, &late).unwrap_err().to_string();
        assert!(msg.contains("1950-01-01") && msg.contains("2101-01-01"), "{msg}");
        let tt = Instant::from_mjd_parts(TimeScale::Tt, 60_000, 0.0);
        assert!(matches!(e.state(Body::Earth, &tt), Err(EphemerisError::WrongTimeScale { .. })));
    }
}
