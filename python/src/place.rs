//! Where the observer and the source are, and which reference data to use: the Python
//! keywords `site`, `sites_file`, `source_file`, `ra`, `dec`, … read into the library's
//! types, with the same rules and messages as the command line's options.

use std::path::PathBuf;

use pyo3::PyResult;
use skyclock::arrival::table::{ClockSpec, ObserverSpec};
use skyclock::arrival::{ReferenceData, ReferencePoint, Source};
use skyclock::config::{Description, parse_epoch, read_description};
use skyclock::observer::{Observer, Site};

use crate::convert::error;

/// A site: a name described in `sites_file`, or east longitude (deg), latitude (deg) and
/// height (m) on the WGS84 ellipsoid.
#[derive(Debug, Clone, serde::Deserialize)]
#[serde(untagged)]
pub enum SiteChoice {
    Named(String),
    Coordinates([f64; 3]),
}

/// The place options shared by every binding that needs them.
#[derive(Debug, Clone, serde::Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Place {
    #[serde(default)]
    pub site: Option<SiteChoice>,
    #[serde(default)]
    pub sites_file: Option<PathBuf>,
    #[serde(default)]
    pub source_file: Option<PathBuf>,
    #[serde(default)]
    pub ra: Option<String>,
    #[serde(default)]
    pub dec: Option<String>,
    #[serde(default)]
    pub proper_motion_ra_mas_per_yr: f64,
    #[serde(default)]
    pub proper_motion_dec_mas_per_yr: f64,
    #[serde(default)]
    pub parallax_mas: f64,
    #[serde(default)]
    pub radial_velocity_km_per_s: f64,
    #[serde(default = "default_epoch")]
    pub position_epoch: String,
    #[serde(default)]
    pub ephemeris_kernel: Option<PathBuf>,
    #[serde(default)]
    pub leap_seconds: Option<PathBuf>,
    #[serde(default)]
    pub earth_orientation: Option<PathBuf>,
}

fn default_epoch() -> String {
    "J2000.0".into()
}

impl Place {
    /// The sites/source description file, if named.
    pub fn description(&self) -> PyResult<Option<Description>> {
        self.sites_file.as_deref().map(read_description).transpose().map_err(error)
    }

    /// Ephemeris, leap seconds and Earth orientation: the files named, or the built-in ones.
    pub fn reference(&self) -> PyResult<ReferenceData> {
        ReferenceData::load(
            self.ephemeris_kernel.as_deref(),
            self.leap_seconds.as_deref(),
            self.earth_orientation.as_deref(),
        )
        .map_err(error)
    }

    /// The single site, if one was given.
    pub fn single_site(&self, description: Option<&Description>) -> PyResult<Option<Site>> {
        match &self.site {
            None => Ok(None),
            Some(SiteChoice::Coordinates([lon, lat, h])) => {
                Site::from_degrees("site", *lon, *lat, *h).map(Some).map_err(|e| error(format!("site: {e}")))
            }
            Some(SiteChoice::Named(name)) => {
                let Some(d) = description else {
                    return Err(error(format!("site '{name}' needs sites_file= naming a file that describes it")));
                };
                d.sites.get(name).cloned().map(Some).ok_or_else(|| {
                    error(format!(
                        "site '{name}' is not in the sites file; described: {}",
                        d.sites.keys().cloned().collect::<Vec<_>>().join(", ")
                    ))
                })
            }
        }
    }

    /// The single observer: the site, or the geocentre without one.
    pub fn observer(&self, description: Option<&Description>) -> PyResult<Observer> {
        Ok(match self.single_site(description)? {
            Some(s) => Observer::Site(s),
            None => Observer::Geocentre,
        })
    }

    /// Who observed each row: a site per row (`site_column` names the table's column of
    /// site names, looked up in `sites_file`), one site, or the geocentre.
    pub fn observer_spec(
        &self,
        description: Option<&Description>,
        site_column: Option<&str>,
    ) -> PyResult<ObserverSpec> {
        if let Some(column) = site_column {
            let Some(d) = description else {
                return Err(error("site_names= needs sites_file= naming a file that describes the sites"));
            };
            return Ok(ObserverSpec::SiteColumn { column: column.to_string(), sites: d.sites.clone() });
        }
        Ok(match self.single_site(description)? {
            Some(site) => ObserverSpec::Site(site),
            None => ObserverSpec::Geocentre,
        })
    }

    /// The source: from `source_file`, from `ra`/`dec`, or from the `[source]` table of the
    /// sites file.
    pub fn source(&self, description: Option<&Description>) -> PyResult<Source> {
        if let Some(path) = &self.source_file {
            let d = read_description(path).map_err(error)?;
            return d.source.ok_or_else(|| error(format!("{} has no [source] table", path.display())));
        }
        if let (Some(ra), Some(dec)) = (&self.ra, &self.dec) {
            let ra_deg = skyclock::arrival::parse_right_ascension_deg(ra).map_err(error)?;
            let dec_deg = skyclock::arrival::parse_declination_deg(dec).map_err(error)?;
            let mut s = Source::fixed_degrees("source", ra_deg, dec_deg).map_err(error)?;
            s.proper_motion_ra_mas_per_yr = self.proper_motion_ra_mas_per_yr;
            s.proper_motion_dec_mas_per_yr = self.proper_motion_dec_mas_per_yr;
            if self.parallax_mas < 0.0 || !self.parallax_mas.is_finite() {
                return Err(error(format!("parallax_mas must be a non-negative number, got {}", self.parallax_mas)));
            }
            s.parallax_mas = self.parallax_mas;
            s.radial_velocity_km_per_s = self.radial_velocity_km_per_s;
            s.epoch = parse_epoch(&self.position_epoch).map_err(|m| error(format!("position_epoch: {m}")))?;
            return Ok(s);
        }
        if self.ra.is_some() != self.dec.is_some() {
            return Err(error("give both ra= and dec=, or source_file="));
        }
        if let Some(s) = description.and_then(|d| d.source.clone()) {
            return Ok(s);
        }
        Err(error("no source given: use source_file= or ra= and dec="))
    }

    /// The source, unless the clock is already barycentric and no source was given (then
    /// a placeholder that no correction uses, named as the command line names it).
    pub fn source_unless_barycentric(
        &self,
        clock: Option<&ClockSpec>,
        description: Option<&Description>,
    ) -> PyResult<Source> {
        let barycentric = clock.is_some_and(|c| c.reference == ReferencePoint::Barycentric);
        let given = self.source_file.is_some()
            || self.ra.is_some()
            || self.dec.is_some()
            || description.is_some_and(|d| d.source.is_some());
        if barycentric && !given {
            return Source::fixed_degrees("none needed: times already barycentric", 0.0, 0.0).map_err(error);
        }
        self.source(description)
    }
}

/// A clock label (`jd_utc`, `bjd_tdb`, …) as the library reads it.
pub fn clock(label: &str) -> PyResult<ClockSpec> {
    ClockSpec::parse_label(label).map_err(error)
}
