//! The observed source: ICRS position with optional proper motion, parallax and radial
//! velocity at a reference epoch, and its direction (and distance) at any date.
//!
//! Space motion is applied rigorously with SOFA `iauPmsafe` (via sofars), which propagates
//! position, proper motion, parallax and radial velocity along a straight line in space
//! (Kaplan et al. 1989, AJ 97, 1197; SOFA documentation).

use std::f64::consts::PI;

use crate::time::Instant;

/// Milliarcseconds to radians.
pub const MAS_TO_RAD: f64 = PI / 648_000_000.0;
/// Astronomical unit, km (IAU 2012 Resolution B2).
pub use crate::constants::ASTRONOMICAL_UNIT_KM as AU_KM;

/// A source in the ICRS with optional space motion.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Source {
    /// Name used in outputs.
    pub name: String,
    /// Right ascension at the reference epoch, rad.
    pub ra_rad: f64,
    /// Declination at the reference epoch, rad.
    pub dec_rad: f64,
    /// Proper motion in RA times cos(dec), mas/yr.
    pub proper_motion_ra_mas_per_yr: f64,
    /// Proper motion in Dec, mas/yr.
    pub proper_motion_dec_mas_per_yr: f64,
    /// Parallax, mas (0 = unknown/infinitely distant: no wavefront-curvature term).
    pub parallax_mas: f64,
    /// Radial velocity, km/s (positive receding).
    pub radial_velocity_km_per_s: f64,
    /// Reference epoch of position and motion, TDB.
    pub epoch: Instant,
}

/// Direction and distance of the source at one date.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SourceDirection {
    /// Unit vector from the barycentre towards the source, ICRS.
    pub unit: [f64; 3],
    /// Distance from the barycentre, km; `None` when no parallax was given.
    pub distance_km: Option<f64>,
}

impl Source {
    /// A fixed direction (no motion, infinite distance) from degrees; epoch J2000.0 TDB.
    /// Errors if the declination is outside ±90° or a value is not finite.
    pub fn fixed_degrees(name: &str, ra_deg: f64, dec_deg: f64) -> Result<Source, CoordinateError> {
        validate_position(name, ra_deg, dec_deg)?;
        Ok(Source {
            name: name.to_string(),
            ra_rad: ra_deg.to_radians().rem_euclid(2.0 * PI),
            dec_rad: dec_deg.to_radians(),
            proper_motion_ra_mas_per_yr: 0.0,
            proper_motion_dec_mas_per_yr: 0.0,
            parallax_mas: 0.0,
            radial_velocity_km_per_s: 0.0,
            epoch: Instant::from_seconds_since_j2000(crate::time::TimeScale::Tdb, 0.0),
        })
    }

    /// True when the source has any space motion or a parallax.
    pub fn has_space_motion(&self) -> bool {
        self.proper_motion_ra_mas_per_yr != 0.0
            || self.proper_motion_dec_mas_per_yr != 0.0
            || self.parallax_mas != 0.0
            || self.radial_velocity_km_per_s != 0.0
    }

    /// Direction (and distance, if a parallax is given) at `tdb`.
    /// Accuracy: that of SOFA `iauPmsafe` (sub-µas for ordinary stars over centuries).
    pub fn direction_at(&self, tdb: &Instant) -> SourceDirection {
        let (ra, dec, parallax_mas) = if self.has_space_motion() {
            let (e1, e2) = self.epoch.jd_two_part();
            let (t1, t2) = tdb.jd_two_part();
            let pmr = self.proper_motion_ra_mas_per_yr * MAS_TO_RAD / self.dec_rad.cos().max(1e-12);
            let pmd = self.proper_motion_dec_mas_per_yr * MAS_TO_RAD;
            let px_arcsec = self.parallax_mas / 1000.0;
            match sofars::astro::pmsafe(
                self.ra_rad,
                self.dec_rad,
                pmr,
                pmd,
                px_arcsec,
                self.radial_velocity_km_per_s,
                e1,
                e2,
                t1,
                t2,
            ) {
                Ok((v, _)) => (v[0], v[1], if self.parallax_mas > 0.0 { v[4] * 1000.0 } else { 0.0 }),
                Err(_) => (self.ra_rad, self.dec_rad, self.parallax_mas),
            }
        } else {
            (self.ra_rad, self.dec_rad, self.parallax_mas)
        };
        let (sd, cd) = dec.sin_cos();
        let (sr, cr) = ra.sin_cos();
        SourceDirection {
            unit: [cd * cr, cd * sr, sd],
            distance_km: (parallax_mas > 0.0).then(|| AU_KM / (parallax_mas * MAS_TO_RAD).tan()),
        }
    }
}

/// A source position or coordinate text that cannot be used.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum CoordinateError {
    /// A proper motion, parallax or radial velocity outside what a star can have.
    #[error("source '{name}': {key} = {value} is outside {range}")]
    SpaceMotionRange {
        /// Source name.
        name: String,
        /// The option or key, e.g. `radial_velocity_km_per_s`.
        key: &'static str,
        /// The value given.
        value: f64,
        /// The accepted range, in words.
        range: &'static str,
    },
    /// Right ascension or declination is NaN or infinite.
    #[error("source '{name}': right ascension and declination must be finite numbers")]
    NotFinite {
        /// Source name.
        name: String,
    },
    /// Declination beyond the poles.
    #[error("source '{name}': declination {dec_deg}° is outside -90..+90°")]
    DeclinationBeyondPole {
        /// Source name.
        name: String,
        /// The declination given, degrees.
        dec_deg: f64,
    },
    /// Sexagesimal right ascension with a field out of range.
    #[error("right ascension '{text}': hours 0-23, minutes and seconds 0-59.999")]
    RightAscensionFields {
        /// The text given.
        text: String,
    },
    /// Right ascension that is no number.
    #[error("right ascension '{text}' is neither decimal degrees (e.g. 201.365) nor hh:mm:ss.s (e.g. 13:25:27.6)")]
    RightAscensionUnreadable {
        /// The text given.
        text: String,
    },
    /// Right ascension outside 0..360°.
    #[error("right ascension '{text}' = {value_deg}° is outside 0..360°")]
    RightAscensionRange {
        /// The text given.
        text: String,
        /// Its value, degrees.
        value_deg: f64,
    },
    /// Sexagesimal declination with arcminutes or arcseconds of 60 or more.
    #[error("declination '{text}': arcminutes and arcseconds must be below 60")]
    DeclinationFields {
        /// The text given.
        text: String,
    },
    /// Declination that is no number.
    #[error("declination '{text}' is neither decimal degrees (e.g. -43.019) nor ±dd:mm:ss.s (e.g. -43:01:08.9)")]
    DeclinationUnreadable {
        /// The text given.
        text: String,
    },
    /// Declination beyond ±90°.
    #[error("declination '{text}' = {value_deg}° is beyond ±90°")]
    DeclinationRange {
        /// The text given.
        text: String,
        /// Its value, degrees.
        value_deg: f64,
    },
}

/// Largest proper motion accepted, mas/yr per component (100 times that of the fastest known
/// star, about 10 arcsec/yr — from memory); larger values are typing mistakes.
pub const MAX_PROPER_MOTION_MAS_PER_YR: f64 = 1.0e6;
/// Largest parallax accepted, mas (1000 times that of the nearest star, about 0.77 arcsec —
/// from memory).
pub const MAX_PARALLAX_MAS: f64 = 1.0e6;

/// Checks space motion before it is used: every value finite, |proper motion| ≤
/// [`MAX_PROPER_MOTION_MAS_PER_YR`], 0 ≤ parallax ≤ [`MAX_PARALLAX_MAS`], |radial velocity|
/// below the speed of light (km/s). Keys are named as in the source TOML.
pub fn check_space_motion(
    name: &str,
    proper_motion_ra_mas_per_yr: f64,
    proper_motion_dec_mas_per_yr: f64,
    parallax_mas: f64,
    radial_velocity_km_per_s: f64,
) -> Result<(), CoordinateError> {
    let c = crate::constants::SPEED_OF_LIGHT_KM_PER_S;
    let checks: [(&'static str, f64, bool, &'static str); 4] = [
        (
            "proper_motion_ra_mas_per_yr",
            proper_motion_ra_mas_per_yr,
            proper_motion_ra_mas_per_yr.abs() <= MAX_PROPER_MOTION_MAS_PER_YR,
            "-1e6..1e6 mas/yr",
        ),
        (
            "proper_motion_dec_mas_per_yr",
            proper_motion_dec_mas_per_yr,
            proper_motion_dec_mas_per_yr.abs() <= MAX_PROPER_MOTION_MAS_PER_YR,
            "-1e6..1e6 mas/yr",
        ),
        ("parallax_mas", parallax_mas, (0.0..=MAX_PARALLAX_MAS).contains(&parallax_mas), "0..1e6 mas"),
        (
            "radial_velocity_km_per_s",
            radial_velocity_km_per_s,
            radial_velocity_km_per_s.abs() < c,
            "-299792.458..299792.458 km/s (below the speed of light)",
        ),
    ];
    for (key, value, ok, range) in checks {
        if !ok {
            return Err(CoordinateError::SpaceMotionRange { name: name.to_string(), key, value, range });
        }
    }
    Ok(())
}

fn validate_position(name: &str, ra_deg: f64, dec_deg: f64) -> Result<(), CoordinateError> {
    if !ra_deg.is_finite() || !dec_deg.is_finite() {
        return Err(CoordinateError::NotFinite { name: name.to_string() });
    }
    if dec_deg.abs() > 90.0 {
        return Err(CoordinateError::DeclinationBeyondPole { name: name.to_string(), dec_deg });
    }
    Ok(())
}

/// Reads a right ascension: decimal degrees (`123.456`) or sexagesimal hours
/// (`12:34:56.7`, `12h34m56.7s`, `12 34 56.7`). Returns degrees.
pub fn parse_right_ascension_deg(text: &str) -> Result<f64, CoordinateError> {
    let t = text.trim();
    let v = match sexagesimal_parts(t) {
        Some((sign, a, b, c)) => {
            if sign < 0.0 || a >= 24.0 || b >= 60.0 || c >= 60.0 {
                return Err(CoordinateError::RightAscensionFields { text: text.to_string() });
            }
            15.0 * (a + b / 60.0 + c / 3600.0)
        }
        None => t
            .trim_end_matches(['d', '°'])
            .parse::<f64>()
            .map_err(|_| CoordinateError::RightAscensionUnreadable { text: text.to_string() })?,
    };
    if !(0.0..360.0).contains(&v) {
        return Err(CoordinateError::RightAscensionRange { text: text.to_string(), value_deg: v });
    }
    Ok(v)
}

/// Reads a declination: decimal degrees (`-43.019`) or sexagesimal (`-43:01:08.9`,
/// `-43d01m08.9s`, `-43 01 08.9`). Returns degrees; refuses |dec| > 90°.
pub fn parse_declination_deg(text: &str) -> Result<f64, CoordinateError> {
    let t = text.trim();
    let v = match sexagesimal_parts(t) {
        Some((sign, a, b, c)) => {
            if b >= 60.0 || c >= 60.0 {
                return Err(CoordinateError::DeclinationFields { text: text.to_string() });
            }
            sign * (a + b / 60.0 + c / 3600.0)
        }
        None => t
            .trim_end_matches(['d', '°'])
            .parse::<f64>()
            .map_err(|_| CoordinateError::DeclinationUnreadable { text: text.to_string() })?,
    };
    if !v.is_finite() || v.abs() > 90.0 {
        return Err(CoordinateError::DeclinationRange { text: text.to_string(), value_deg: v });
    }
    Ok(v)
}

/// Splits `±a:b:c`, `±a b c` or `±a[hd]b[m']c[s"]` into sign and three non-negative parts.
fn sexagesimal_parts(t: &str) -> Option<(f64, f64, f64, f64)> {
    let (sign, body) = match t.as_bytes().first()? {
        b'-' => (-1.0, &t[1..]),
        b'+' => (1.0, &t[1..]),
        _ => (1.0, t),
    };
    let cleaned: String = body
        .chars()
        .map(|c| if matches!(c, ':' | 'h' | 'd' | 'm' | 's' | '\'' | '"' | '°') { ' ' } else { c })
        .collect();
    let parts: Vec<&str> = cleaned.split_whitespace().collect();
    if parts.len() != 3 {
        return None;
    }
    let a: f64 = parts[0].parse().ok()?;
    let b: f64 = parts[1].parse().ok()?;
    let c: f64 = parts[2].parse().ok()?;
    if a < 0.0 || b < 0.0 || c < 0.0 {
        return None;
    }
    Some((sign, a, b, c))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sexagesimal_and_decimal() {
        assert!((parse_right_ascension_deg("12:00:00").unwrap() - 180.0).abs() < 1e-12);
        assert!((parse_right_ascension_deg("01h30m00s").unwrap() - 22.5).abs() < 1e-12);
        assert!((parse_declination_deg("-00:30:00").unwrap() + 0.5).abs() < 1e-12);
        assert!((parse_declination_deg("+45 30 00").unwrap() - 45.5).abs() < 1e-12);
        assert!((parse_declination_deg("12.25").unwrap() - 12.25).abs() < 1e-12);
        assert!(parse_declination_deg("91").is_err());
        assert!(parse_declination_deg("-90:00:01").is_err());
        assert!(parse_right_ascension_deg("24:00:00").is_err());
        assert!(parse_right_ascension_deg("abc").is_err());
    }
}
