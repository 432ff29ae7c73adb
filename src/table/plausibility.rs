//! Plausibility of the times read from a table, checked once by every reader of day-number
//! columns (the barycentring of tables, light curves, timing tables, event tables):
//!
//! - A JD, MJD or RJD clock label (`jd_utc`, `bmjd_tdb`, `hjd_utc`, `rjd_tt`, …) whose
//!   values lie outside [`PLAUSIBLE_YEARS`] widened by [`YEARS_MARGIN`] is a mistake far
//!   more often than a true time: where the values read in the other convention (an MJD
//!   label given JDs, a JD label given MJDs) fall inside 1900–2200 the table is refused,
//!   naming the row, the column, both readings as calendar years and the label to use;
//!   otherwise a [`TimeWarning::FarFromModernEra`] names the years and the likely fix.
//! - A time column stored as 64-bit floating point (Parquet, or any binary float day count)
//!   whose resolution at its magnitude is worse than [`MAX_FLOAT_RESOLUTION_US`] gets one
//!   [`TimeWarning::CoarseFloatColumn`] with the fix (a JD near 2.46e6 resolves to 40 µs).
//!
//! ISO 8601 times carry their year explicitly and are not checked. Common practice: the
//! modern era of timed observations; an `f64` has a 52-bit fraction (IEEE 754).

use polars::prelude::{DataFrame, DataType};

use super::error::TableError;
use crate::time::calendar::{civil_from_mjd, mjd_from_civil};
use crate::time::format::day_number_f64;
use crate::time::{Instant, TimeFormat};

/// Years in which timed astronomical observations are expected (common practice).
pub const PLAUSIBLE_YEARS: (i64, i64) = (1900, 2200);

/// Years beyond [`PLAUSIBLE_YEARS`] still read without a word (historical minima of the
/// nineteenth century, long predictions): 100 years each side.
pub const YEARS_MARGIN: i64 = 100;

/// Coarsest resolution of a floating-point time column read without a warning, µs.
pub const MAX_FLOAT_RESOLUTION_US: f64 = 1.0;

/// JD − MJD, days.
const MJD_ZERO_JD: f64 = 2_400_000.5;

/// A warning about the times of a table (printed by the command line, raised as a Python
/// warning by the module).
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize, thiserror::Error)]
pub enum TimeWarning {
    /// Day numbers of a JD/MJD-kind clock label far outside the modern era.
    #[error(
        "{file}, column '{column}': the times read as {label} lie in the years {first_year} … {last_year}, far outside {} … {}; check the clock label (a JD given an MJD label or the reverse, or days with an offset removed) and the column's units",
        PLAUSIBLE_YEARS.0,
        PLAUSIBLE_YEARS.1
    )]
    FarFromModernEra {
        /// The table.
        file: String,
        /// The time column.
        column: String,
        /// The clock label the times were read with.
        label: String,
        /// Calendar year of the earliest time.
        first_year: i64,
        /// Calendar year of the latest time.
        last_year: i64,
    },
    /// A floating-point time column whose resolution is worse than 1 µs.
    #[error(
        "{file}, column '{column}': the times are stored as 64-bit floating point, which at {largest:.1} d resolves only {resolution_us:.1} µs; store them as text, as two columns (whole day and fraction of the day), or as an MJD or an offset from a nearby epoch"
    )]
    CoarseFloatColumn {
        /// The table.
        file: String,
        /// The time column.
        column: String,
        /// The largest magnitude in the column, days.
        largest: f64,
        /// The spacing of `f64` values at that magnitude, µs.
        resolution_us: f64,
    },
}

/// The extremes of the day numbers read with one clock label.
#[derive(Debug, Clone)]
struct LabelSpan {
    label: String,
    /// (value as written, MJD of the instant, 1-based row) of the earliest and latest.
    low: (f64, f64, usize),
    high: (f64, f64, usize),
}

/// Collects the times of one column (with their clock labels) and judges them at the end.
#[derive(Debug, Clone)]
pub struct TimeSpanCheck {
    file: String,
    column: String,
    spans: Vec<LabelSpan>,
    /// The first row whose value is clearly in the other day-number convention.
    other_convention: Option<(usize, String)>,
}

fn year_of_mjd(mjd: f64) -> i64 {
    if !mjd.is_finite() {
        return if mjd > 0.0 { i64::MAX } else { i64::MIN };
    }
    civil_from_mjd(mjd.floor().clamp(-1e12, 1e12) as i64).0
}

fn plausible(year: i64) -> bool {
    (PLAUSIBLE_YEARS.0..=PLAUSIBLE_YEARS.1).contains(&year)
}

fn tolerated(year: i64) -> bool {
    (PLAUSIBLE_YEARS.0 - YEARS_MARGIN..=PLAUSIBLE_YEARS.1 + YEARS_MARGIN).contains(&year)
}

/// The label with its day-number kind replaced (`bmjd_tdb` → `bjd_tdb`).
fn relabel(label: &str, to_jd: bool) -> String {
    let (kind, scale) = label.rsplit_once('_').unwrap_or((label, ""));
    let kind = kind.to_ascii_lowercase();
    let new = match (to_jd, kind.as_str()) {
        (true, "mjd" | "rjd") => "jd",
        (true, "bmjd") => "bjd",
        (true, "hmjd") => "hjd",
        (false, "jd") => "mjd",
        (false, "bjd") => "bmjd",
        (false, "hjd") => "hmjd",
        _ => return label.to_string(),
    };
    format!("{new}_{scale}")
}

/// The refusal message when the day number of `t`, written in `format`, lies outside the
/// tolerated years but read in the other convention (a JD under an MJD/RJD label, an MJD
/// under a JD label) falls inside [`PLAUSIBLE_YEARS`]; `None` otherwise (and for ISO
/// times). `label` gives the clock label for the message (called only then). For readers
/// that check row by row (the streaming survey reader); [`TimeSpanCheck`] uses it too.
pub fn other_convention(t: &Instant, format: TimeFormat, label: impl FnOnce() -> String) -> Option<String> {
    if format == TimeFormat::Iso {
        return None;
    }
    let year = year_of_mjd(t.mjd_f64());
    if tolerated(year) {
        return None;
    }
    let value = day_number_f64(t, format);
    let (other_mjd, other_kind, to_jd) = match format {
        TimeFormat::Mjd | TimeFormat::ReducedJd => (value - MJD_ZERO_JD, "JD", true),
        _ => (value, "MJD", false),
    };
    let other_year = year_of_mjd(other_mjd);
    if !plausible(other_year) {
        return None;
    }
    let label = label();
    Some(format!(
        "{value} read as {label} is in the year {year}, but read as a{} {other_kind} it is in {other_year}: the column holds {other_kind}s; use the clock label '{}'",
        if other_kind == "MJD" { "n" } else { "" },
        relabel(&label, to_jd)
    ))
}

impl TimeSpanCheck {
    /// A check of column `column` of `file`.
    pub fn new(file: &str, column: &str) -> TimeSpanCheck {
        TimeSpanCheck { file: file.to_string(), column: column.to_string(), spans: Vec::new(), other_convention: None }
    }

    /// Records the time `t` of 1-based data row `row`, read with clock `label` in `format`.
    pub fn record(&mut self, row: usize, label: &str, format: TimeFormat, t: &Instant) {
        if format == TimeFormat::Iso {
            return;
        }
        let value = day_number_f64(t, format);
        let mjd = t.mjd_f64();
        if self.other_convention.is_none()
            && let Some(message) = other_convention(t, format, || label.to_string())
        {
            self.other_convention = Some((row, message));
        }
        let here = (value, mjd, row);
        match self.spans.iter_mut().find(|s| s.label == label) {
            Some(s) => {
                if here.1 < s.low.1 {
                    s.low = here;
                }
                if here.1 > s.high.1 {
                    s.high = here;
                }
            }
            None => self.spans.push(LabelSpan { label: label.to_string(), low: here, high: here }),
        }
    }

    /// The verdict: a refusal naming the first row whose value is clearly in the other
    /// day-number convention, else a warning per label whose times lie far from the modern
    /// era.
    pub fn finish(&self) -> Result<Vec<TimeWarning>, TableError> {
        if let Some((row, message)) = &self.other_convention {
            return Err(TableError::Cell {
                file: self.file.clone(),
                row: *row,
                column: self.column.clone(),
                message: message.clone(),
            });
        }
        Ok(self
            .spans
            .iter()
            .filter_map(|s| {
                let (first_year, last_year) = (year_of_mjd(s.low.1), year_of_mjd(s.high.1));
                (!(tolerated(first_year) && tolerated(last_year))).then(|| TimeWarning::FarFromModernEra {
                    file: self.file.clone(),
                    column: self.column.clone(),
                    label: s.label.clone(),
                    first_year,
                    last_year,
                })
            })
            .collect())
    }
}

/// [`TimeSpanCheck`] over times all read with one clock `label` in `format` (`None`: an
/// empty cell, skipped); row `i` of `times` is data row `i + 1`.
pub fn check_times(
    file: &str,
    column: &str,
    label: &str,
    format: TimeFormat,
    times: &[Option<Instant>],
) -> Result<Vec<TimeWarning>, TableError> {
    let mut check = TimeSpanCheck::new(file, column);
    for (i, t) in times.iter().enumerate() {
        if let Some(t) = t {
            check.record(i + 1, label, format, t);
        }
    }
    check.finish()
}

/// Spacing of `f64` values near `x` (one unit in the last place).
fn ulp(x: f64) -> f64 {
    let a = x.abs();
    if a == 0.0 || !a.is_finite() { 0.0 } else { f64::from_bits(a.to_bits() + 1) - a }
}

/// A [`TimeWarning::CoarseFloatColumn`] when column `column` of `df` is stored as a float
/// day count whose `f64` spacing at its largest magnitude exceeds
/// [`MAX_FLOAT_RESOLUTION_US`]; `None` for text and integer columns and fine floats. (A
/// float32 column is judged by its own 23-bit fraction.)
pub fn float_time_resolution(df: &DataFrame, file: &str, column: &str) -> Option<TimeWarning> {
    let col = df.column(column).ok()?;
    let bits32 = match col.dtype() {
        DataType::Float64 => false,
        DataType::Float32 => true,
        _ => return None,
    };
    let as_f64 = col.cast(&DataType::Float64).ok()?;
    let largest = as_f64.f64().ok()?.iter().flatten().filter(|v| v.is_finite()).fold(0.0_f64, |m, v| m.max(v.abs()));
    let spacing_d = if bits32 { f64::from(ulp32(largest as f32)) } else { ulp(largest) };
    let resolution_us = spacing_d * 86_400e6;
    (resolution_us > MAX_FLOAT_RESOLUTION_US).then(|| TimeWarning::CoarseFloatColumn {
        file: file.to_string(),
        column: column.to_string(),
        largest,
        resolution_us,
    })
}

fn ulp32(x: f32) -> f32 {
    let a = x.abs();
    if a == 0.0 || !a.is_finite() { 0.0 } else { f32::from_bits(a.to_bits() + 1) - a }
}

/// MJD of 1 January of `year` (for messages and tests).
pub fn mjd_of_year(year: i64) -> i64 {
    mjd_from_civil(year, 1, 1).unwrap_or(0)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::time::{LeapSecondTable, TimeScale, parse_time};

    fn check(label: &str, format: TimeFormat, values: &[&str]) -> Result<Vec<TimeWarning>, TableError> {
        let leap = LeapSecondTable::builtin();
        let mut c = TimeSpanCheck::new("t.csv", "time");
        for (i, v) in values.iter().enumerate() {
            c.record(i + 1, label, format, &parse_time(v, format, TimeScale::Tdb, &leap).unwrap());
        }
        c.finish()
    }

    #[test]
    fn modern_times_pass_and_historical_ones_are_tolerated() {
        assert_eq!(check("bjd_tdb", TimeFormat::Jd, &["2460000.5", "2460100.5"]).unwrap(), vec![]);
        assert_eq!(check("bmjd_tdb", TimeFormat::Mjd, &["60000.5"]).unwrap(), vec![]);
        // 1850 (a plate minimum) lies within the 100-year margin.
        assert_eq!(check("jd_tt", TimeFormat::Jd, &["2396758.5"]).unwrap(), vec![]);
    }

    #[test]
    fn the_other_convention_is_refused_with_the_label_to_use() {
        // JD 2460000.5 given as an MJD: the year 8594 (proleptic Gregorian calendar, from
        // memory: MJD 0 = 1858-11-17 plus 2460000 d of 365.2425 d ≈ 6735 years).
        let e = check("bmjd_tdb", TimeFormat::Mjd, &["60000.5", "2460000.5"]).unwrap_err().to_string();
        assert!(e.contains("row 2") && e.contains("8594") && e.contains("2023") && e.contains("'bjd_tdb'"), "{e}");
        // MJD 60000 given as a JD: the year −4548 (astronomical year numbering).
        let e = check("jd_tt", TimeFormat::Jd, &["60000.25"]).unwrap_err().to_string();
        assert!(e.contains("row 1") && e.contains("-4548") && e.contains("'mjd_tt'"), "{e}");
        let e = check("hjd_utc", TimeFormat::Jd, &["60000.25"]).unwrap_err().to_string();
        assert!(e.contains("'hmjd_utc'"), "{e}");
    }

    #[test]
    fn far_times_without_another_reading_are_warned_about() {
        let w = check("mjd_tt", TimeFormat::Mjd, &["900000.5"]).unwrap();
        assert!(matches!(&w[..], [TimeWarning::FarFromModernEra { first_year: 4322, .. }]), "{w:?}");
        assert!(w[0].to_string().contains("clock label"), "{}", w[0]);
    }

    #[test]
    fn float_columns_are_judged_by_their_resolution() {
        use polars::prelude::*;
        let df =
            df!("jd" => [2460000.5_f64, 2460001.25], "mjd" => [60000.5_f64, 60001.25], "text" => ["2460000.5", "1"])
                .unwrap();
        let w = float_time_resolution(&df, "t.parquet", "jd").unwrap();
        // f64 spacing at 2^21 d is 2^-31 d = 40.2 µs (IEEE 754 binary64).
        assert!(
            matches!(w, TimeWarning::CoarseFloatColumn { resolution_us, .. } if (resolution_us - 40.23).abs() < 0.01)
        );
        assert!(w.to_string().contains("two columns"), "{w}");
        assert_eq!(float_time_resolution(&df, "t.parquet", "mjd"), None);
        assert_eq!(float_time_resolution(&df, "t.parquet", "text"), None);
        assert_eq!(mjd_of_year(1900), 15020);
    }
}
