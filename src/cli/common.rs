//! Options shared by several commands: ephemeris, leap seconds, Earth orientation, site and
//! source descriptions.

use std::path::PathBuf;

use anyhow::{Context, Result, bail};
use clap::Args as ClapArgs;

use skyclock::arrival::Source;
use skyclock::config::{Description, parse_epoch, read_description};
use skyclock::observer::Site;

/// Where solar-system positions, leap seconds and Earth orientation come from.
#[derive(Debug, Clone, ClapArgs)]
pub struct ReferenceDataArgs {
    /// JPL SPK kernel (DE440, DE441, DE421 …) to use instead of the built-in DE440 pack.
    #[arg(long, value_name = "FILE")]
    pub ephemeris_kernel: Option<PathBuf>,
    /// Leap-second table (IERS Leap_Second.dat or leap-seconds.list) newer than the built-in one.
    #[arg(long, value_name = "FILE")]
    pub leap_seconds: Option<PathBuf>,
    /// IERS finals2000A table for UT1-UTC and polar motion (without it UT1 = UTC, ≤1.5 µs error).
    #[arg(long, value_name = "FILE")]
    pub earth_orientation: Option<PathBuf>,
}

/// The loaded reference data (the library type).
pub use skyclock::arrival::ReferenceData;

impl ReferenceDataArgs {
    /// Loads what the options name, or the built-in defaults.
    pub fn load(&self) -> Result<ReferenceData> {
        Ok(ReferenceData::load(
            self.ephemeris_kernel.as_deref(),
            self.leap_seconds.as_deref(),
            self.earth_orientation.as_deref(),
        )?)
    }
}

/// Where the source is described.
#[derive(Debug, Clone, ClapArgs)]
pub struct SourceArgs {
    /// TOML file with a [source] table (name, ra, dec, optional proper motion, parallax, radial velocity, epoch).
    #[arg(long, value_name = "FILE")]
    pub source_file: Option<PathBuf>,
    /// Right ascension: hh:mm:ss.s or decimal degrees (instead of --source-file).
    #[arg(long, value_name = "ANGLE", allow_hyphen_values = true)]
    pub ra: Option<String>,
    /// Declination: ±dd:mm:ss.s or decimal degrees (instead of --source-file).
    #[arg(long, value_name = "ANGLE", allow_hyphen_values = true)]
    pub dec: Option<String>,
    /// Proper motion in RA times cos(dec), mas/yr.
    #[arg(long, default_value_t = 0.0, allow_hyphen_values = true)]
    pub proper_motion_ra_mas_per_yr: f64,
    /// Proper motion in Dec, mas/yr.
    #[arg(long, default_value_t = 0.0, allow_hyphen_values = true)]
    pub proper_motion_dec_mas_per_yr: f64,
    /// Parallax, mas (adds the wavefront-curvature term).
    #[arg(long, default_value_t = 0.0)]
    pub parallax_mas: f64,
    /// Radial velocity, km/s.
    #[arg(long, default_value_t = 0.0, allow_hyphen_values = true)]
    pub radial_velocity_km_per_s: f64,
    /// Epoch of the position and motion: J2016.0, an ISO date (TDB) or a JD (TDB).
    #[arg(long, default_value = "J2000.0")]
    pub position_epoch: String,
}

impl SourceArgs {
    /// The source, from the file or the command line.
    pub fn load(&self, sites_file: Option<&Description>) -> Result<Source> {
        if let Some(path) = &self.source_file {
            let d = read_description(path)?;
            return d.source.with_context(|| format!("{} has no [source] table", path.display()));
        }
        if let (Some(ra), Some(dec)) = (&self.ra, &self.dec) {
            let ra_deg = skyclock::arrival::parse_right_ascension_deg(ra).map_err(anyhow::Error::msg)?;
            let dec_deg = skyclock::arrival::parse_declination_deg(dec).map_err(anyhow::Error::msg)?;
            let mut s = Source::fixed_degrees("source", ra_deg, dec_deg).map_err(anyhow::Error::msg)?;
            s.proper_motion_ra_mas_per_yr = self.proper_motion_ra_mas_per_yr;
            s.proper_motion_dec_mas_per_yr = self.proper_motion_dec_mas_per_yr;
            if self.parallax_mas < 0.0 || !self.parallax_mas.is_finite() {
                bail!("--parallax-mas must be a non-negative number, got {}", self.parallax_mas);
            }
            skyclock::arrival::source::check_space_motion(
                "source",
                self.proper_motion_ra_mas_per_yr,
                self.proper_motion_dec_mas_per_yr,
                self.parallax_mas,
                self.radial_velocity_km_per_s,
            )
            .map_err(|e| anyhow::anyhow!("{e} (--{})", e_key(&e)))?;
            s.parallax_mas = self.parallax_mas;
            s.radial_velocity_km_per_s = self.radial_velocity_km_per_s;
            s.epoch = parse_epoch(&self.position_epoch).map_err(|m| anyhow::anyhow!("--position-epoch: {m}"))?;
            return Ok(s);
        }
        if let Some(s) = sites_file.and_then(|d| d.source.clone()) {
            return Ok(s);
        }
        bail!("no source given: use --source-file FILE or --ra and --dec")
    }
}

/// The command-line option of a space-motion key named in `e`.
fn e_key(e: &skyclock::arrival::source::CoordinateError) -> String {
    match e {
        skyclock::arrival::source::CoordinateError::SpaceMotionRange { key, .. } => key.replace('_', "-"),
        _ => String::new(),
    }
}

/// Where the observer is.
#[derive(Debug, Clone, ClapArgs)]
pub struct ObserverArgs {
    /// TOML file with one or more [[site]] tables (name, east_longitude_deg, latitude_deg, height_m).
    #[arg(long, value_name = "FILE")]
    pub sites_file: Option<PathBuf>,
    /// Name of the site (from --sites-file) where all times were taken.
    #[arg(long, value_name = "NAME")]
    pub site: Option<String>,
    /// Column naming the site of each row (names from --sites-file, or 'geocentre').
    #[arg(long, value_name = "COLUMN")]
    pub site_column: Option<String>,
    /// A site given inline as east longitude deg, latitude deg, height m: "-105.1,39.4,2150".
    #[arg(long, value_name = "LON,LAT,HEIGHT", allow_hyphen_values = true)]
    pub site_coordinates: Option<String>,
    /// Spacecraft position columns x,y,z in km (ICRS axes), e.g. "sc_x_km,sc_y_km,sc_z_km".
    #[arg(long, value_name = "X,Y,Z")]
    pub spacecraft_columns: Option<String>,
    /// Whether spacecraft positions are geocentric or barycentric.
    #[arg(long, value_enum, default_value_t = OriginArg::Geocentric)]
    pub spacecraft_origin: OriginArg,
}

/// Origin of spacecraft positions.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum OriginArg {
    /// Relative to the Earth's centre.
    Geocentric,
    /// Relative to the solar-system barycentre.
    Barycentric,
}

impl ObserverArgs {
    /// The description file, if any.
    pub fn description(&self) -> Result<Option<Description>> {
        Ok(match &self.sites_file {
            Some(p) => Some(read_description(p)?),
            None => None,
        })
    }

    /// A single site from --site or --site-coordinates, if given.
    pub fn single_site(&self, description: Option<&Description>) -> Result<Option<Site>> {
        if let Some(coords) = &self.site_coordinates {
            let parts: Vec<&str> = coords.split(',').map(str::trim).collect();
            if parts.len() != 3 {
                bail!("--site-coordinates wants 'east_longitude_deg,latitude_deg,height_m', got '{coords}'");
            }
            let mut v = [0.0; 3];
            for (k, p) in parts.iter().enumerate() {
                v[k] = p.parse().with_context(|| format!("--site-coordinates: '{p}' is not a number"))?;
            }
            return Ok(Some(Site::from_degrees("site", v[0], v[1], v[2]).map_err(anyhow::Error::msg)?));
        }
        if let Some(name) = &self.site {
            let Some(d) = description else {
                bail!("--site {name} needs --sites-file FILE describing it");
            };
            let site = d.sites.get(name).cloned().with_context(|| {
                format!(
                    "site '{name}' is not in the sites file; described: {}",
                    d.sites.keys().cloned().collect::<Vec<_>>().join(", ")
                )
            })?;
            return Ok(Some(site));
        }
        Ok(None)
    }
}

/// The clock of a table: one label for all rows (`--clock`) or a column of labels
/// (`--clock-column`, returned as `None`); exactly one must be given. `example` is the
/// label shown in the message when neither is.
pub fn clock_choice(
    clock: &Option<String>,
    clock_column: &Option<String>,
    example: &str,
) -> Result<Option<skyclock::arrival::table::ClockSpec>> {
    match (clock, clock_column) {
        (Some(_), Some(_)) => bail!("give either --clock or --clock-column, not both"),
        (None, None) => {
            bail!("say how the times are written: --clock {example} (for example) or --clock-column COLUMN")
        }
        (Some(label), None) => {
            Ok(Some(skyclock::arrival::table::ClockSpec::parse_label(label).map_err(anyhow::Error::msg)?))
        }
        (None, Some(_)) => Ok(None),
    }
}

impl ObserverArgs {
    /// Who observed each row: spacecraft columns, a site column, one site, or the geocentre.
    pub fn observer_spec(&self, description: Option<&Description>) -> Result<skyclock::arrival::table::ObserverSpec> {
        use skyclock::arrival::table::ObserverSpec;
        if let Some(cols) = &self.spacecraft_columns {
            let parts: Vec<String> = cols.split(',').map(|s| s.trim().to_string()).collect();
            if parts.len() != 3 {
                bail!("--spacecraft-columns wants three column names x,y,z, got '{cols}'");
            }
            return Ok(ObserverSpec::Spacecraft {
                columns: [parts[0].clone(), parts[1].clone(), parts[2].clone()],
                origin: match self.spacecraft_origin {
                    OriginArg::Geocentric => skyclock::observer::PositionOrigin::Geocentric,
                    OriginArg::Barycentric => skyclock::observer::PositionOrigin::Barycentric,
                },
            });
        }
        if let Some(column) = &self.site_column {
            let Some(d) = description else {
                bail!("--site-column needs --sites-file FILE describing the sites");
            };
            return Ok(ObserverSpec::SiteColumn { column: column.clone(), sites: d.sites.clone() });
        }
        Ok(match self.single_site(description)? {
            Some(site) => ObserverSpec::Site(site),
            None => ObserverSpec::Geocentre,
        })
    }

    /// As [`ObserverArgs::observer_spec`], and says once on stderr (unless `quiet`) when the
    /// geocentre is assumed because no site was given. `clock_is_barycentric` (times already
    /// in BJD or HJD) suppresses the note: such times need no site.
    pub fn observer_spec_noting(
        &self,
        description: Option<&Description>,
        clock_is_barycentric: bool,
        quiet: bool,
    ) -> Result<skyclock::arrival::table::ObserverSpec> {
        let spec = self.observer_spec(description)?;
        if matches!(spec, skyclock::arrival::table::ObserverSpec::Geocentre) && !clock_is_barycentric {
            note_geocentre(quiet);
        }
        Ok(spec)
    }

    /// The single observer of a command: a site from --site/--site-coordinates, or the
    /// geocentre, said once on stderr (unless `quiet`).
    pub fn single_observer_noting(
        &self,
        description: Option<&Description>,
        quiet: bool,
    ) -> Result<skyclock::observer::Observer> {
        Ok(match self.single_site(description)? {
            Some(site) => skyclock::observer::Observer::Site(site),
            None => {
                note_geocentre(quiet);
                skyclock::observer::Observer::Geocentre
            }
        })
    }
}

/// The note printed when no site was given.
pub const GEOCENTRE_NOTE: &str = "note: no site given (--site, --site-coordinates, --site-column or --spacecraft-columns); times are taken as observed at the geocentre";

/// Prints the library's warnings about the times read (always: `--quiet` keeps warnings).
pub fn print_time_warnings(warnings: &[skyclock::table::plausibility::TimeWarning]) {
    for w in warnings {
        eprintln!("warning: {w}");
    }
}

/// A count with its noun in the right number: `counted(1, "row", "rows")` is "1 row".
pub fn counted(n: usize, singular: &str, plural: &str) -> String {
    format!("{n} {}", if n == 1 { singular } else { plural })
}

/// Prints [`GEOCENTRE_NOTE`] on stderr unless `quiet`.
pub fn note_geocentre(quiet: bool) {
    if !quiet {
        eprintln!("{GEOCENTRE_NOTE}");
    }
}

/// A progress spinner on stderr, hidden when stderr is not a terminal or `quiet`.
pub fn spinner(message: &str, quiet: bool) -> indicatif::ProgressBar {
    use std::io::IsTerminal;
    if quiet || !std::io::stderr().is_terminal() {
        return indicatif::ProgressBar::hidden();
    }
    let pb = indicatif::ProgressBar::new_spinner();
    pb.set_message(message.to_string());
    pb.enable_steady_tick(std::time::Duration::from_millis(120));
    pb
}

/// Writes `text` to `path` atomically, refusing to overwrite an input.
pub fn write_text(path: &std::path::Path, text: &str, inputs: &[&std::path::Path]) -> Result<()> {
    use std::io::Write;
    skyclock::table::refuse_overwriting_inputs(path, inputs)?;
    skyclock::table::write::write_atomically(path, |f| f.write_all(text.as_bytes()))?;
    Ok(())
}

/// A progress bar on stderr for `total` steps with rate and ETA, hidden when stderr is not
/// a terminal or `quiet` is set.
pub fn progress_bar(total: u64, message: &str, quiet: bool) -> indicatif::ProgressBar {
    use std::io::IsTerminal;
    if quiet || !std::io::stderr().is_terminal() {
        return indicatif::ProgressBar::hidden();
    }
    let pb = indicatif::ProgressBar::new(total);
    pb.set_style(
        indicatif::ProgressStyle::with_template("{msg} {bar:30} {pos}/{len}  {per_sec}  elapsed {elapsed}, ETA {eta}")
            .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar()),
    );
    pb.set_message(message.to_string());
    pb
}

/// How the values of a light curve are written (`--brightness`, one meaning in every command).
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum BrightnessArg {
    /// Magnitudes (larger is fainter).
    Magnitude,
    /// Fluxes (larger is brighter).
    Flux,
}
