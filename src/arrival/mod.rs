//! The arrival stage: carries arrival times from any clock and any observer to the
//! solar-system barycentre (BJD_TDB), keeping every delay term for audit; repairs legacy
//! heliocentric times; and inverts the correction for predictions.

pub mod conversion;
pub mod correction;
pub mod delays;
pub mod events;
pub mod interpolated;
pub mod reference;
pub mod row_batches;
pub mod run;
pub mod slow_terms;
pub mod source;
pub mod table;

pub use conversion::{BarycentreEventsResult, ConvertTimeResult, ConvertedTime, convert_times};
pub use correction::{
    ArrivalError, BarycentricCorrector, Corrected, DelayBreakdown, DelayOptions, NodeTerms, ReferencePoint,
};
pub use reference::{ReferenceData, ReferenceDataError, ReferenceNames};
pub use row_batches::CorrectionPath;
pub use run::{
    BarycentreRun, DEFAULT_BLOCK_ROWS, ObserverReading, ObserverTimes, barycentre_table, barycentre_table_along,
    barycentre_text_table_in_blocks, observer_times,
};
pub use source::{CoordinateError, Source, SourceDirection, parse_declination_deg, parse_right_ascension_deg};
