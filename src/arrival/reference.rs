//! The reference data of a correction: solar-system ephemeris, leap seconds and Earth
//! orientation, loaded once from optional files (built-in defaults otherwise) and shared by
//! every corrector made from them.

use std::path::Path;

use crate::ephemeris::{EphemerisError, SharedEphemeris, SpkKernel, embedded};
use crate::observer::earth_orientation::EarthOrientationError;
use crate::observer::{EarthOrientation, EarthOrientationTable};
use crate::time::{LeapSecondTable, ScaleConverter, TimeError};

use super::{BarycentricCorrector, DelayOptions, Source};

/// A reference-data file that could not be loaded; each variant names the file.
#[derive(Debug, thiserror::Error)]
pub enum ReferenceDataError {
    /// The SPK kernel could not be opened or read.
    #[error("opening ephemeris kernel {path}: {source}")]
    Kernel {
        /// The kernel file as given.
        path: String,
        /// Why it was refused.
        source: EphemerisError,
    },
    /// The leap-second table could not be read.
    #[error("reading leap-second table {path}: {source}")]
    LeapSeconds {
        /// The table file as given.
        path: String,
        /// Why it was refused.
        source: TimeError,
    },
    /// The Earth-orientation table could not be read.
    #[error("reading Earth-orientation table {path}: {source}")]
    EarthOrientation {
        /// The table file as given.
        path: String,
        /// Why it was refused.
        source: EarthOrientationError,
    },
}

/// Ephemeris, leap seconds and Earth orientation of a run. Cloning is cheap (the ephemeris
/// is shared); the value may be held across threads.
#[derive(Debug, Clone)]
pub struct ReferenceData {
    /// Solar-system ephemeris.
    pub ephemeris: SharedEphemeris,
    /// Scale converter with the leap-second table.
    pub converter: ScaleConverter,
    /// Earth orientation (UT1 − UTC, polar motion), or none (UT1 = UTC).
    pub orientation: EarthOrientation,
}

impl Default for ReferenceData {
    /// The built-in DE440 pack, the built-in leap-second table, no Earth-orientation table.
    fn default() -> Self {
        ReferenceData {
            ephemeris: embedded().into(),
            converter: ScaleConverter::new(LeapSecondTable::builtin()),
            orientation: EarthOrientation::Ignored,
        }
    }
}

impl ReferenceData {
    /// Loads the files given; each one left out is replaced by its built-in default.
    pub fn load(
        kernel: Option<&Path>,
        leap_seconds: Option<&Path>,
        earth_orientation: Option<&Path>,
    ) -> Result<ReferenceData, ReferenceDataError> {
        let ephemeris: SharedEphemeris = match kernel {
            Some(p) => SpkKernel::open(p)
                .map_err(|source| ReferenceDataError::Kernel { path: p.display().to_string(), source })?
                .into(),
            None => embedded().into(),
        };
        let leap = match leap_seconds {
            Some(p) => LeapSecondTable::from_file(p)
                .map_err(|source| ReferenceDataError::LeapSeconds { path: p.display().to_string(), source })?,
            None => LeapSecondTable::builtin(),
        };
        let orientation = match earth_orientation {
            Some(p) => EarthOrientation::Table(
                EarthOrientationTable::from_file(p)
                    .map_err(|source| ReferenceDataError::EarthOrientation { path: p.display().to_string(), source })?,
            ),
            None => EarthOrientation::Ignored,
        };
        Ok(ReferenceData { ephemeris, converter: ScaleConverter::new(leap), orientation })
    }

    /// A corrector towards `source` with these reference data and the given delays.
    pub fn corrector(&self, source: Source, options: DelayOptions) -> BarycentricCorrector {
        BarycentricCorrector::new(
            self.ephemeris.clone(),
            self.converter.clone(),
            self.orientation.clone(),
            source,
            options,
        )
    }

    /// The names of the three data sets, for provenance and summaries.
    pub fn names(&self) -> ReferenceNames {
        ReferenceNames {
            ephemeris: self.ephemeris.name(),
            leap_seconds: self.converter.leap_seconds().source().to_string(),
            earth_orientation: self.orientation.describe(),
        }
    }
}

/// The names of the reference data a result was computed with.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct ReferenceNames {
    /// Name of the solar-system ephemeris (built-in pack or kernel file).
    pub ephemeris: String,
    /// Source of the leap-second table.
    pub leap_seconds: String,
    /// Earth-orientation table, or a note that UT1 = UTC was assumed.
    pub earth_orientation: String,
}
