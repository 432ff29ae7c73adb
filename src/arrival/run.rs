//! Typed entry points of the arrival stage: a whole table to BJD_TDB, and BJD_TDB instants
//! back to the clock at an observer. Their results are what the commands print and write.

use std::collections::BTreeSet;
use std::path::Path;

use polars::prelude::DataFrame;

use super::correction::ArrivalError;
use super::row_batches::CorrectionPath;
use super::table::{TableRequest, TableSummary, correct_table_along, correct_text_table_in_blocks};
use super::{DelayOptions, ReferenceData, ReferenceNames, Source};
use crate::observer::Observer;
use crate::table::{Provenance, TableError, text_column};
use crate::time::{Instant, TimeFormat, TimeScale, format_time};

/// The outcome of correcting a whole table to BJD_TDB.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct BarycentreRun {
    /// Counts and the range of the total correction.
    pub correction: TableSummary,
    /// The distinct clock labels of the input rows (`<kind>_<scale>`, e.g. `jd_utc`), sorted.
    pub clocks_seen: Vec<String>,
    /// Which optional delays were applied.
    pub delays: DelayOptions,
    /// The source the times were corrected towards (position in rad, motions in mas/yr).
    pub source: Source,
    /// Ephemeris, leap-second and Earth-orientation data used.
    pub reference: ReferenceNames,
    /// Notes and warnings for the reader (e.g. UTC times beyond the leap-second table).
    pub notes: Vec<String>,
}

impl DelayOptions {
    /// The options as readable text, e.g. "Sun's Shapiro delay: on; Jupiter and Saturn: off".
    pub fn describe(&self) -> String {
        let on = |b: bool| if b { "on" } else { "off" };
        format!(
            "Shapiro delay of the Sun: {}; Shapiro delays of Jupiter and Saturn: {}",
            on(self.shapiro_sun),
            on(self.shapiro_planets)
        )
    }
}

/// The warning for UTC times past the leap-second table, if any row lies beyond it.
pub fn leap_second_note(summary: &TableSummary, reference: &ReferenceData) -> Option<String> {
    let rows = summary.rows_beyond_leap_second_horizon;
    (rows > 0).then(|| {
        format!(
            "warning: {rows} UTC time(s) lie up to {} days beyond the leap-second table's validity ({}); \
             if a leap second was announced since, those times are off by 1 s. Load a newer table with --leap-seconds FILE.",
            summary.max_days_beyond_leap_second_horizon,
            reference.converter.leap_seconds().source()
        )
    })
}

/// Corrects every row of `df` (read from `file`) to BJD_TDB towards `source`: the table
/// with the added columns of [`super::table::ADDED_COLUMNS`], and the typed run summary.
/// Dense rows go through interpolation nodes (≤ 1 ns from the exact correction; see
/// [`barycentre_table_along`] to correct every row exactly).
pub fn barycentre_table(
    df: &DataFrame,
    file: &str,
    request: &TableRequest,
    reference: &ReferenceData,
    source: &Source,
    delays: DelayOptions,
) -> Result<(DataFrame, BarycentreRun), TableError> {
    barycentre_table_along(df, file, request, reference, source, delays, CorrectionPath::Automatic)
}

/// As [`barycentre_table`], choosing how the rows are corrected ([`CorrectionPath`]).
pub fn barycentre_table_along(
    df: &DataFrame,
    file: &str,
    request: &TableRequest,
    reference: &ReferenceData,
    source: &Source,
    delays: DelayOptions,
    path: CorrectionPath,
) -> Result<(DataFrame, BarycentreRun), TableError> {
    let corrector = reference.corrector(source.clone(), delays);
    let (out, correction, _) = correct_table_along(df, file, request, &corrector, path)?;
    let clocks: BTreeSet<String> =
        text_column(&out, file, "input_clock")?.into_iter().flatten().map(|s| s.to_string()).collect();
    let notes = leap_second_note(&correction, reference).into_iter().collect();
    let run = BarycentreRun {
        correction,
        clocks_seen: clocks.into_iter().collect(),
        delays,
        source: source.clone(),
        reference: reference.names(),
        notes,
    };
    Ok((out, run))
}

/// Rows per block of [`barycentre_text_table_in_blocks`] unless told otherwise.
pub const DEFAULT_BLOCK_ROWS: usize = 1 << 16;

/// As [`barycentre_table_along`] for a CSV/TSV `input` written to a CSV/TSV `output`,
/// block by block (`block_rows` rows at a time; memory bounded by the block, not by the
/// file): the output holds the same bytes as [`barycentre_table_along`] followed by
/// [`crate::table::write_table`] would write, atomically, with `provenance` in its sidecar;
/// errors are the same (file, row, column of the first bad row). See
/// [`super::table::correct_text_table_in_blocks`].
#[allow(clippy::too_many_arguments)]
pub fn barycentre_text_table_in_blocks(
    input: &Path,
    output: &Path,
    request: &TableRequest,
    reference: &ReferenceData,
    source: &Source,
    delays: DelayOptions,
    path: CorrectionPath,
    block_rows: usize,
    provenance: &Provenance,
) -> Result<BarycentreRun, TableError> {
    let corrector = reference.corrector(source.clone(), delays);
    let (correction, clocks_seen) =
        correct_text_table_in_blocks(input, output, request, &corrector, path, block_rows, provenance)?;
    let notes = leap_second_note(&correction, reference).into_iter().collect();
    Ok(BarycentreRun { correction, clocks_seen, delays, source: source.clone(), reference: reference.names(), notes })
}

/// One BJD_TDB instant carried back to the clock at an observer.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct ObserverReading {
    /// The BJD_TDB instant asked about.
    pub bjd_tdb: Instant,
    /// The BJD_TDB as a JD text (14 decimals).
    pub bjd_tdb_jd: String,
    /// The instant at which the signal reaches the observer, in the requested scale.
    pub at_observer: Instant,
    /// The same as ISO 8601 text in that scale.
    pub iso: String,
    /// The same as a JD text (14 decimals) in that scale.
    pub jd: String,
}

/// BJD_TDB instants carried back to the clock reading at an observer (`observer-time`).
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct ObserverTimes {
    /// Scale of the observer's clock.
    pub scale: TimeScale,
    /// Source towards which the delays were computed.
    pub source: Source,
    /// Whether the observer was the geocentre (no site given).
    pub geocentre: bool,
    /// Ephemeris, leap-second and Earth-orientation data used.
    pub reference: ReferenceNames,
    /// One reading per instant, in input order.
    pub readings: Vec<ObserverReading>,
}

/// Inverts the correction for each BJD_TDB instant (all in TDB): when, in `scale`, the
/// signal reaches `observer`.
pub fn observer_times(
    bjd_tdb: &[Instant],
    observer: &Observer,
    scale: TimeScale,
    reference: &ReferenceData,
    source: &Source,
) -> Result<ObserverTimes, ArrivalError> {
    let corrector = reference.corrector(source.clone(), DelayOptions::default());
    let readings = bjd_tdb
        .iter()
        .map(|b| {
            let t = corrector.arrival_at_observer(b, observer, scale)?;
            Ok(ObserverReading {
                bjd_tdb: *b,
                bjd_tdb_jd: format_time(b, TimeFormat::Jd),
                at_observer: t,
                iso: format_time(&t, TimeFormat::Iso),
                jd: format_time(&t, TimeFormat::Jd),
            })
        })
        .collect::<Result<Vec<_>, ArrivalError>>()?;
    Ok(ObserverTimes {
        scale,
        source: source.clone(),
        geocentre: matches!(observer, Observer::Geocentre),
        reference: reference.names(),
        readings,
    })
}
