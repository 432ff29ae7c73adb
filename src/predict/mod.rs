//! # predict — upcoming events and whether they can be observed
//!
//! [`events`] lists the events of a fitted O–C ephemeris (`oc::FittedEphemeris`) (primary and secondary
//! minima, maxima) in a date range, with the timing uncertainty propagated from the
//! ephemeris covariance, the clock time at a site, and the observing conditions there;
//! [`sky`] computes those conditions: altitude and azimuth of the target, the Sun and the
//! Moon, twilight, the Moon's separation and phase.
//!
//! Events with the target within [`SUN_CAUTION_DEG`] of the Sun carry a caution: they
//! cannot be observed safely, and no one should point optics near the Sun.
//! Nothing here prints.

pub mod events;
pub mod forecast;
pub mod sky;

pub use events::{PredictedEvent, PredictionOptions, predict_events};
pub use forecast::{
    Forecast, ForecastEphemeris, ForecastEvent, ForecastRequest, first_observable_window, forecast,
    leap_second_horizon_warning,
};
pub use sky::{HorizontalPosition, SkyCondition, SkyGeometry, SkySnapshot};

use thiserror::Error;

use crate::arrival::ArrivalError;
use crate::ephemeris::EphemerisError;
use crate::time::TimeError;

/// Angular distance from the Sun inside which an event carries a caution, degrees (the
/// issue's requirement; common practice for small telescopes is a larger exclusion still).
pub const SUN_CAUTION_DEG: f64 = 15.0;

/// Why a prediction could not be made.
#[derive(Debug, Error)]
pub enum PredictError {
    #[error(transparent)]
    Time(#[from] TimeError),
    #[error(transparent)]
    Ephemeris(#[from] EphemerisError),
    #[error(transparent)]
    Arrival(#[from] ArrivalError),
    #[error(transparent)]
    Model(#[from] crate::oc::EphemerisError),
    /// The date range is empty or reversed.
    #[error("the range ends ({end}) before it starts ({start}); give an end later than the start")]
    EmptyRange { start: String, end: String },
    /// An ephemeris value is unusable.
    #[error("ephemeris: {0}")]
    BadEphemeris(String),
    /// An option is out of its range.
    #[error("{0}")]
    BadOption(String),
    /// The range holds more events than the limit.
    #[error("the range holds about {count} events, more than the limit of {limit}; narrow the date range")]
    TooManyEvents { count: u64, limit: u64 },
}
