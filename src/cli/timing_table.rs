//! The timing-table input shared by `timing-residuals` and `measure-light-time`: the file,
//! its time, clock, error and kind columns, the observer, the source and the reference data;
//! read, carried through the arrival stage and checked row by row.

use std::path::PathBuf;

use anyhow::Result;
use clap::Args as ClapArgs;
use polars::prelude::DataFrame;

use super::common::{ObserverArgs, ReferenceData, ReferenceDataArgs, SourceArgs, clock_choice};
use skyclock::arrival::table::ClockSpec;
use skyclock::arrival::{ReferencePoint, Source};
use skyclock::oc::EventKind;
use skyclock::oc::input::{TimingTableSource, read_timing_table};
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
    /// The library's reading: timings (BJD_TDB, kind, error, origin, row) and observer times.
    pub read: skyclock::oc::input::TimingTable,
}

impl TimingTableArgs {
    /// Reads the table (times, clock labels, kinds and the origin column as text), carries
    /// every row to BJD_TDB and checks kinds and errors. `example_clock` is the clock the
    /// message suggests when neither `--clock` nor `--clock-column` is given.
    pub fn read(&self, example_clock: &str, origin_column: Option<&str>) -> Result<TimingTable> {
        let clock = clock_choice(&self.clock, &self.clock_column, example_clock)?;
        let description = self.observer.description()?;
        // Times already in BJD_TDB need no source: no delay is applied to them.
        let barycentric_tdb = self.clock_column.is_none()
            && clock.is_some_and(|c| c.reference == ReferencePoint::Barycentric && c.scale == TimeScale::Tdb);
        let no_position_given =
            self.source.source_file.is_none() && self.source.ra.is_none() && self.source.dec.is_none();
        let source = match self.source.load(description.as_ref()) {
            Ok(s) => Some(s),
            Err(_) if barycentric_tdb && no_position_given => None,
            Err(e) => return Err(e),
        };
        let observer = self.observer.observer_spec(description.as_ref())?;
        let reference = self.reference_data.load()?;
        let request = TimingTableSource {
            path: &self.input,
            time_column: self.time_column.clone(),
            clock,
            clock_column: self.clock_column.clone(),
            error_column: self.error_column.clone(),
            kind_column: self.kind_column.clone(),
            origin_column: origin_column.map(str::to_string),
            observer,
            source: source.clone(),
        };
        let read = read_timing_table(&request, &reference)?;
        super::common::print_time_warnings(&read.warnings);
        let source = match source {
            Some(s) => s,
            None => Source::fixed_degrees("target", 0.0, 0.0).map_err(anyhow::Error::msg)?,
        };
        let rows = read.timings.iter().map(|t| (t.kind, t.error_d)).collect();
        Ok(TimingTable {
            file: read.file.clone(),
            df: read.table.clone(),
            corrected: read.corrected.clone(),
            clock,
            source,
            reference,
            rows,
            read,
        })
    }
}
