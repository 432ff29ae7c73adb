//! Options shared by the search commands: which table and columns hold the light curve,
//! and how its times are written (already BJD_TDB, or any clock carried to the barycentre
//! with the site and source options).

use std::path::PathBuf;

use anyhow::Result;
use clap::Args as ClapArgs;

use super::common::{ObserverArgs, ReferenceDataArgs, SourceArgs};
use skyclock::arrival::table::{ClockSpec, TableRequest, correct_table};
use skyclock::arrival::{BarycentricCorrector, DelayOptions};
use skyclock::survey::input::{
    LightCurveColumns, TableLightCurve, assemble, is_barycentric_tdb, parse_barycentric_times,
};
use skyclock::table::{read_table, text_column};

/// Where the light curve is and how to read it.
#[derive(Debug, Clone, ClapArgs)]
pub struct LightCurveArgs {
    /// Input table (.csv, .tsv or .parquet).
    #[arg(long, value_name = "FILE")]
    pub input: PathBuf,
    /// Column holding the times.
    #[arg(long, value_name = "COLUMN", default_value = "time")]
    pub time_column: String,
    /// Column holding the values (magnitudes or fluxes).
    #[arg(long, value_name = "COLUMN", default_value = "value")]
    pub value_column: String,
    /// Column holding 1-σ uncertainties (same units as the values).
    #[arg(long, value_name = "COLUMN")]
    pub error_column: Option<String>,
    /// Column holding a band (filter) label per row; bands get their own zero points.
    #[arg(long, value_name = "COLUMN")]
    pub band_column: Option<String>,
    /// Clock of all times: bjd_tdb (default, used as is), or jd_utc, hjd_utc, mjd_tt, ...
    /// which are carried to the barycentre using the site and source options.
    #[arg(long, value_name = "LABEL", default_value = "bjd_tdb")]
    pub clock: String,
    /// Column holding a clock label per row (tables in mixed clocks).
    #[arg(long, value_name = "COLUMN")]
    pub clock_column: Option<String>,
    #[command(flatten)]
    pub observer: ObserverArgs,
    #[command(flatten)]
    pub source: SourceArgs,
    #[command(flatten)]
    pub reference_data: ReferenceDataArgs,
}

impl LightCurveArgs {
    /// The column names.
    pub fn columns(&self) -> LightCurveColumns {
        LightCurveColumns {
            time: self.time_column.clone(),
            value: self.value_column.clone(),
            error: self.error_column.clone(),
            band: self.band_column.clone(),
        }
    }

    /// Reads the table and returns the light curve with times in days since its epoch
    /// (BJD_TDB), plus a note on how the times were obtained.
    pub fn load(&self) -> Result<(TableLightCurve, String)> {
        let file = self.input.display().to_string();
        let columns = self.columns();
        let mut text_cols = vec![self.time_column.as_str()];
        if let Some(c) = &self.clock_column {
            text_cols.push(c);
        }
        if let Some(c) = &self.observer.site_column {
            text_cols.push(c);
        }
        let df = read_table(&self.input, &text_cols)?;
        let clock = ClockSpec::parse_label(&self.clock).map_err(anyhow::Error::msg)?;
        let reference = self.reference_data.load()?;
        let leap = reference.converter.leap_seconds().clone();
        let bjd = ClockSpec::parse_label("bjd_tdb").map_err(anyhow::Error::msg)?;
        let (times, note) = if self.clock_column.is_none() && is_barycentric_tdb(&clock) {
            let texts = text_column(&df, &file, &self.time_column)?;
            (
                parse_barycentric_times(&texts, &clock, &file, &self.time_column, &leap)?,
                format!("times read as {} (already barycentric)", self.clock),
            )
        } else {
            let description = self.observer.description()?;
            let source = self.source.load(description.as_ref())?;
            let observer = self.observer.observer_spec(description.as_ref())?;
            let corrector = BarycentricCorrector::new(
                reference.ephemeris.clone(),
                reference.converter.clone(),
                reference.orientation.clone(),
                source.clone(),
                DelayOptions::default(),
            );
            let request = TableRequest {
                time_column: self.time_column.clone(),
                clock: if self.clock_column.is_some() { None } else { Some(clock) },
                clock_column: self.clock_column.clone(),
                observer,
            };
            let (corrected, _) = correct_table(&df, &file, &request, &corrector)?;
            let texts = text_column(&corrected, &file, "bjd_tdb")?;
            (
                parse_barycentric_times(&texts, &bjd, &file, "bjd_tdb", &leap)?,
                format!(
                    "times carried from {} to BJD_TDB for {} with {}",
                    self.clock_column.as_deref().map_or(self.clock.clone(), |c| format!("the clocks in column '{c}'")),
                    source.name,
                    reference.ephemeris.name()
                ),
            )
        };
        let values = text_column(&df, &file, &self.value_column)?;
        let errors = self.error_column.as_deref().map(|c| text_column(&df, &file, c)).transpose()?;
        let bands = self.band_column.as_deref().map(|c| text_column(&df, &file, c)).transpose()?;
        let lc = assemble(&file, &columns, &times, &values, errors.as_deref(), bands.as_deref(), &|i| i + 1)?;
        Ok((lc, note))
    }
}
