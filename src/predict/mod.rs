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
    /// A time could not be converted between scales.
    #[error(transparent)]
    Time(#[from] TimeError),
    /// The solar-system ephemeris could not give a body's state at an instant needed.
    #[error(transparent)]
    Ephemeris(#[from] EphemerisError),
    /// An event time could not be carried from the barycentre to the site.
    #[error(transparent)]
    Arrival(#[from] ArrivalError),
    /// The source's event ephemeris never reaches an end of the range (its period would fall to zero).
    #[error(transparent)]
    Model(#[from] crate::oc::EphemerisError),
    /// The date range is empty or reversed.
    #[error("the range ends ({end}) before it starts ({start}); give an end later than the start")]
    EmptyRange {
        /// The start given, as date and JD on its scale.
        start: String,
        /// The end given, as date and JD on its scale.
        end: String,
    },
    /// An ephemeris value is unusable.
    #[error("ephemeris: {0}")]
    BadEphemeris(String),
    /// An option is out of its range.
    #[error("{0}")]
    BadOption(String),
    /// The range holds more events than the limit.
    #[error("the range holds about {count} events, more than the limit of {limit}; narrow the date range")]
    TooManyEvents {
        /// Events in the range, counted up to the event kind that passed the limit.
        count: u64,
        /// The most events one prediction lists ([`events::MAX_EVENTS`]).
        limit: u64,
    },
}
