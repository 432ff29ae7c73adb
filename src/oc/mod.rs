//! # oc — observed minus computed
//!
//! Cycle numbers of event timings against a reference ephemeris ([`cycles`]), ephemeris
//! models for the O–C diagram — linear, quadratic (steady period change), the light-travel
//! time of an unseen companion on an eccentric orbit (Irwin 1952) and their sum
//! ([`models`], [`orbit`]) — their fits with covariance and seeded-bootstrap uncertainties
//! ([`fitting`]), the choice between nested models ([`compare`]) and the companion's mass
//! function and minimum mass ([`companion`]).
//!
//! Times enter as BJD_TDB [`Instant`]s; inside, every time is an `f64` offset in days from
//! the reference epoch (decades of offsets keep ~1e-11 d resolution). Nothing here prints.

pub mod analysis;
pub mod apsidal;
pub mod companion;
pub mod compare;
pub mod cycles;
pub mod eclipse_times;
pub mod ephemeris;
pub mod fitting;
pub mod input;
pub mod light_time_method;
pub mod models;
pub mod orbit;

pub use analysis::{
    AnalysisOptions, BootstrapRun, EstimateSummary, LIGHT_TIME_CAUTION, ModelSummary, OcAnalysis,
    ReferenceEphemerisSummary, analyse,
};
pub use companion::{mass_function_msun, minimum_companion_mass_msun, projected_semi_major_axis_au};
pub use compare::{ModelComparison, NestedTest, compare_nested, format_p_value, information};
pub use cycles::{CycleOptions, OcSeries, ReferenceEphemeris, assign_cycles};
pub use ephemeris::{EphemerisError, FittedEphemeris};
pub use fitting::{BootstrapOptions, FitOptions, ModelFit, bootstrap, bootstrap_with_progress, fit_model};
pub use models::{ModelKind, OcModel, OcParameter, UnknownModel};

use crate::fit::FitError;
use crate::time::Instant;

/// The kind of a timed event.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum EventKind {
    /// Primary minimum (integer cycles).
    Primary,
    /// Secondary minimum (half-integer cycles).
    Secondary,
    /// Maximum of a pulsator (integer cycles).
    Maximum,
}

impl EventKind {
    /// Parses `primary`/`p`/`1`/`i`, `secondary`/`s`/`2`/`ii`, `maximum`/`max` (any case).
    pub fn parse(text: &str) -> Option<EventKind> {
        match text.trim().to_ascii_lowercase().as_str() {
            "primary" | "p" | "1" | "i" | "min" | "minimum" => Some(EventKind::Primary),
            "secondary" | "s" | "2" | "ii" => Some(EventKind::Secondary),
            "maximum" | "max" => Some(EventKind::Maximum),
            _ => None,
        }
    }

    /// Offset of this kind's cycle numbers from the integers (0 or ½).
    pub fn cycle_offset(self) -> f64 {
        if self == EventKind::Secondary { 0.5 } else { 0.0 }
    }

    /// Lower-case name.
    pub fn name(self) -> &'static str {
        match self {
            EventKind::Primary => "primary",
            EventKind::Secondary => "secondary",
            EventKind::Maximum => "maximum",
        }
    }
}

impl std::fmt::Display for EventKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}

/// An event-kind name that is none of ours.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("unknown event kind '{0}'; use primary, secondary or maximum")]
pub struct UnknownEventKind(pub String);

impl std::str::FromStr for EventKind {
    type Err = UnknownEventKind;
    /// As [`EventKind::parse`].
    fn from_str(text: &str) -> Result<EventKind, UnknownEventKind> {
        EventKind::parse(text).ok_or_else(|| UnknownEventKind(text.trim().to_string()))
    }
}

/// One timing: a BJD_TDB instant with its 1σ error, its kind, an optional source label and
/// the 1-based row it came from (for messages).
#[derive(Debug, Clone, PartialEq)]
pub struct Timing {
    /// Time of the event, BJD_TDB.
    pub bjd_tdb: Instant,
    /// 1σ uncertainty, days.
    pub error_d: f64,
    /// Event kind.
    pub kind: EventKind,
    /// Source or observer label (for per-source error rescaling), if any.
    pub source: Option<String>,
    /// 1-based row of the input table.
    pub row: usize,
}

/// What can go wrong in the O–C stage; rows are 1-based rows of the timing table.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum OcError {
    /// A timing's uncertainty is zero, negative or not finite.
    #[error(
        "row {row}: timing error {value} d is not usable; errors must be finite and > 0 (give a realistic uncertainty)"
    )]
    BadError {
        /// Row of the timing table, 1-based.
        row: usize,
        /// The uncertainty given, days.
        value: f64,
    },
    /// Two timings of the same kind fall on the same cycle.
    #[error(
        "rows {first} and {second} hold the same {kind} timing (cycle {cycle}); remove the duplicate or merge them"
    )]
    DuplicateTiming {
        /// Row of one of the two timings, 1-based (the earlier in time order).
        first: usize,
        /// Row of the other, 1-based.
        second: usize,
        /// The event kind: `primary`, `secondary` or `maximum`.
        kind: &'static str,
        /// The cycle number both were given (half-integral for secondaries).
        cycle: f64,
    },
    /// The reference period or its uncertainty is not finite, or the period is not > 0.
    #[error("the reference ephemeris is not usable: {0}")]
    BadEphemeris(String),
    /// Between two successive timings the 3σ period error grows beyond a quarter of the
    /// event spacing, so the cycle count may be wrong.
    #[error(
        "cycle count is ambiguous at row {row}: {gap_cycles:.0} cycles since the previous timing, and a period error of {period_sigma_d:.3e} d accumulates to {drift_d:.4} d there, more than a quarter of the event spacing ({limit_d:.4} d); supply a better period, fewer cycles between timings, or allow ambiguity explicitly"
    )]
    AmbiguousCycles {
        /// Row of the later timing, 1-based.
        row: usize,
        /// Cycles since the previous timing in time order.
        gap_cycles: f64,
        /// 1σ uncertainty of the reference period, days.
        period_sigma_d: f64,
        /// Three times the period uncertainty accumulated over the gap, days.
        drift_d: f64,
        /// A quarter of the event spacing (the period, or half of it with secondaries), days.
        limit_d: f64,
    },
    /// Too few timings for the parameters of a model.
    #[error("{model} needs at least {needed} timings, got {got}")]
    TooFewTimings {
        /// The model's name, e.g. `quadratic`.
        model: &'static str,
        /// Timings needed.
        needed: usize,
        /// Timings given.
        got: usize,
    },
    /// A nonlinear model fit, or its bootstrap, did not give finite results.
    #[error("the {model} fit did not converge ({detail}); try other starting values or a simpler model")]
    NotConverged {
        /// The model's name, e.g. `light-time`.
        model: &'static str,
        /// What failed.
        detail: String,
    },
    /// A least-squares failure.
    #[error("fit failed: {0}")]
    Fit(#[from] FitError),
    /// A timing or option that cannot be used (the message says which).
    #[error("{0}")]
    Invalid(String),
}
