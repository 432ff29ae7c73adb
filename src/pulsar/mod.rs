//! # pulsar — photon statistics, pulse profiles, arrival times and the spin + binary
//! timing model
//!
//! * [`statistics`]: Rayleigh, Z²ₙ, H-test and epoch-folding χ² on (weighted) phases, with
//!   their false-alarm probabilities.
//! * [`search`]: Z²ₙ over a frequency (and frequency-derivative) grid by trigonometric
//!   recurrences, its naive twin, and trials-corrected significance.
//! * [`spin`]: rotational phase from ν, ν̇, ν̈ at an epoch.
//! * [`model`]: the timing model (spin, dispersion, instrument offsets, Keplerian binary with
//!   Einstein and Shapiro terms) and its TOML file.
//! * [`model_file`]: mistakes in a model file reported by line and key.
//! * [`timing_fit`]: phase-connected weighted least squares by iterated linearisation.
//! * [`arrival_times`]: the arrival-time (TOA) table: reading and barycentring.
//! * [`profile`]: folding events with a timing model, binned profiles, Fourier and
//!   Gaussian-component templates.
//! * [`event_toas`]: arrival times from segments of events by template matching in the
//!   Fourier domain.
//!
//! Times inside this module are `f64` seconds (TDB, at the barycentre) after the model's
//! epoch, an [`crate::time::Instant`]; ±3 years is 1e8 s, resolved to 15 ns by an `f64`.

pub mod arrival_times;
pub mod event_toas;
pub mod model;
pub mod model_file;
pub mod profile;
pub mod search;
pub mod spin;
pub mod statistics;
pub mod timing_fit;

/// Errors of the pulsar stage; each says what was wrong and what would be accepted.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PulsarError {
    /// Input that cannot be used as given.
    #[error("{0}")]
    Input(String),
    /// A timing model that cannot be read or is not physical.
    #[error("timing model: {0}")]
    Model(String),
    /// A timing model outside its physical range, or a parameter name it does not know.
    #[error("timing model: {0}")]
    InvalidModel(#[from] model::ModelError),
    /// The fit lost phase connection or did not converge.
    #[error("{0}")]
    Fit(String),
}
