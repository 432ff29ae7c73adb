//! Descriptions of sites and sources in TOML files, with descriptive keys that carry units.
//!
//! ```toml
//! [[site]]
//! name = "Ridge Hollow Observatory"
//! east_longitude_deg = -105.123    # east positive
//! latitude_deg = 39.456
//! height_m = 2150.0
//!
//! [source]
//! name = "V999 Inventa"
//! ra = "05:12:33.21"              # hours:minutes:seconds, or decimal degrees as a number
//! dec = "+21:07:44.0"             # degrees:arcmin:arcsec, or decimal degrees
//! proper_motion_ra_mas_per_yr = 12.5   # μ_α cos δ
//! proper_motion_dec_mas_per_yr = -3.1
//! parallax_mas = 4.2
//! radial_velocity_km_per_s = -17.0
//! position_epoch = "2016-01-01T12:00:00"   # TDB; default J2000.0 (2000-01-01T12:00:00 TDB)
//! ```

use crate::constants::SECONDS_PER_DAY;
use std::collections::BTreeMap;
use std::path::Path;

use serde::Deserialize;
use thiserror::Error;

use crate::arrival::{Source, parse_declination_deg, parse_right_ascension_deg};
use crate::observer::Site;
use crate::time::{Instant, LeapSecondTable, TimeFormat, TimeScale, parse_time};

/// A problem in a site/source description.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum ConfigError {
    /// The description file cannot be opened or read as text.
    #[error("{file}: cannot read: {message}")]
    Read {
        /// The file, as given.
        file: String,
        /// The operating system's message.
        message: String,
    },
    /// The file is not valid TOML, or a site or the source in it cannot be used.
    #[error("{file}: {message}")]
    Invalid {
        /// The file, as given.
        file: String,
        /// What is wrong: the TOML reader's message, or the site or source at fault.
        message: String,
    },
}

/// A source entry of a description that cannot be used.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum SourceEntryError {
    /// `ra` as a number outside 0..360°.
    #[error("source '{name}': ra = {value} is outside 0..360 degrees")]
    RightAscensionRange {
        /// Source name.
        name: String,
        /// The value given, degrees.
        value: f64,
    },
    /// `dec` as a number beyond ±90°.
    #[error("source '{name}': dec = {value} is beyond ±90 degrees")]
    DeclinationRange {
        /// Source name.
        name: String,
        /// The value given, degrees.
        value: f64,
    },
    /// A coordinate written as text that cannot be read.
    #[error(transparent)]
    Coordinate(#[from] crate::arrival::source::CoordinateError),
    /// A space-motion value that is NaN or infinite.
    #[error("source '{name}': {key} must be a finite number")]
    NotFinite {
        /// Source name.
        name: String,
        /// The key, e.g. `parallax_mas`.
        key: &'static str,
    },
    /// A negative parallax.
    #[error("source '{name}': parallax_mas = {value} is negative")]
    NegativeParallax {
        /// Source name.
        name: String,
        /// The value given, mas.
        value: f64,
    },
    /// A position epoch that cannot be read.
    #[error("source '{name}': position_epoch: {error}")]
    Epoch {
        /// Source name.
        name: String,
        /// Why.
        error: EpochError,
    },
}

/// An epoch text that is neither a Julian epoch, an ISO date nor a Julian Date.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum EpochError {
    /// `J…` not followed by a number.
    #[error("'{text}' is not a Julian epoch such as J2016.0")]
    NotJulianEpoch {
        /// The text given.
        text: String,
    },
    /// ISO or JD text that does not parse.
    #[error(transparent)]
    Time(#[from] crate::time::TimeError),
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct SiteEntry {
    name: String,
    east_longitude_deg: f64,
    latitude_deg: f64,
    height_m: f64,
}

#[derive(Debug, Deserialize)]
#[serde(untagged)]
enum Angle {
    Number(f64),
    Text(String),
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct SourceEntry {
    name: String,
    ra: Angle,
    dec: Angle,
    #[serde(default)]
    proper_motion_ra_mas_per_yr: f64,
    #[serde(default)]
    proper_motion_dec_mas_per_yr: f64,
    #[serde(default)]
    parallax_mas: f64,
    #[serde(default)]
    radial_velocity_km_per_s: f64,
    position_epoch: Option<String>,
}

#[derive(Debug, Deserialize, Default)]
#[serde(deny_unknown_fields)]
struct Document {
    #[serde(default)]
    site: Vec<SiteEntry>,
    source: Option<SourceEntry>,
}

/// Sites and source read from a description file.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Description {
    /// Sites by name, in file order.
    pub sites: BTreeMap<String, Site>,
    /// The source, if the file has one.
    pub source: Option<Source>,
}

/// Reads a TOML description file (see module doc).
pub fn read_description(path: &Path) -> Result<Description, ConfigError> {
    let file = path.display().to_string();
    let text =
        std::fs::read_to_string(path).map_err(|e| ConfigError::Read { file: file.clone(), message: e.to_string() })?;
    parse_description(&text, &file)
}

/// Parses the text of a description; `file` is used in messages.
pub fn parse_description(text: &str, file: &str) -> Result<Description, ConfigError> {
    let invalid = |message: String| ConfigError::Invalid { file: file.to_string(), message };
    let doc: Document = toml::from_str(text).map_err(|e| invalid(e.to_string()))?;
    let mut out = Description::default();
    for s in doc.site {
        let site = Site::from_degrees(&s.name, s.east_longitude_deg, s.latitude_deg, s.height_m)
            .map_err(|e| invalid(e.to_string()))?;
        if out.sites.insert(s.name.clone(), site).is_some() {
            return Err(invalid(format!("site '{}' is described twice", s.name)));
        }
    }
    if let Some(src) = doc.source {
        out.source = Some(source_from_entry(src).map_err(|e| invalid(e.to_string()))?);
    }
    Ok(out)
}

fn source_from_entry(e: SourceEntry) -> Result<Source, SourceEntryError> {
    let ra_deg = match e.ra {
        Angle::Number(v) => {
            if !(0.0..360.0).contains(&v) {
                return Err(SourceEntryError::RightAscensionRange { name: e.name, value: v });
            }
            v
        }
        Angle::Text(t) => parse_right_ascension_deg(&t)?,
    };
    let dec_deg = match e.dec {
        Angle::Number(v) => {
            if !(-90.0..=90.0).contains(&v) {
                return Err(SourceEntryError::DeclinationRange { name: e.name, value: v });
            }
            v
        }
        Angle::Text(t) => parse_declination_deg(&t)?,
    };
    let mut source = Source::fixed_degrees(&e.name, ra_deg, dec_deg)?;
    for (key, v) in [
        ("proper_motion_ra_mas_per_yr", e.proper_motion_ra_mas_per_yr),
        ("proper_motion_dec_mas_per_yr", e.proper_motion_dec_mas_per_yr),
        ("parallax_mas", e.parallax_mas),
        ("radial_velocity_km_per_s", e.radial_velocity_km_per_s),
    ] {
        if !v.is_finite() {
            return Err(SourceEntryError::NotFinite { name: e.name, key });
        }
    }
    if e.parallax_mas < 0.0 {
        return Err(SourceEntryError::NegativeParallax { name: e.name, value: e.parallax_mas });
    }
    crate::arrival::source::check_space_motion(
        &e.name,
        e.proper_motion_ra_mas_per_yr,
        e.proper_motion_dec_mas_per_yr,
        e.parallax_mas,
        e.radial_velocity_km_per_s,
    )?;
    source.proper_motion_ra_mas_per_yr = e.proper_motion_ra_mas_per_yr;
    source.proper_motion_dec_mas_per_yr = e.proper_motion_dec_mas_per_yr;
    source.parallax_mas = e.parallax_mas;
    source.radial_velocity_km_per_s = e.radial_velocity_km_per_s;
    if let Some(epoch) = e.position_epoch {
        source.epoch = parse_epoch(&epoch).map_err(|error| SourceEntryError::Epoch { name: e.name.clone(), error })?;
    }
    Ok(source)
}

/// Reads an epoch: ISO 8601 (TDB), `J2000`/`J2016.0` (Julian epochs, TDB), or a JD number.
pub fn parse_epoch(text: &str) -> Result<Instant, EpochError> {
    let t = text.trim();
    if let Some(years) = t.strip_prefix('J').or_else(|| t.strip_prefix('j')) {
        let y: f64 = years.parse().map_err(|_| EpochError::NotJulianEpoch { text: t.to_string() })?;
        // Julian epoch: JD = 2451545.0 + (y - 2000) * 365.25 (IAU 1976; common practice).
        return Ok(Instant::from_seconds_since_j2000(TimeScale::Tdb, (y - 2000.0) * 365.25 * SECONDS_PER_DAY));
    }
    let format = if t.contains('-') && t.len() >= 10 { TimeFormat::Iso } else { TimeFormat::Jd };
    Ok(parse_time(t, format, TimeScale::Tdb, &LeapSecondTable::builtin())?)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_sites_and_source() {
        let text = r#"
[[site]]
name = "Ridge Hollow"
east_longitude_deg = -105.1
latitude_deg = 39.4
height_m = 2150.0

[[site]]
name = "Saltbush Plain"
east_longitude_deg = 23.5
latitude_deg = -30.6
height_m = 1800.0

[source]
name = "V999 Inventa"
ra = "05:12:33.21"
dec = -21.5
parallax_mas = 4.2
position_epoch = "J2016.0"
"#;
        let d = parse_description(text, "demo.toml").unwrap();
        assert_eq!(d.sites.len(), 2);
        let s = d.source.unwrap();
        assert!((s.ra_rad.to_degrees() - 78.138_375).abs() < 1e-9);
        assert_eq!(s.parallax_mas, 4.2);
    }

    #[test]
    fn errors_name_the_file_and_key() {
        let e = parse_description("[source]\nname='x'\nra=10\ndec=95\n", "bad.toml").unwrap_err();
        assert!(e.to_string().contains("bad.toml") && e.to_string().contains("dec"), "{e}");
        let e = parse_description("[[site]]\nname='x'\neast_longitude_deg=1\nlatitude=2\nheight_m=0\n", "s.toml")
            .unwrap_err();
        assert!(e.to_string().contains("latitude"), "{e}");
    }
}
