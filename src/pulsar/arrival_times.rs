//! The arrival-time (TOA) table, after barycentring by [`crate::arrival::table::correct_table`].
//!
//! Our columns (documented in `docs/pulsar_timing.md`): the time column in any clock the
//! arrival stage reads, `error_us` (1-σ, µs, > 0), optional `freq_mhz` (observing frequency;
//! empty or absent for X-ray/γ-ray arrival times: no dispersion), optional `instrument`
//! (text; empty = "default"). Barycentring adds `bjd_tdb_jd1`/`bjd_tdb_jd2`, read here.

use polars::prelude::DataFrame;

use super::model::{ArrivalTime, ObserverGeometry};
use crate::arrival::table::RowGeometry;
use crate::ephemeris::SPEED_OF_LIGHT_KM_PER_S;
use crate::table::{TableError, float_column, optional_float_column, text_column};
use crate::time::{Instant, TimeScale};

/// Arrival times from a barycentred table, in seconds after `epoch` (TDB). Errors name the
/// file, row and column (zero or negative uncertainty, non-positive frequency).
pub fn arrival_times_from_table(df: &DataFrame, file: &str, epoch: &Instant) -> Result<Vec<ArrivalTime>, TableError> {
    let jd1 = float_column(df, file, "bjd_tdb_jd1")?;
    let jd2 = float_column(df, file, "bjd_tdb_jd2")?;
    let err = float_column(df, file, "error_us")?;
    let has = |c: &str| df.get_column_names().iter().any(|n| n.as_str() == c);
    let freq = if has("freq_mhz") { optional_float_column(df, file, "freq_mhz")? } else { vec![None; df.height()] };
    let inst = if has("instrument") { text_column(df, file, "instrument")? } else { vec![None; df.height()] };
    let cell = |row: usize, column: &str, message: String| TableError::Cell {
        file: file.to_string(),
        row: row + 1,
        column: column.to_string(),
        message,
    };
    let mut out = Vec::with_capacity(df.height());
    for i in 0..df.height() {
        if err[i].is_nan() || err[i] <= 0.0 {
            return Err(cell(i, "error_us", format!("{} µs: every arrival time needs an uncertainty > 0", err[i])));
        }
        crate::table::check_uncertainty(err[i], "µs", file, i + 1, "error_us")?;
        if let Some(f) = freq[i]
            && (f.is_nan() || f <= 0.0)
        {
            return Err(cell(
                i,
                "freq_mhz",
                format!("{f} MHz: an observing frequency must be > 0 (leave the cell empty for no dispersion)"),
            ));
        }
        let t = Instant::from_jd_two_part(TimeScale::Tdb, jd1[i], jd2[i]);
        out.push(ArrivalTime {
            t_s: t.seconds_since(epoch),
            error_s: err[i] * 1e-6,
            freq_mhz: freq[i],
            instrument: inst[i].clone().unwrap_or_else(|| "default".to_string()),
            observer: None,
        });
    }
    Ok(out)
}

/// Attaches to each arrival time the observer's barycentric position (converted to light
/// seconds) and the barycentring direction from [`crate::arrival::table::correct_table_with_geometry`]
/// (same row order), so a timing model can refine the source position. Rows given already at
/// the barycentre keep `observer = None`.
pub fn attach_observer_geometry(toas: &mut [ArrivalTime], geometry: &[RowGeometry]) {
    for (a, g) in toas.iter_mut().zip(geometry) {
        a.observer = g.observer_barycentric_km.map(|r| ObserverGeometry {
            position_lt_s: [
                r[0] / SPEED_OF_LIGHT_KM_PER_S,
                r[1] / SPEED_OF_LIGHT_KM_PER_S,
                r[2] / SPEED_OF_LIGHT_KM_PER_S,
            ],
            source_unit: g.source_unit,
        });
    }
}
