//! Time: the absolute [`Instant`], time scales and their conversions, leap seconds,
//! the calendar, and the text formats times arrive in (JD, MJD, reduced JD, ISO 8601).

pub mod calendar;
pub mod error;
pub mod format;
pub mod instant;
pub mod leap_seconds;
pub mod scales;
pub mod traits;

pub use error::TimeError;
pub use format::{TimeFormat, format_time, parse_time};
pub use instant::{Instant, TimeScale};
pub use leap_seconds::LeapSecondTable;
pub use scales::{DtdbSite, ScaleConverter};
pub use traits::{Duration, UnknownScale};
