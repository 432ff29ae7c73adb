//! Physical and astronomical constants, defined once for the whole crate.
//!
//! Exact SI and IAU defining constants; the gravitational parameters of the DE440 integration
//! stay beside the ephemeris (`ephemeris::GM_*`) because they belong to that ephemeris.

/// Seconds in one day of a uniform scale (exact; IAU day of 86 400 SI seconds).
pub const SECONDS_PER_DAY: f64 = 86_400.0;
/// Days in one Julian year (exact, IAU).
pub const DAYS_PER_JULIAN_YEAR: f64 = 365.25;
/// Seconds in one Julian year (exact).
pub const SECONDS_PER_JULIAN_YEAR: f64 = SECONDS_PER_DAY * DAYS_PER_JULIAN_YEAR;
/// Speed of light in vacuum, m/s (exact, SI definition of the metre).
pub const SPEED_OF_LIGHT_M_PER_S: f64 = 299_792_458.0;
/// Speed of light in vacuum, km/s (exact).
pub const SPEED_OF_LIGHT_KM_PER_S: f64 = SPEED_OF_LIGHT_M_PER_S / 1000.0;
/// Astronomical unit, m (exact; IAU 2012 Resolution B2).
pub const ASTRONOMICAL_UNIT_M: f64 = 149_597_870_700.0;
/// Astronomical unit, km (exact).
pub const ASTRONOMICAL_UNIT_KM: f64 = ASTRONOMICAL_UNIT_M / 1000.0;
/// Smallest tail probability a double-precision 1 − CDF resolves; below it a computed
/// p-value or false-alarm probability is rounding noise and is printed as the bound
/// "< 1e-16" (common practice: 1 − CDF loses everything below the machine epsilon, 2.2e-16).
pub const PROBABILITY_FLOOR: f64 = 1e-16;
/// Light time for one astronomical unit, s (≈ 499.004 784 s; from the two exact values above).
pub const LIGHT_TIME_PER_AU_S: f64 = ASTRONOMICAL_UNIT_M / SPEED_OF_LIGHT_M_PER_S;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn derived_values_match_the_published_ones() {
        // IAU 2012 B2 and the SI: 1 au / c = 499.004 783 836 s (IERS Conventions 2010, Table 1.1).
        assert!((LIGHT_TIME_PER_AU_S - 499.004_783_836).abs() < 1e-9);
        assert_eq!(SECONDS_PER_JULIAN_YEAR, 31_557_600.0);
        assert_eq!(SPEED_OF_LIGHT_KM_PER_S, 299_792.458);
    }
}
