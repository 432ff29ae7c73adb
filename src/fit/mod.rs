//! # fit — the one home of least squares
//!
//! Weighted linear least squares with a covariance matrix (thin SVD through `faer`),
//! Levenberg–Marquardt for nonlinear models, a tiny dense solver for the inner loops of
//! periodograms, and a seeded random-number generator for bootstrap and synthetic tests.
//! Every stage that fits a model (search, O–C, pulsar timing) comes here; nothing here
//! knows about light curves.

pub mod estimates;
pub mod levenberg;
pub mod linear;
pub mod random;
pub mod robust;
pub mod small;

pub use estimates::{Estimate, Estimates, Parameter, UnknownParameter, parse_parameter};
pub use levenberg::{LevenbergOptions, LsqModel, NonlinearFit, levenberg_marquardt};
pub use linear::{LinearFit, weighted_linear_lsq};
pub use random::SeededRng;

/// Errors of the least-squares routines.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum FitError {
    /// Fewer observations than free parameters.
    #[error("least squares needs at least {needed} observations for {needed} parameters, got {got}")]
    TooFewObservations {
        /// Observations needed: the number of free parameters (at least 1).
        needed: usize,
        /// Observations given.
        got: usize,
    },
    /// Array lengths disagree.
    #[error("{what}: expected length {expected}, got {got}")]
    LengthMismatch {
        /// Which array, e.g. `weights`.
        what: &'static str,
        /// The length it must have.
        expected: usize,
        /// The length it has.
        got: usize,
    },
    /// A weight is negative, zero or not finite.
    #[error("weight at index {index} is {value}; weights must be finite and > 0")]
    BadWeight {
        /// Observation index, 0-based.
        index: usize,
        /// The weight given.
        value: f64,
    },
    /// An input value is NaN or infinite.
    #[error("{what} at index {index} is {value}; finite numbers are required")]
    NonFinite {
        /// Which input, e.g. `value` or `design matrix element`.
        what: &'static str,
        /// Index in that input, 0-based (row-major for the design matrix).
        index: usize,
        /// The value found.
        value: f64,
    },
    /// The design matrix does not determine all parameters.
    #[error(
        "the parameters are not determined by the data (condition number {condition:.3e}); remove a parameter or add data"
    )]
    Singular {
        /// Condition number of the column-scaled, weighted design matrix (above 1e13, or infinite).
        condition: f64,
    },
    /// The numerical decomposition failed.
    #[error("linear algebra failure: {0}")]
    Decomposition(String),
    /// The nonlinear iteration produced non-finite values.
    #[error("the nonlinear fit diverged after {iterations} iterations")]
    Diverged {
        /// Iterations done before the failure (0: the starting parameters already give a non-finite χ²).
        iterations: usize,
    },
}
