//! A fixed observing site: WGS84 geodetic coordinates → terrestrial (ITRS) vector →
//! GCRS position and velocity.
//!
//! Chain (IERS Conventions 2010 ch. 5, CIO-based): r_GCRS = Q(t)ᵀ · R3(−ERA) · Wᵀ · r_ITRS,
//! with Q from SOFA `iauC2i06a` (IAU 2006/2000A), ERA from `iauEra00` (UT1), W from
//! `iauPom00` with s′ from `iauSp00`; geodetic → ITRS by `iauGd2gc` (WGS84), all via sofars.
//! The site velocity is the Earth's rotation, ω ẑ × r about the CIP,
//! ω = 7.292115146706979e−5 rad/s (IERS Conventions 2010, 1.00273781191135448 rev/UT1 day).
//! Accuracy: the IAU 2006/2000A model is good to ~0.2 mas (≈6 mm at the Earth's surface);
//! the error budget is dominated by UT1 − UTC when no table is given (≤1.5 µs of light time).

use super::earth_orientation::OrientationValues;
use crate::constants::SECONDS_PER_DAY;
use crate::time::{DtdbSite, Instant};

/// Earth rotation rate, rad/s (IERS Conventions 2010).
pub const EARTH_ROTATION_RAD_PER_S: f64 = 2.0 * std::f64::consts::PI * 1.002_737_811_911_354_6 / SECONDS_PER_DAY;

/// A ground site on the WGS84 ellipsoid.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Site {
    /// Name used in outputs.
    pub name: String,
    /// Geodetic east longitude, rad.
    pub east_longitude_rad: f64,
    /// Geodetic latitude, rad.
    pub latitude_rad: f64,
    /// Height above the WGS84 ellipsoid, m.
    pub height_m: f64,
}

/// Position (km) and velocity (km/s) in the GCRS.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GcrsState {
    /// Geocentric position, km, GCRS axes.
    pub position_km: [f64; 3],
    /// Geocentric velocity, km/s, GCRS axes.
    pub velocity_km_per_s: [f64; 3],
}

/// Site coordinates that describe no place on the ground.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SiteError {
    /// A coordinate is NaN or infinite.
    #[error("site '{name}': longitude, latitude and height must be finite numbers")]
    NotFinite {
        /// Site name.
        name: String,
    },
    /// Latitude beyond ±90°.
    #[error("site '{name}': latitude {latitude_deg}° is outside -90..90°")]
    LatitudeBeyondPole {
        /// Site name.
        name: String,
        /// The latitude given, degrees.
        latitude_deg: f64,
    },
    /// East longitude outside −180° … 360°.
    #[error("site '{name}': east longitude {east_longitude_deg}° is outside -180..360°")]
    LongitudeRange {
        /// Site name.
        name: String,
        /// The longitude given, degrees.
        east_longitude_deg: f64,
    },
    /// Height outside −12 km … +100 km.
    #[error("site '{name}': height {height_m} m is outside -12000..100000 m (use a spacecraft position for orbits)")]
    HeightNotGround {
        /// Site name.
        name: String,
        /// The height given, m.
        height_m: f64,
    },
}

impl Site {
    /// A site from degrees and metres; errors if latitude is outside ±90° or a value is not
    /// finite, or the height is outside −12 km … +100 km (not a ground site).
    pub fn from_degrees(
        name: &str,
        east_longitude_deg: f64,
        latitude_deg: f64,
        height_m: f64,
    ) -> Result<Site, SiteError> {
        let name = name.to_string();
        if !east_longitude_deg.is_finite() || !latitude_deg.is_finite() || !height_m.is_finite() {
            return Err(SiteError::NotFinite { name });
        }
        if latitude_deg.abs() > 90.0 {
            return Err(SiteError::LatitudeBeyondPole { name, latitude_deg });
        }
        if !(-180.0..=360.0).contains(&east_longitude_deg) {
            return Err(SiteError::LongitudeRange { name, east_longitude_deg });
        }
        if !(-12_000.0..=100_000.0).contains(&height_m) {
            return Err(SiteError::HeightNotGround { name, height_m });
        }
        Ok(Site {
            name: name.to_string(),
            east_longitude_rad: east_longitude_deg.to_radians(),
            latitude_rad: latitude_deg.to_radians(),
            height_m,
        })
    }

    /// Terrestrial (ITRS) position, m, from WGS84 geodetic coordinates (SOFA `iauGd2gc`).
    pub fn itrs_position_m(&self) -> [f64; 3] {
        // Inputs validated at construction: gd2gc cannot fail for WGS84 with |lat| ≤ 90°.
        sofars::coords::gd2gc(1, self.east_longitude_rad, self.latitude_rad, self.height_m).unwrap_or([0.0; 3])
    }

    /// Arguments of the topocentric TDB − TT term (SOFA `iauDtdb`): east longitude, distance
    /// from the spin axis and north of the equator, km.
    pub fn dtdb_site(&self) -> DtdbSite {
        let r = self.itrs_position_m();
        DtdbSite {
            east_longitude_rad: self.east_longitude_rad,
            spin_axis_distance_km: (r[0] * r[0] + r[1] * r[1]).sqrt() / 1000.0,
            equator_distance_km: r[2] / 1000.0,
        }
    }

    /// GCRS position and velocity of the site at `tt` (scale TT) with `orientation`
    /// (UT1 − UTC and polar motion) and the UTC of the same instant for UT1.
    /// Accuracy: see module doc.
    pub fn gcrs_state(&self, tt: &Instant, utc: &Instant, orientation: &OrientationValues) -> GcrsState {
        let (tt1, tt2) = tt.jd_two_part();
        self.gcrs_state_with_precession_nutation(tt, utc, orientation, &sofars::pnp::c2i06a(tt1, tt2))
    }

    /// As [`Site::gcrs_state`] with the celestial-to-intermediate matrix `c2i` (SOFA
    /// `iauC2i06a` at `tt`) given by the caller, e.g. rebuilt from interpolated CIP X, Y and
    /// s (`arrival::slow_terms`); everything else (Earth rotation angle, polar motion, s′) is
    /// evaluated here. With the exact matrix the result is bit-identical to `gcrs_state`.
    pub fn gcrs_state_with_precession_nutation(
        &self,
        tt: &Instant,
        utc: &Instant,
        orientation: &OrientationValues,
        c2i: &[[f64; 3]; 3],
    ) -> GcrsState {
        let (tt1, tt2) = tt.jd_two_part();
        let ut1 = utc.add_seconds(orientation.ut1_minus_utc_s);
        let (u1, u2) = ut1.jd_two_part();
        let era = sofars::erst::era00(u1, u2);
        let sp = sofars::pnp::sp00(tt1, tt2);
        let w = sofars::pnp::pom00(orientation.polar_motion_x_rad, orientation.polar_motion_y_rad, sp);
        let r_itrs = self.itrs_position_m();
        // TIRS = Wᵀ · ITRS
        let r_tirs = mat_t_vec(&w, &r_itrs);
        let (s, c) = era.sin_cos();
        // CIRS = R3(−ERA) · TIRS
        let r_cirs = [c * r_tirs[0] - s * r_tirs[1], s * r_tirs[0] + c * r_tirs[1], r_tirs[2]];
        let v_cirs = [-EARTH_ROTATION_RAD_PER_S * r_cirs[1], EARTH_ROTATION_RAD_PER_S * r_cirs[0], 0.0];
        let p = mat_t_vec(c2i, &r_cirs);
        let v = mat_t_vec(c2i, &v_cirs);
        GcrsState {
            position_km: [p[0] / 1000.0, p[1] / 1000.0, p[2] / 1000.0],
            velocity_km_per_s: [v[0] / 1000.0, v[1] / 1000.0, v[2] / 1000.0],
        }
    }
}

/// The rotation matrix M with r_GCRS = M · r_ITRS at `tt` (scale TT), for the UTC `utc` of
/// the same instant and `orientation` (UT1 − UTC, polar motion): the chain of
/// [`Site::gcrs_state`], M = Q(t)ᵀ · R3(−ERA) · Wᵀ (IERS Conventions 2010 ch. 5; SOFA
/// `iauC2i06a`, `iauEra00`, `iauPom00`, `iauSp00` via sofars). Used to carry terrestrial
/// directions (the local vertical, north and east) into the GCRS. Accuracy as the module.
pub fn terrestrial_to_gcrs_matrix(tt: &Instant, utc: &Instant, orientation: &OrientationValues) -> [[f64; 3]; 3] {
    let (tt1, tt2) = tt.jd_two_part();
    let ut1 = utc.add_seconds(orientation.ut1_minus_utc_s);
    let (u1, u2) = ut1.jd_two_part();
    let c2i = sofars::pnp::c2i06a(tt1, tt2);
    let era = sofars::erst::era00(u1, u2);
    let sp = sofars::pnp::sp00(tt1, tt2);
    let w = sofars::pnp::pom00(orientation.polar_motion_x_rad, orientation.polar_motion_y_rad, sp);
    let (s, c) = era.sin_cos();
    let mut m = [[0.0; 3]; 3];
    for col in 0..3 {
        let mut e = [0.0; 3];
        e[col] = 1.0;
        let tirs = mat_t_vec(&w, &e);
        let cirs = [c * tirs[0] - s * tirs[1], s * tirs[0] + c * tirs[1], tirs[2]];
        let g = mat_t_vec(&c2i, &cirs);
        for row in 0..3 {
            m[row][col] = g[row];
        }
    }
    m
}

fn mat_t_vec(m: &[[f64; 3]; 3], v: &[f64; 3]) -> [f64; 3] {
    [
        m[0][0] * v[0] + m[1][0] * v[1] + m[2][0] * v[2],
        m[0][1] * v[0] + m[1][1] * v[1] + m[2][1] * v[2],
        m[0][2] * v[0] + m[1][2] * v[1] + m[2][2] * v[2],
    ]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rejects_impossible_sites() {
        assert!(Site::from_degrees("x", 10.0, 91.0, 0.0).is_err());
        assert!(Site::from_degrees("x", f64::NAN, 10.0, 0.0).is_err());
        assert!(Site::from_degrees("x", 10.0, 10.0, 500_000.0).is_err());
    }

    #[test]
    fn equatorial_site_radius_is_wgs84_a() {
        // WGS84 semi-major axis a = 6378137 m (NIMA TR8350.2).
        let s = Site::from_degrees("eq", 0.0, 0.0, 0.0).unwrap();
        let r = s.itrs_position_m();
        assert!((r[0] - 6_378_137.0).abs() < 1e-6 && r[1].abs() < 1e-6 && r[2].abs() < 1e-6);
    }

    #[test]
    fn rotation_matrix_reproduces_the_site_position() {
        // The matrix and gcrs_state follow one chain: they must agree to rounding.
        let s = Site::from_degrees("x", 23.5, -31.2, 1500.0).unwrap();
        let tt = Instant::from_mjd_parts(crate::time::TimeScale::Tt, 61_000, 12_345.0);
        let utc = tt.add_seconds(-69.184).relabel(crate::time::TimeScale::Utc);
        let o = OrientationValues::default();
        let m = terrestrial_to_gcrs_matrix(&tt, &utc, &o);
        let r = s.itrs_position_m();
        let p = s.gcrs_state(&tt, &utc, &o).position_km;
        for i in 0..3 {
            let v = (m[i][0] * r[0] + m[i][1] * r[1] + m[i][2] * r[2]) / 1000.0;
            assert!((v - p[i]).abs() < 1e-9, "{v} vs {}", p[i]);
        }
    }
}
