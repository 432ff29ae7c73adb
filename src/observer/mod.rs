//! Observers: ground sites on the WGS84 ellipsoid carried into the GCRS with the IAU
//! 2006/2000A precession–nutation and the Earth rotation angle, Earth-orientation tables
//! (UT1 − UTC, polar motion), the geocentre, and spacecraft with tabulated positions.

pub mod earth_orientation;
pub mod site;

pub use earth_orientation::{EarthOrientation, EarthOrientationTable, OrientationValues};
pub use site::{GcrsState, Site, SiteError};

/// Where an arrival time was recorded.
#[derive(Debug, Clone, PartialEq)]
pub enum Observer {
    /// The centre of the Earth.
    Geocentre,
    /// A fixed site on the ground.
    Site(Site),
    /// A spacecraft whose position is given per row.
    Spacecraft(SpacecraftPosition),
}

/// The frame a spacecraft position is given in (axes are ICRS/GCRS in both cases).
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum PositionOrigin {
    /// Relative to the centre of the Earth (GCRS), km.
    Geocentric,
    /// Relative to the solar-system barycentre (BCRS), km.
    Barycentric,
}

/// A spacecraft position for one arrival time, km, with its origin.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SpacecraftPosition {
    /// Position, km, ICRS axes.
    pub position_km: [f64; 3],
    /// What the position is measured from.
    pub origin: PositionOrigin,
}
