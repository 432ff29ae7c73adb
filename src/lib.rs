//! # skyclock
//!
//! Timing periodic astronomical sources: arrival times from any clock and any site are put
//! on one scale at the solar-system barycentre (BJD_TDB) ([`arrival`]); the search stage
//! finds periods in gappy photometry ([`periodogram`], [`fold`], [`frequencies`],
//! [`survey`]); the timing stage measures times of minimum ([`minima`]), builds O–C
//! diagrams and fits period changes and light-time companions ([`oc`]), predicts the next
//! events ([`predict`]) and fits pulsar timing models ([`pulsar`]). Figures come from
//! [`plot`], the HTML report from [`report`].
//!
//! The chain in one short example (an invented eclipsing binary timed at an invented site):
//!
//! ```
//! use skyclock::arrival::{BarycentricCorrector, DelayOptions, ReferencePoint, Source};
//! use skyclock::ephemeris::embedded;
//! use skyclock::observer::{EarthOrientation, Observer, Site};
//! use skyclock::oc::{CycleOptions, EventKind, FitOptions, ModelKind, ReferenceEphemeris, Timing, assign_cycles, fit_model};
//! use skyclock::time::{LeapSecondTable, ScaleConverter, TimeFormat, TimeScale, parse_time};
//!
//! // 1. Times of minimum read off a clock in UTC at a site → BJD_TDB.
//! let converter = ScaleConverter::new(LeapSecondTable::builtin());
//! let star = Source::fixed_degrees("invented binary", 78.138, 21.129).unwrap();
//! let corrector = BarycentricCorrector::new(embedded(), converter.clone(), EarthOrientation::Ignored, star, DelayOptions::default());
//! let site = Observer::Site(Site { name: "invented hill".into(), east_longitude_rad: (-105.1f64).to_radians(), latitude_rad: 39.4f64.to_radians(), height_m: 2150.0 });
//! let period_d = 0.837_123_45;
//! let mut timings = Vec::new();
//! for (row, cycle) in [0.0, 150.0, 410.0, 800.0, 1210.0, 1650.0].into_iter().enumerate() {
//!     // (here the clock readings are made up as T0 + P·E in UTC; real ones come from a table)
//!     let utc = parse_time("2459000.34567890", TimeFormat::Jd, TimeScale::Utc, converter.leap_seconds())
//!         .unwrap()
//!         .add_seconds(cycle * period_d * 86_400.0);
//!     let bjd_tdb = corrector.correct(&utc, &site, ReferencePoint::Observer).unwrap().bjd_tdb;
//!     timings.push(Timing { bjd_tdb, error_d: 3e-4, kind: EventKind::Primary, source: None, row: row + 1 });
//! }
//! // 2. Cycle numbers and O–C against a reference ephemeris, then a fitted model.
//! let reference = ReferenceEphemeris { epoch: timings[0].bjd_tdb, period_d, period_sigma_d: 1e-6 };
//! let series = assign_cycles(&timings, &reference, &CycleOptions::default()).unwrap();
//! let fit = fit_model(&series, ModelKind::Linear, &FitOptions::default()).unwrap();
//! let (period, sigma) = fit.derived_value("period_d").unwrap();
//! // The UTC readings kept the Earth's orbit in them; BJD_TDB takes it out, so the fitted
//! // period differs from the clock's spacing by the light-time drift (a few 1e-6 d here).
//! assert!((period - period_d).abs() < 1e-4 && sigma > 0.0);
//! ```

// Two clippy style lints are switched off on purpose, for the whole crate:
// - `neg_cmp_op_on_partial_ord`: `!(x > 0.0)` is how a NaN is refused together with the
//   values out of range; `x <= 0.0` would let NaN through.
// - `needless_range_loop`: numerical loops index several parallel arrays (times, values,
//   weights, design rows) by one counter, as the formulas they follow do.
// - `nonminimal_bool`: a refusal is written as the negation of what is accepted,
//   `!(x.is_finite() && x > 0.0)`, so it reads like the documented range.
// - `result_large_err`: errors carry the file, row, column and offending text; they are
//   returned once per run, never in an inner loop.
#![allow(
    clippy::neg_cmp_op_on_partial_ord,
    clippy::needless_range_loop,
    clippy::nonminimal_bool,
    clippy::result_large_err
)]
// Every public item and field is documented; clippy's `-D warnings` keeps it so.
#![warn(missing_docs)]

pub mod arrival;
pub mod config;
pub mod constants;
pub mod ephemeris;
pub mod observer;
pub mod table;
pub mod time;

pub mod fit;
pub mod fold;
pub mod frequencies;
pub mod light_curve;
pub mod minima;
pub mod oc;
pub mod periodogram;
pub mod plot;
pub mod predict;
pub mod pulsar;
pub mod report;
pub mod survey;
pub mod transit;
