//! Options shared by the search commands: which table and columns hold the light curve,
//! and how its times are written (already BJD_TDB, or any clock carried to the barycentre
//! with the site and source options).

use std::path::PathBuf;

use anyhow::Result;
use clap::Args as ClapArgs;

use super::common::{ObserverArgs, ReferenceDataArgs, SourceArgs};
use skyclock::arrival::table::{ClockSpec, ObserverSpec};
use skyclock::survey::input::{LightCurveColumns, TableLightCurve, is_barycentric_tdb};
use skyclock::survey::load::{LightCurveSource, TimeOrigin, read_light_curve};

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
        let clock = ClockSpec::parse_label(&self.clock).map_err(anyhow::Error::msg)?;
        let reference = self.reference_data.load()?;
        let barycentric = self.clock_column.is_none() && is_barycentric_tdb(&clock);
        let (observer, source) = if barycentric {
            (ObserverSpec::Geocentre, None)
        } else {
            let description = self.observer.description()?;
            (self.observer.observer_spec(description.as_ref())?, Some(self.source.load(description.as_ref())?))
        };
        let request = LightCurveSource {
            path: &self.input,
            columns: self.columns(),
            times: match &self.clock_column {
                Some(c) => TimeOrigin::ClockColumn(c.clone()),
                None => TimeOrigin::Clock(self.clock.clone()),
            },
            observer,
            source,
        };
        let (lc, note) = read_light_curve(&request, &reference)?;
        super::common::print_time_warnings(&lc.warnings);
        Ok((lc, note))
    }
}
