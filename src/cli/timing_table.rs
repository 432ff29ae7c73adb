//! The timing-table input shared by `timing-residuals` and `measure-light-time`: the file,
//! its time, clock, error and kind columns, the observer, the source and the reference data;
//! read, carried through the arrival stage and checked row by row.

use std::path::PathBuf;

use anyhow::Result;
use clap::Args as ClapArgs;
use polars::prelude::DataFrame;

use super::common::{
    ObserverArgs, ReferenceData, ReferenceDataArgs, SourceArgs, clock_choice, timing_kinds_and_errors,
};
use skyclock::arrival::table::{ClockSpec, TableRequest, correct_table};
use skyclock::arrival::{BarycentricCorrector, DelayOptions, ReferencePoint, Source};
use skyclock::oc::EventKind;
use skyclock::table::read_table;
use skyclock::time::TimeScale;

/// A table of event timings and how to read it.
#[derive(Debug, ClapArgs)]
pub struct TimingTableArgs {
    /// Timing table (.csv, .tsv or .parquet).
    #[arg(long, value_name = "FILE")]
    pub input: PathBuf,
    /// Column holding the event times.
    #[arg(long, value_name = "COLUMN")]
    pub time_column: String,
    /// Clock of all times (jd_utc, hjd_utc, bjd_tdb, mjd_tt, …).
    #[arg(long, value_name = "LABEL")]
    pub clock: Option<String>,
    /// Column holding a clock label per row.
    #[arg(long, value_name = "COLUMN")]
    pub clock_column: Option<String>,
    /// Column holding the 1σ error of each time, in days.
    #[arg(long, value_name = "COLUMN")]
    pub error_column: String,
    /// Column holding the event kind (primary, secondary, maximum); default: all primary.
    #[arg(long, value_name = "COLUMN")]
    pub kind_column: Option<String>,
    #[command(flatten)]
    pub observer: ObserverArgs,
    #[command(flatten)]
    pub source: SourceArgs,
    #[command(flatten)]
    pub reference_data: ReferenceDataArgs,
}

/// A timing table read and carried to BJD_TDB.
pub struct TimingTable {
    /// The input file as text, for messages.
    pub file: String,
    /// The table as read.
    pub df: DataFrame,
    /// The table with the arrival stage's columns (`bjd_tdb_jd1`, delay terms, …) added.
    pub corrected: DataFrame,
    /// The clock given for all rows, if one was.
    pub clock: Option<ClockSpec>,
    /// The source.
    pub source: Source,
    /// Ephemeris, time scales and Earth orientation used.
    pub reference: ReferenceData,
    /// Kind and 1σ error (days) of every row.
    pub rows: Vec<(EventKind, f64)>,
}

impl TimingTableArgs {
    /// Reads the table (times, clock labels, kinds and `extra_text_columns` as text), carries
    /// every row to BJD_TDB and checks kinds and errors. `example_clock` is the clock the
    /// message suggests when neither `--clock` nor `--clock-column` is given.
    pub fn read(&self, example_clock: &str, extra_text_columns: &[&str]) -> Result<TimingTable> {
        let clock = clock_choice(&self.clock, &self.clock_column, example_clock)?;
        let description = self.observer.description()?;
        // Times already in BJD_TDB need no source: no delay is applied to them, so a
        // placeholder direction stands in when none is given.
        let barycentric_tdb = self.clock_column.is_none()
            && clock.is_some_and(|c| c.reference == ReferencePoint::Barycentric && c.scale == TimeScale::Tdb);
        let no_position_given =
            self.source.source_file.is_none() && self.source.ra.is_none() && self.source.dec.is_none();
        let source = match self.source.load(description.as_ref()) {
            Ok(s) => s,
            Err(_) if barycentric_tdb && no_position_given => {
                Source::fixed_degrees("target", 0.0, 0.0).map_err(anyhow::Error::msg)?
            }
            Err(e) => return Err(e),
        };
        let observer = self.observer.observer_spec(description.as_ref())?;
        let reference = self.reference_data.load()?;
        let corrector = BarycentricCorrector::new(
            reference.ephemeris.clone(),
            reference.converter.clone(),
            reference.orientation.clone(),
            source.clone(),
            DelayOptions::default(),
        );
        let file = self.input.display().to_string();
        let request = TableRequest {
            time_column: self.time_column.clone(),
            clock,
            clock_column: self.clock_column.clone(),
            observer,
        };
        let mut text_columns = request.text_columns();
        text_columns.extend(self.kind_column.as_deref());
        text_columns.extend(extra_text_columns);
        let df = read_table(&self.input, &text_columns)?;
        let (corrected, _) = correct_table(&df, &file, &request, &corrector)?;
        let rows = timing_kinds_and_errors(&df, &file, &self.error_column, self.kind_column.as_deref())?;
        Ok(TimingTable { file, df, corrected, clock, source, reference, rows })
    }
}
