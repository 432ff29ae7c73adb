//! Where the target, the Sun and the Moon stand in a site's sky at one instant: topocentric
//! altitude and azimuth, the target's angular distance from the Sun and the Moon, and the
//! Moon's illuminated fraction; plus the twilight class of the Sun's altitude.
//!
//! Method. Directions are formed in the GCRS (ICRS axes, geocentric) and projected on the
//! site's local frame: the geodetic vertical, north and east of the WGS84 site are carried
//! from the terrestrial frame into the GCRS with the same IAU 2006/2000A chain that places
//! the site ([`crate::observer::site::terrestrial_to_gcrs_matrix`]). Altitude is the angle
//! above the plane perpendicular to the geodetic vertical; azimuth counts from north
//! through east.
//! - Target: the source direction at the date (space motion by SOFA `iauPmsafe`), seen from
//!   the site (parallax applied when given), with annual + diurnal aberration (SOFA `iauAb`).
//! - Sun: barycentric positions of the Sun and the Earth from the project's ephemeris (the
//!   embedded DE440 pack by default), light time to the Sun iterated once, aberration as above.
//! - Moon: the low-precision formulae of the Astronomical Almanac (section D, "low-precision
//!   formulae for the Moon", valid 1900–2100, stated accuracy ≈0.3° in longitude, 0.2° in
//!   latitude; coefficients from memory and verified here against astropy's ERFA `moon98`,
//!   see `docs/predictions.md`), rotated from the mean ecliptic and equinox of date to the
//!   GCRS with SOFA `iauEcm06`, then made topocentric with the site's GCRS position.
//!
//! Not modelled: atmospheric refraction (altitudes are geometric/airless: near the horizon
//! the apparent altitude is higher by up to ~0.6°), gravitational light deflection
//! (≤ 1.75″ at the solar limb, ≤ 0.004″ 90° away).
//!
//! Accuracy, measured against astropy 8.0.2 `AltAz` with pressure 0 (tests/predict.rs):
//! target and Sun within 0.01° (measured values in `docs/predictions.md`), Moon within 0.5°.

use super::PredictError;
use crate::arrival::Source;
use crate::ephemeris::{Body, Ephemeris, SPEED_OF_LIGHT_KM_PER_S};
use crate::observer::site::terrestrial_to_gcrs_matrix;
use crate::observer::{EarthOrientation, Site};
use crate::time::{Instant, ScaleConverter, TimeScale};

/// Astronomical unit, km (IAU 2012 Resolution B2).
use crate::constants::ASTRONOMICAL_UNIT_KM as AU_KM;
/// Equatorial radius of the Earth used by the low-precision lunar formulae, km (AA).
const EARTH_RADIUS_KM: f64 = 6_378.14;

/// Altitude of the Sun's centre at sunrise/sunset with standard refraction and the solar
/// semi-diameter, degrees (common practice).
pub const SUNRISE_ALTITUDE_DEG: f64 = -0.833;
/// Sun altitude at the end of civil twilight, degrees (common practice).
pub const CIVIL_TWILIGHT_DEG: f64 = -6.0;
/// Sun altitude at the end of nautical twilight, degrees (common practice).
pub const NAUTICAL_TWILIGHT_DEG: f64 = -12.0;
/// Sun altitude at the end of astronomical twilight, degrees (common practice).
pub const ASTRONOMICAL_TWILIGHT_DEG: f64 = -18.0;

/// Altitude and azimuth of one body, degrees.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct HorizontalPosition {
    /// Geometric (airless) altitude above the horizon plane, degrees, −90…+90.
    pub altitude_deg: f64,
    /// Azimuth from north through east, degrees, 0…360.
    pub azimuth_deg: f64,
}

/// The sky at one site and instant.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct SkySnapshot {
    /// The target.
    pub target: HorizontalPosition,
    /// The Sun's centre.
    pub sun: HorizontalPosition,
    /// The Moon's centre (low precision, ~0.3°).
    pub moon: HorizontalPosition,
    /// Angle between the target and the Sun seen from the site, degrees.
    pub sun_separation_deg: f64,
    /// Angle between the target and the Moon seen from the site, degrees (~0.3°).
    pub moon_separation_deg: f64,
    /// Illuminated fraction of the Moon's disc, 0…1 (from the geocentric phase angle).
    pub moon_illuminated_fraction: f64,
}

/// Darkness of the sky from the Sun's altitude (common practice thresholds
/// −0.833°, −6°, −12°, −18°).
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub enum SkyCondition {
    /// Sun's upper limb above the horizon (altitude ≥ −0.833°).
    Day,
    /// −6° ≤ Sun altitude < −0.833°.
    CivilTwilight,
    /// −12° ≤ Sun altitude < −6°.
    NauticalTwilight,
    /// −18° ≤ Sun altitude < −12°.
    AstronomicalTwilight,
    /// Sun altitude < −18°.
    Night,
}

impl SkyCondition {
    /// The class of a Sun altitude in degrees.
    pub fn from_sun_altitude_deg(altitude_deg: f64) -> SkyCondition {
        if altitude_deg >= SUNRISE_ALTITUDE_DEG {
            SkyCondition::Day
        } else if altitude_deg >= CIVIL_TWILIGHT_DEG {
            SkyCondition::CivilTwilight
        } else if altitude_deg >= NAUTICAL_TWILIGHT_DEG {
            SkyCondition::NauticalTwilight
        } else if altitude_deg >= ASTRONOMICAL_TWILIGHT_DEG {
            SkyCondition::AstronomicalTwilight
        } else {
            SkyCondition::Night
        }
    }

    /// Name used in tables.
    pub fn name(self) -> &'static str {
        match self {
            SkyCondition::Day => "day",
            SkyCondition::CivilTwilight => "civil-twilight",
            SkyCondition::NauticalTwilight => "nautical-twilight",
            SkyCondition::AstronomicalTwilight => "astronomical-twilight",
            SkyCondition::Night => "night",
        }
    }
}

/// Computes [`SkySnapshot`]s from an ephemeris, a leap-second table and Earth orientation.
pub struct SkyGeometry<'a> {
    ephemeris: &'a dyn Ephemeris,
    converter: ScaleConverter,
    orientation: EarthOrientation,
}

impl<'a> SkyGeometry<'a> {
    /// A calculator using `ephemeris` for the Sun and the Earth, `converter` for the time
    /// scales and `orientation` for UT1 − UTC and polar motion (UT1 = UTC when ignored:
    /// ≤ 0.9 s of rotation, ≤ 0.004° in altitude).
    pub fn new(
        ephemeris: &'a dyn Ephemeris,
        converter: ScaleConverter,
        orientation: EarthOrientation,
    ) -> SkyGeometry<'a> {
        SkyGeometry { ephemeris, converter, orientation }
    }

    /// The sky computed with the ephemeris, leap seconds and Earth orientation of
    /// `reference` (the same data the barycentric correction uses).
    pub fn from_reference(reference: &'a crate::arrival::ReferenceData) -> SkyGeometry<'a> {
        SkyGeometry::new(&*reference.ephemeris, reference.converter.clone(), reference.orientation.clone())
    }

    /// The sky at `site` at `time` (any scale; a ground site needs UTC, so times before
    /// 1960 are refused) for `target`.
    pub fn snapshot(&self, site: &Site, time: &Instant, target: &Source) -> Result<SkySnapshot, PredictError> {
        let utc = self.converter.convert(time, TimeScale::Utc)?;
        let tt = self.converter.convert(time, TimeScale::Tt)?;
        let tdb = self.converter.convert(time, TimeScale::Tdb)?;
        let (eop, _) = self.orientation.at_utc_mjd(utc.mjd_f64());
        let m = terrestrial_to_gcrs_matrix(&tt, &utc, &eop);
        let (slat, clat) = site.latitude_rad.sin_cos();
        let (slon, clon) = site.east_longitude_rad.sin_cos();
        let up = mat_vec(&m, &[clat * clon, clat * slon, slat]);
        let north = mat_vec(&m, &[-slat * clon, -slat * slon, clat]);
        let east = mat_vec(&m, &[-slon, clon, 0.0]);
        let frame = LocalFrame { up, north, east };

        let site_state = site.gcrs_state(&tt, &utc, &eop);
        let earth = self.ephemeris.state(Body::Earth, &tdb)?;
        let obs = add(&earth.position_km, &site_state.position_km);
        let obs_v = add(&earth.velocity_km_per_s, &site_state.velocity_km_per_s);

        // Sun, light time iterated once.
        let sun_now = self.ephemeris.state(Body::Sun, &tdb)?;
        let light_s = norm(&sub(&sun_now.position_km, &obs)) / SPEED_OF_LIGHT_KM_PER_S;
        let sun = self.ephemeris.state(Body::Sun, &tdb.add_seconds(-light_s))?;
        let sun_rel = sub(&sun.position_km, &obs);
        let sun_distance_au = norm(&sun_rel) / AU_KM;
        let sun_dir = aberrate(&unit(&sun_rel), &obs_v, sun_distance_au);

        // Target.
        let d = target.direction_at(&tdb);
        let natural = match d.distance_km {
            Some(dist) => unit(&sub(&scale(&d.unit, dist), &obs)),
            None => d.unit,
        };
        let target_dir = aberrate(&natural, &obs_v, sun_distance_au);

        // Moon (low precision, geocentric → topocentric).
        let moon_geo = moon_geocentric_km(&tt);
        let moon_dir = unit(&sub(&moon_geo, &site_state.position_km));
        let sun_geo = sub(&sun_now.position_km, &earth.position_km);
        let to_sun = sub(&sun_geo, &moon_geo);
        let to_earth = scale(&moon_geo, -1.0);
        let cos_phase = dot(&to_sun, &to_earth) / (norm(&to_sun) * norm(&to_earth));

        Ok(SkySnapshot {
            target: frame.horizontal(&target_dir),
            sun: frame.horizontal(&sun_dir),
            moon: frame.horizontal(&moon_dir),
            sun_separation_deg: separation_rad(&target_dir, &sun_dir).to_degrees(),
            moon_separation_deg: separation_rad(&target_dir, &moon_dir).to_degrees(),
            moon_illuminated_fraction: 0.5 * (1.0 + cos_phase),
        })
    }
}

struct LocalFrame {
    up: [f64; 3],
    north: [f64; 3],
    east: [f64; 3],
}

impl LocalFrame {
    fn horizontal(&self, u: &[f64; 3]) -> HorizontalPosition {
        let z = dot(u, &self.up);
        let x = dot(u, &self.north);
        let y = dot(u, &self.east);
        HorizontalPosition {
            altitude_deg: z.atan2((x * x + y * y).sqrt()).to_degrees(),
            azimuth_deg: y.atan2(x).to_degrees().rem_euclid(360.0),
        }
    }
}

/// Geocentric position of the Moon, km, GCRS axes, at `tt` (TT; TDB is as good here).
///
/// Astronomical Almanac low-precision formulae (section D; valid 1900–2100): ecliptic
/// longitude λ, latitude β and horizontal parallax π referred to the mean ecliptic and
/// equinox of date, T in Julian centuries from J2000.0; distance = R⊕ / sin π. Stated
/// accuracy ≈0.3° in λ, 0.2° in β, 0.003° in π. Rotated to the GCRS with SOFA `iauEcm06`
/// (IAU 2006 precession, ecliptic of date).
pub fn moon_geocentric_km(tt: &Instant) -> [f64; 3] {
    let t = tt.centuries_since_j2000();
    let s = |a: f64, b: f64| (a + b * t).to_radians().sin();
    let c = |a: f64, b: f64| (a + b * t).to_radians().cos();
    let lambda_deg = 218.32 + 481_267.881 * t + 6.29 * s(135.0, 477_198.87) - 1.27 * s(259.3, -413_335.36)
        + 0.66 * s(235.7, 890_534.22)
        + 0.21 * s(269.9, 954_397.74)
        - 0.19 * s(357.5, 35_999.05)
        - 0.11 * s(186.5, 966_404.03);
    let beta_deg = 5.13 * s(93.3, 483_202.02) + 0.28 * s(228.2, 960_400.89)
        - 0.28 * s(318.3, 6_003.15)
        - 0.17 * s(217.6, -407_332.21);
    let parallax_deg = 0.9508
        + 0.0518 * c(135.0, 477_198.87)
        + 0.0095 * c(259.3, -413_335.36)
        + 0.0078 * c(235.7, 890_534.22)
        + 0.0028 * c(269.9, 954_397.74);
    let distance_km = EARTH_RADIUS_KM / parallax_deg.to_radians().sin();
    let (sl, cl) = lambda_deg.to_radians().sin_cos();
    let (sb, cb) = beta_deg.to_radians().sin_cos();
    let ecl = [cb * cl, cb * sl, sb];
    let (t1, t2) = tt.jd_two_part();
    let rm = sofars::coords::ecm06(t1, t2);
    // ecm06 maps ICRS → ecliptic of date; its transpose maps back.
    let g = [
        rm[0][0] * ecl[0] + rm[1][0] * ecl[1] + rm[2][0] * ecl[2],
        rm[0][1] * ecl[0] + rm[1][1] * ecl[1] + rm[2][1] * ecl[2],
        rm[0][2] * ecl[0] + rm[1][2] * ecl[1] + rm[2][2] * ecl[2],
    ];
    scale(&g, distance_km)
}

/// Angle between two unit vectors, rad (atan2 form, accurate at all angles).
pub fn separation_rad(a: &[f64; 3], b: &[f64; 3]) -> f64 {
    let cr = [a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]];
    norm(&cr).atan2(dot(a, b))
}

fn aberrate(natural: &[f64; 3], observer_velocity_km_per_s: &[f64; 3], sun_distance_au: f64) -> [f64; 3] {
    let v = scale(observer_velocity_km_per_s, 1.0 / SPEED_OF_LIGHT_KM_PER_S);
    let bm1 = (1.0 - dot(&v, &v)).sqrt();
    unit(&sofars::astro::ab(natural, &v, sun_distance_au, bm1))
}

fn mat_vec(m: &[[f64; 3]; 3], v: &[f64; 3]) -> [f64; 3] {
    [
        m[0][0] * v[0] + m[0][1] * v[1] + m[0][2] * v[2],
        m[1][0] * v[0] + m[1][1] * v[1] + m[1][2] * v[2],
        m[2][0] * v[0] + m[2][1] * v[1] + m[2][2] * v[2],
    ]
}
fn add(a: &[f64; 3], b: &[f64; 3]) -> [f64; 3] {
    [a[0] + b[0], a[1] + b[1], a[2] + b[2]]
}
fn sub(a: &[f64; 3], b: &[f64; 3]) -> [f64; 3] {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}
fn scale(a: &[f64; 3], k: f64) -> [f64; 3] {
    [a[0] * k, a[1] * k, a[2] * k]
}
fn dot(a: &[f64; 3], b: &[f64; 3]) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}
fn norm(a: &[f64; 3]) -> f64 {
    dot(a, a).sqrt()
}
fn unit(a: &[f64; 3]) -> [f64; 3] {
    scale(a, 1.0 / norm(a))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn twilight_classes_follow_the_thresholds() {
        assert_eq!(SkyCondition::from_sun_altitude_deg(10.0), SkyCondition::Day);
        assert_eq!(SkyCondition::from_sun_altitude_deg(-0.5), SkyCondition::Day);
        assert_eq!(SkyCondition::from_sun_altitude_deg(-1.0), SkyCondition::CivilTwilight);
        assert_eq!(SkyCondition::from_sun_altitude_deg(-6.5), SkyCondition::NauticalTwilight);
        assert_eq!(SkyCondition::from_sun_altitude_deg(-12.5), SkyCondition::AstronomicalTwilight);
        assert_eq!(SkyCondition::from_sun_altitude_deg(-18.5), SkyCondition::Night);
    }

    #[test]
    fn moon_distance_stays_within_its_orbit() {
        // Perigee ≈356 500 km, apogee ≈406 700 km (common practice).
        for k in 0..200 {
            let t = Instant::from_mjd_parts(TimeScale::Tt, 60_000 + 3 * k, 0.0);
            let r = norm(&moon_geocentric_km(&t));
            assert!((350_000.0..410_000.0).contains(&r), "{r}");
        }
    }

    #[test]
    fn separation_of_orthogonal_and_equal_vectors() {
        assert!((separation_rad(&[1.0, 0.0, 0.0], &[0.0, 1.0, 0.0]) - std::f64::consts::FRAC_PI_2).abs() < 1e-15);
        assert!(separation_rad(&[0.0, 0.0, 1.0], &[0.0, 0.0, 1.0]).abs() < 1e-15);
    }
}
