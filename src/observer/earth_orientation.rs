//! Earth orientation: UT1 − UTC and polar motion from an IERS `finals2000A`-style table.
//!
//! Without a table, UT1 = UTC and the pole is at the CIP (x_p = y_p = 0). Since
//! |UT1 − UTC| < 0.9 s by definition of UTC, the Earth-rotation angle error is below
//! 0.9 s × 7.29e−5 rad/s = 6.6e−5 rad, which moves a site by < 0.42 m and so its light time
//! by < 1.4 µs; polar motion (< 0.6″, ~20 m) adds < 0.07 µs. Documented bound: ≤1.5 µs.
//!
//! Table format: IERS Rapid Service/Prediction Center `finals2000A.all`/`.data`
//! (fixed columns: MJD in bytes 8–15, Bulletin A x_p 19–27, y_p 38–46 arcsec, UT1−UTC
//! 59–68 s; Bulletin B x_p 135–144, y_p 145–154, UT1−UTC 155–165). Values are interpolated
//! linearly in MJD, Bulletin B preferred where present, UT1−UTC jumps at leap seconds removed
//! before interpolating.

use std::path::Path;

use thiserror::Error;

/// UT1 − UTC and polar motion at one instant.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct OrientationValues {
    /// UT1 − UTC, s.
    pub ut1_minus_utc_s: f64,
    /// Polar motion x_p, rad.
    pub polar_motion_x_rad: f64,
    /// Polar motion y_p, rad.
    pub polar_motion_y_rad: f64,
}

/// Problems reading an Earth-orientation table.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum EarthOrientationError {
    /// The file cannot be opened or read as text.
    #[error("Earth-orientation file {file}: cannot read: {message}")]
    Read {
        /// The file, as given.
        file: String,
        /// The operating system's message.
        message: String,
    },
    /// A line lacks its MJD or holds a field that is not a number.
    #[error("Earth-orientation file {file}, line {line}, columns {columns}: {message}")]
    Parse {
        /// The file, as given.
        file: String,
        /// Line in the file, 1-based.
        line: usize,
        /// The fixed columns of the field, 1-based and inclusive, e.g. `8-15`.
        columns: String,
        /// What is wrong there.
        message: String,
    },
    /// No line of the file has a UT1 − UTC value.
    #[error("Earth-orientation file {file} has no rows with UT1-UTC values")]
    Empty {
        /// The file, as given.
        file: String,
    },
}

/// A loaded table of daily Earth-orientation values.
#[derive(Debug, Clone, PartialEq)]
pub struct EarthOrientationTable {
    mjd: Vec<f64>,
    ut1_minus_utc_s: Vec<f64>,
    x_arcsec: Vec<f64>,
    y_arcsec: Vec<f64>,
    source: String,
}

/// Source of UT1 − UTC and polar motion: none (UT1 = UTC) or a table.
#[derive(Debug, Clone, PartialEq, Default)]
pub enum EarthOrientation {
    /// UT1 = UTC, no polar motion (error ≤ 1.5 µs in light time; see module doc).
    #[default]
    Ignored,
    /// Values from a table; outside its span UT1 = UTC is used and flagged.
    Table(EarthOrientationTable),
}

impl EarthOrientation {
    /// Values at a UTC MJD (as `f64`, ~µs precision is ample here). The flag tells whether
    /// the values came from a table (`true`) or the UT1 = UTC fallback (`false`).
    pub fn at_utc_mjd(&self, utc_mjd: f64) -> (OrientationValues, bool) {
        match self {
            EarthOrientation::Ignored => (OrientationValues::default(), false),
            EarthOrientation::Table(t) => match t.interpolate(utc_mjd) {
                Some(v) => (v, true),
                None => (OrientationValues::default(), false),
            },
        }
    }

    /// Provenance text.
    pub fn describe(&self) -> String {
        match self {
            EarthOrientation::Ignored => "none (UT1 = UTC, no polar motion; light-time error <= 1.5 us)".to_string(),
            EarthOrientation::Table(t) => t.source.clone(),
        }
    }
}

fn field(line: &str, from: usize, to: usize) -> Option<&str> {
    // 1-based inclusive byte columns.
    let s = line.get(from - 1..to.min(line.len()))?;
    let s = s.trim();
    (!s.is_empty()).then_some(s)
}

impl EarthOrientationTable {
    /// Reads an IERS `finals2000A` file (see module doc for the columns).
    pub fn from_file(path: &Path) -> Result<EarthOrientationTable, EarthOrientationError> {
        let name = path.display().to_string();
        let text = std::fs::read_to_string(path)
            .map_err(|e| EarthOrientationError::Read { file: name.clone(), message: e.to_string() })?;
        Self::parse(&text, &name)
    }

    /// Parses the text of a `finals2000A` file; `name` is used in messages.
    pub fn parse(text: &str, name: &str) -> Result<EarthOrientationTable, EarthOrientationError> {
        let mut t = EarthOrientationTable {
            mjd: Vec::new(),
            ut1_minus_utc_s: Vec::new(),
            x_arcsec: Vec::new(),
            y_arcsec: Vec::new(),
            source: String::new(),
        };
        for (i, line) in text.lines().enumerate() {
            if line.trim().is_empty() {
                continue;
            }
            let num = |from: usize, to: usize| -> Result<Option<f64>, EarthOrientationError> {
                match field(line, from, to) {
                    None => Ok(None),
                    Some(s) => s.parse::<f64>().map(Some).map_err(|_| EarthOrientationError::Parse {
                        file: name.to_string(),
                        line: i + 1,
                        columns: format!("{from}-{to}"),
                        message: format!("'{s}' is not a number (expected the finals2000A fixed-column layout)"),
                    }),
                }
            };
            let Some(mjd) = num(8, 15)? else {
                return Err(EarthOrientationError::Parse {
                    file: name.to_string(),
                    line: i + 1,
                    columns: "8-15".to_string(),
                    message: "no MJD (expected the finals2000A fixed-column layout)".to_string(),
                });
            };
            let ut1 = match num(155, 165)? {
                Some(v) => Some(v),
                None => num(59, 68)?,
            };
            let (x, y) = match (num(135, 144)?, num(145, 154)?) {
                (Some(x), Some(y)) => (x, y),
                _ => (num(19, 27)?.unwrap_or(0.0), num(38, 46)?.unwrap_or(0.0)),
            };
            if let Some(u) = ut1 {
                if t.mjd.last().is_some_and(|&m| mjd <= m) {
                    continue;
                }
                t.mjd.push(mjd);
                t.ut1_minus_utc_s.push(u);
                t.x_arcsec.push(x);
                t.y_arcsec.push(y);
            }
        }
        if t.mjd.is_empty() {
            return Err(EarthOrientationError::Empty { file: name.to_string() });
        }
        t.source = format!("{name} (IERS finals2000A layout, MJD {}-{})", t.mjd[0], t.mjd[t.mjd.len() - 1]);
        Ok(t)
    }

    /// Linear interpolation at a UTC MJD; `None` outside the table or across a gap > 1 day.
    pub fn interpolate(&self, utc_mjd: f64) -> Option<OrientationValues> {
        let n = self.mjd.len();
        let i = self.mjd.partition_point(|&m| m <= utc_mjd);
        if i == 0 || i > n {
            return None;
        }
        let lo = i - 1;
        if lo + 1 >= n {
            return (self.mjd[lo] == utc_mjd).then(|| self.values_at(lo, 0.0, 0.0));
        }
        let span = self.mjd[lo + 1] - self.mjd[lo];
        if span > 1.5 {
            return None;
        }
        let w = (utc_mjd - self.mjd[lo]) / span;
        let mut dut = self.ut1_minus_utc_s[lo + 1] - self.ut1_minus_utc_s[lo];
        dut -= dut.round(); // remove a leap-second jump
        Some(self.values_at(lo, w, dut))
    }

    fn values_at(&self, lo: usize, w: f64, dut: f64) -> OrientationValues {
        const ARCSEC: f64 = std::f64::consts::PI / 648_000.0;
        let lerp = |v: &Vec<f64>| if w == 0.0 { v[lo] } else { v[lo] + w * (v[lo + 1] - v[lo]) };
        OrientationValues {
            ut1_minus_utc_s: self.ut1_minus_utc_s[lo] + w * dut,
            polar_motion_x_rad: lerp(&self.x_arcsec) * ARCSEC,
            polar_motion_y_rad: lerp(&self.y_arcsec) * ARCSEC,
        }
    }
}
