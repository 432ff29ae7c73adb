//! # transit — mid-transit times from a physical transit model
//!
//! A dark spherical planet crossing a limb-darkened star ([`model`]: Mandel & Agol 2002,
//! quadratic law), moving on a circular or eccentric orbit ([`orbit`]), integrated over each
//! exposure when the cadence is long ([`exposure`]: Kipping 2010). [`time_transits`]
//! ([`timing`]) fits the shape shared by all transits of a light curve and then each
//! transit's mid-time, with uncertainties from the residual noise inflated for correlated
//! noise ([`red_noise`]: the β of Winn et al. 2008). Its table is the input of the O–C stage
//! ([`crate::oc`]); [`ttv`] fits a sinusoidal timing variation to that O–C, with the
//! periodogram of the O–C and its false-alarm probability. The module is described in
//! docs/transits.md.

pub mod elliptic;
pub mod exposure;
pub mod model;
pub mod orbit;
pub mod red_noise;
pub mod timing;
pub mod ttv;

pub use exposure::Exposure;
pub use model::{OccultedIntegrals, QuadraticLimbDarkening, occulted_integrals, small_planet_flux, transit_flux};
pub use orbit::TransitOrbit;
pub use timing::{
    FittedTransitShape, FittedValue, SkippedTransitRow, TransitCurve, TransitShape, TransitTimeRow,
    TransitTimingOptions, TransitTimingReport, TransitTimingRequest, time_transits,
};
pub use ttv::{OcPeriodogram, SinusoidalTtvFit, TtvSearchOptions, fit_sinusoidal_ttv, oc_periodogram};

/// Why transits could not be timed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum TransitError {
    /// The arrays of the light curve differ in length.
    #[error("times, fluxes, errors and input rows differ in length")]
    LengthMismatch,
    /// A point is not usable.
    #[error("row {row}: {what} {value} is not usable")]
    BadPoint {
        /// 1-based input row.
        row: usize,
        /// Which value.
        what: &'static str,
        /// The offending value.
        value: f64,
    },
    /// Times go backwards.
    #[error("row {row}: the times must be in increasing order (sort the table by time)")]
    NotSorted {
        /// 1-based input row of the first time earlier than its predecessor.
        row: usize,
    },
    /// The starting shape does not describe a transit.
    #[error("starting transit shape: {0}")]
    BadShape(String),
    /// An option is out of range.
    #[error("{0}")]
    BadOption(String),
    /// Nothing to time.
    #[error("no transit to time: {0}")]
    NoTransits(String),
    /// The folded fit of the shape failed.
    #[error("the fit of the transit shape to the folded transits failed: {0}")]
    FoldedFitFailed(String),
}
