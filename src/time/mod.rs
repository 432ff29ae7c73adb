//! Time: the absolute [`Instant`], time scales and their conversions, leap seconds,
//! the calendar, and the text formats times arrive in (JD, MJD, reduced JD, ISO 8601).

pub mod instant;

pub use instant::{Instant, TimeScale};
