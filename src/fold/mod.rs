//! # fold — phases, binned folded curves and period refinement
//!
//! [`phase`] turns times into phases at a period and epoch; [`binning`] summarises a
//! folded curve in phase bins (mean or median with errors); [`refine`] improves a period
//! found on a grid by a least-squares fit of a Fourier series around it.

pub mod binning;
pub mod phase;
pub mod refine;
pub mod run;

pub use binning::{BinStatistic, PhaseBin, bin_folded, residuals_from_bins};
pub use phase::{fold_times, phase_of};
pub use refine::{RefinedPeriod, refine_period};
pub use run::{FoldReport, FoldRequest, FoldedLightCurve, fold_light_curve};
