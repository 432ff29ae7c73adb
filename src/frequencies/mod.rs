//! # frequencies — multi-sine models and iterative frequency extraction
//!
//! [`model`] fits sums of sinusoids jointly; [`prewhiten`] extracts frequencies one by one
//! until the amplitude signal-to-noise drops below the stopping value; [`detrend`] removes
//! slow trends and per-segment zero points before a search.

pub mod detrend;
pub mod model;
pub mod peaks;
pub mod prewhiten;
pub mod summary;

pub use model::{FittedSinusoid, MultiSineFit, Sinusoid, fit_sinusoids};
pub use peaks::{PeakOptions, describe_peaks};
