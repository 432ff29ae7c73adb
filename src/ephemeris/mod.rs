//! Solar-system ephemerides: barycentric positions and velocities of the Sun, the planets,
//! the Earth and the Moon at an instant of TDB.
//!
//! One trait, [`Ephemeris`], is implemented by two sources:
//!
//! * [`pack::EmbeddedEphemeris`] — the default, compiled into the binary: a compact
//!   Chebyshev pack fitted to JPL DE440 for the Earth, Sun, Jupiter and Saturn over
//!   1950–2100 TDB (Earth and Sun within a few metres of DE440). No file is needed;
//!   [`pack::embedded`] returns it. How the pack is made: `src/ephemeris/README.md` and
//!   `examples/make_ephemeris_pack.rs`.
//! * [`spk::SpkKernel`] — a reader for JPL SPK kernels (DAF container, segment types 2 and
//!   3, either byte order) such as `de440.bsp`, `de421.bsp` or the 3 GB `de441.bsp`: data
//!   are read with positioned reads, never the whole file.
//!
//! States are in the ICRF (the DE "J2000" frame, NAIF frame 1), centred on the solar-system
//! barycentre (SSB), in km and km/s. The argument is an [`Instant`] on the TDB scale
//! (`T_eph` of the DE series, which is TDB to the precision of its definition); any other
//! scale is refused with [`EphemerisError::WrongTimeScale`] — converting is the caller's job.

use crate::constants::SECONDS_PER_DAY;
pub mod chebyshev;
pub mod pack;
pub mod spk;

use std::fmt;
use std::path::PathBuf;
use std::sync::Arc;

use crate::time::{Instant, TimeScale};

pub use pack::{EmbeddedEphemeris, embedded};
pub use spk::SpkKernel;

pub use crate::constants::SPEED_OF_LIGHT_KM_PER_S;

// Gravitational parameters GM, km³/s², of the DE440 integration, as published by NAIF in
// the planetary constants kernel `gm_de440.tpc` (BODY10_GM, BODY5_GM, …); see also
// Park et al. (2021), AJ 161, 105, "The JPL Planetary and Lunar Ephemerides DE440 and
// DE441". Planet values are for the whole system (planet + satellites).

/// GM of the Sun, km³/s² (DE440, TDB-compatible).
pub const GM_SUN_KM3_PER_S2: f64 = 132_712_440_041.279_42;
/// GM of the Jupiter system (planet + satellites), km³/s² (DE440).
pub const GM_JUPITER_SYSTEM_KM3_PER_S2: f64 = 126_712_764.1;
/// GM of the Saturn system, km³/s² (DE440).
pub const GM_SATURN_SYSTEM_KM3_PER_S2: f64 = 37_940_584.841_800;
/// GM of the Uranus system, km³/s² (DE440).
pub const GM_URANUS_SYSTEM_KM3_PER_S2: f64 = 5_794_556.4;
/// GM of the Neptune system, km³/s² (DE440).
pub const GM_NEPTUNE_SYSTEM_KM3_PER_S2: f64 = 6_836_527.100_580;
/// GM of the Earth, km³/s² (DE440).
pub const GM_EARTH_KM3_PER_S2: f64 = 398_600.435_507;
/// GM of the Moon, km³/s² (DE440).
pub const GM_MOON_KM3_PER_S2: f64 = 4_902.800_118;

/// The bodies skyclock asks an ephemeris for. Planets are their system barycentres
/// (planet plus satellites), as in the DE kernels; the Earth and the Moon are the bodies
/// themselves.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Body {
    /// The Sun (NAIF 10).
    Sun,
    /// The Mercury system barycentre (NAIF 1).
    Mercury,
    /// The Venus system barycentre (NAIF 2).
    Venus,
    /// The Earth itself (NAIF 399).
    Earth,
    /// The Moon itself (NAIF 301).
    Moon,
    /// The Earth–Moon barycentre (NAIF 3).
    EarthMoonBarycentre,
    /// The Mars system barycentre (NAIF 4).
    Mars,
    /// The Jupiter system barycentre (NAIF 5).
    Jupiter,
    /// The Saturn system barycentre (NAIF 6).
    Saturn,
    /// The Uranus system barycentre (NAIF 7).
    Uranus,
    /// The Neptune system barycentre (NAIF 8).
    Neptune,
}

impl Body {
    /// Every body, in a fixed order.
    pub const ALL: [Body; 11] = [
        Body::Sun,
        Body::Mercury,
        Body::Venus,
        Body::Earth,
        Body::Moon,
        Body::EarthMoonBarycentre,
        Body::Mars,
        Body::Jupiter,
        Body::Saturn,
        Body::Uranus,
        Body::Neptune,
    ];

    /// NAIF integer code: planets' system barycentres 1–8, Sun 10, Earth 399, Moon 301,
    /// Earth–Moon barycentre 3.
    pub fn naif_id(self) -> i32 {
        match self {
            Body::Sun => 10,
            Body::Mercury => 1,
            Body::Venus => 2,
            Body::Earth => 399,
            Body::Moon => 301,
            Body::EarthMoonBarycentre => 3,
            Body::Mars => 4,
            Body::Jupiter => 5,
            Body::Saturn => 6,
            Body::Uranus => 7,
            Body::Neptune => 8,
        }
    }

    /// The body with NAIF code `id`, if it is one of ours.
    pub fn from_naif_id(id: i32) -> Option<Body> {
        Body::ALL.into_iter().find(|b| b.naif_id() == id)
    }

    /// English name, e.g. "Earth–Moon barycentre", "Jupiter barycentre".
    pub fn name(self) -> &'static str {
        match self {
            Body::Sun => "Sun",
            Body::Mercury => "Mercury barycentre",
            Body::Venus => "Venus barycentre",
            Body::Earth => "Earth",
            Body::Moon => "Moon",
            Body::EarthMoonBarycentre => "Earth-Moon barycentre",
            Body::Mars => "Mars barycentre",
            Body::Jupiter => "Jupiter barycentre",
            Body::Saturn => "Saturn barycentre",
            Body::Uranus => "Uranus barycentre",
            Body::Neptune => "Neptune barycentre",
        }
    }
}

impl fmt::Display for Body {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{} (NAIF {})", self.name(), self.naif_id())
    }
}

/// Position and velocity of a body relative to the solar-system barycentre, ICRF axes.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct BodyState {
    /// Position, km.
    pub position_km: [f64; 3],
    /// Velocity, km/s.
    pub velocity_km_per_s: [f64; 3],
}

/// What can go wrong when asking an ephemeris for a state or opening a kernel.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum EphemerisError {
    /// The instant lies outside what the source covers for that body.
    #[error("{source_name}: no data for {body} at {instant}; this source covers {span_start} to {span_end} for it")]
    OutOfRange {
        /// The ephemeris's provenance name.
        source_name: String,
        /// The body asked for.
        body: Body,
        /// The instant asked for, as date and JD on TDB.
        instant: String,
        /// First instant covered for the body, as date and JD on TDB.
        span_start: String,
        /// Last instant covered for the body, as date and JD on TDB.
        span_end: String,
    },
    /// The source has no chain of segments leading from `body` to the barycentre.
    #[error("{source_name}: no data for {body}; bodies available: {available}")]
    BodyNotAvailable {
        /// The ephemeris's provenance name.
        source_name: String,
        /// The body asked for.
        body: Body,
        /// The bodies the source has, comma-separated.
        available: String,
    },
    /// The instant is not on the TDB scale.
    #[error("ephemeris states need an instant on the TDB scale, got {got} ({instant}); convert to TDB first")]
    WrongTimeScale {
        /// The scale the instant was on.
        got: TimeScale,
        /// The instant, as date and JD on its scale.
        instant: String,
    },
    /// The file could not be opened or read. `reason` is the operating system's message
    /// (kept as text so that the error stays `Clone` and `PartialEq`).
    #[error("{path}: {message}: {reason}")]
    Io {
        /// The kernel file, as given.
        path: PathBuf,
        /// What was being read when it failed.
        message: String,
        /// The operating system's message.
        reason: String,
    },
    /// The file is not a DAF/SPK file, or is damaged or truncated.
    #[error("{path}: not a usable SPK kernel: {message}")]
    BadFile {
        /// The kernel file, as given.
        path: PathBuf,
        /// What is wrong with it.
        message: String,
    },
    /// A segment of a type this reader does not evaluate.
    #[error(
        "{path}: segment {segment_name:?} (target {target}, centre {center}) has SPK type {data_type}; supported types are 2 and 3 (Chebyshev)"
    )]
    UnsupportedSegmentType {
        /// The kernel file, as given.
        path: PathBuf,
        /// The segment's name in the kernel.
        segment_name: String,
        /// NAIF code of the body whose state the segment gives.
        target: i32,
        /// NAIF code of the centre it is relative to.
        center: i32,
        /// The segment's SPK data type.
        data_type: i32,
    },
    /// A segment in a reference frame other than ICRF/J2000 (NAIF frame 1).
    #[error(
        "{path}: segment {segment_name:?} (target {target}) is in NAIF frame {frame}; only frame 1 (J2000/ICRF) is supported"
    )]
    UnsupportedFrame {
        /// The kernel file, as given.
        path: PathBuf,
        /// The segment's name in the kernel.
        segment_name: String,
        /// NAIF code of the body whose state the segment gives.
        target: i32,
        /// The segment's NAIF frame code.
        frame: i32,
    },
    /// The embedded pack (or a pack given as bytes) is malformed.
    #[error("ephemeris pack {name}: {message}")]
    BadPack {
        /// The pack's label (`embedded` for the one compiled in).
        name: String,
        /// What is wrong with it.
        message: String,
    },
}

/// A source of barycentric states of solar-system bodies at TDB instants.
pub trait Ephemeris: Send + Sync {
    /// Provenance text recorded in every output, e.g.
    /// "DE440 via skyclock embedded Chebyshev pack v1 (1950–2100)" or
    /// "SPK kernel de440.bsp (DE440)".
    fn name(&self) -> String;
    /// First and last TDB instants covered (for the bodies this source has).
    fn span(&self) -> (Instant, Instant);
    /// Barycentric (SSB-centred, ICRF axes) position in km and velocity in km/s of `body` at
    /// `tdb`. The scale of `tdb` must be TDB; otherwise an error.
    fn state(&self, body: Body, tdb: &Instant) -> Result<BodyState, EphemerisError>;
}

/// Any reference to an ephemeris is one.
impl<T: Ephemeris + ?Sized> Ephemeris for &T {
    fn name(&self) -> String {
        (**self).name()
    }
    fn span(&self) -> (Instant, Instant) {
        (**self).span()
    }
    fn state(&self, body: Body, tdb: &Instant) -> Result<BodyState, EphemerisError> {
        (**self).state(body, tdb)
    }
}

/// An ephemeris owned jointly by everything that uses it (correctors, threads, other
/// languages' objects): cloning shares, never copies, the kernel or pack. Built from any
/// ephemeris with `SharedEphemeris::from` (for the built-in pack, `embedded().into()`).
#[derive(Clone)]
pub struct SharedEphemeris(Arc<dyn Ephemeris>);

impl SharedEphemeris {
    /// Shares an ephemeris already behind an `Arc`.
    pub fn from_arc(ephemeris: Arc<dyn Ephemeris>) -> SharedEphemeris {
        SharedEphemeris(ephemeris)
    }

    /// Shares a boxed ephemeris.
    pub fn from_box(ephemeris: Box<dyn Ephemeris>) -> SharedEphemeris {
        SharedEphemeris(Arc::from(ephemeris))
    }
}

impl<E: Ephemeris + 'static> From<E> for SharedEphemeris {
    fn from(ephemeris: E) -> SharedEphemeris {
        SharedEphemeris(Arc::new(ephemeris))
    }
}

impl std::ops::Deref for SharedEphemeris {
    type Target = dyn Ephemeris;
    fn deref(&self) -> &(dyn Ephemeris + 'static) {
        &*self.0
    }
}

impl fmt::Debug for SharedEphemeris {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "SharedEphemeris({})", self.0.name())
    }
}

/// Refuses instants not on TDB.
pub(crate) fn require_tdb(t: &Instant) -> Result<(), EphemerisError> {
    if t.scale() == TimeScale::Tdb {
        Ok(())
    } else {
        Err(EphemerisError::WrongTimeScale { got: t.scale(), instant: describe_instant(t) })
    }
}

/// Seconds past J2000.0 (TDB) split into an exact whole-day part and the rest:
/// `(whole_days_s, rest_s)` with `whole_days_s` an exact multiple of 86400 (exact in `f64`)
/// and `rest_s` in [-43200, 43200). Differences against whole-second epochs computed as
/// `(whole_days_s - epoch) + rest_s` keep ~1e-11 s precision.
pub(crate) fn j2000_seconds_two_part(t: &Instant) -> (f64, f64) {
    let whole = (t.mjd_day() - crate::time::instant::J2000_MJD_DAY) as f64 * SECONDS_PER_DAY;
    (whole, t.seconds_of_day() - 43_200.0)
}

/// Human-readable description of an instant: "2101-01-01 00:00:00.000 TDB (JD 2488434.500000)".
pub fn describe_instant(t: &Instant) -> String {
    format!("{} {} (JD {:.6})", crate::time::format::format_iso(t, 3).replacen('T', " ", 1), t.scale(), t.jd_f64())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn describe_instant_reads_as_date_and_jd() {
        let t = Instant::from_mjd_parts(TimeScale::Tdb, 51_544, 43_200.0);
        assert_eq!(describe_instant(&t), "2000-01-01 12:00:00.000 TDB (JD 2451545.000000)");
    }

    #[test]
    fn wrong_scale_is_refused() {
        let t = Instant::from_mjd_parts(TimeScale::Tt, 51_544, 0.0);
        let e = require_tdb(&t).unwrap_err();
        assert!(e.to_string().contains("TDB"), "{e}");
    }

    #[test]
    fn naif_ids_round_trip() {
        for b in Body::ALL {
            assert_eq!(Body::from_naif_id(b.naif_id()), Some(b));
        }
    }
}
