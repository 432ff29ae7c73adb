//! The invented scenario and the code that writes its data files.
//!
//! Truth: KX Inventa (invented), RA 05:12:33.21, Dec +21:07:44.0 (close to the ecliptic, so
//! the Rømer delay swings by ±8 min over the year). Primary minima follow
//! BJD_TDB = T₀ + P·E + Q·E² + τ(t), with T₀ = 2459000.34567890, P = 0.83712345 d, a slow
//! period increase Q = 4e-11 d/cycle² and the light time τ of an unseen third body on an
//! eccentric orbit (Irwin 1952; [`THIRD_BODY`]). Timings 1996–2025 from three invented
//! observatories — visual and photographic timings of 0.0015–0.003 d before 2006, CCD timings
//! of 25–70 s after — reported in mixed clocks: JD UTC, HJD UTC (legacy), BJD TDB, MJD TT
//! and ISO UTC. A season of CCD photometry (autumn 2025, JD UTC at Ridge Hollow) covers
//! eclipses for the period search and the times of minimum.

use skyclock::constants::SECONDS_PER_DAY;
use skyclock::time::{Instant, TimeScale};

/// Reference epoch of the true ephemeris, BJD_TDB (JD).
pub const TRUE_EPOCH_JD: (f64, f64) = (2_459_000.5, -0.154_321_10);
/// True period, d.
pub const TRUE_PERIOD_D: f64 = 0.837_123_45;
/// Seed of the scenario.
pub const SEED: u64 = 20_261_202;
/// Quadratic ephemeris term Q = ½ dP/dE, d/cycle².
pub const TRUE_QUADRATIC_D: f64 = 4.0e-11;
/// The third body's light-time orbit: [a₁₂ sin i / c (d), P₃ (d), √e cos ω, √e sin ω, M₀
/// (rad at the epoch)] — a₁₂ sin i / c = 0.0025 d (216 s), P₃ = 3300 d (9.0 yr), e = 0.32,
/// ω = 120°, as parameterised in `oc::models`.
pub const THIRD_BODY: [f64; 5] = [0.0025, 3_300.0, -0.282_842_7, 0.489_897_9, 1.0];
/// Mass of the eclipsing pair M₁ + M₂ stated with the scenario, M☉.
pub const BINARY_MASS_MSUN: f64 = 2.3;
/// Light-curve file (one season of photometry).
pub const PHOTOMETRY_FILE: &str = "kx_inventa_photometry.csv";

/// File names inside the datasets folder.
pub const DESCRIPTION_FILE: &str = "kx_inventa_sites.toml";
/// Timings file.
pub const MINIMA_FILE: &str = "kx_inventa_minima.csv";

/// True BJD_TDB of the minimum at `cycle` (integer: primary, half-integer: secondary):
/// linear + quadratic ephemeris plus the third body's light time.
pub fn true_minimum_at(cycle: f64) -> Instant {
    let epoch = Instant::from_jd_two_part(TimeScale::Tdb, TRUE_EPOCH_JD.0, TRUE_EPOCH_JD.1);
    let linear_d = cycle * TRUE_PERIOD_D;
    let days = linear_d + TRUE_QUADRATIC_D * cycle * cycle + skyclock::oc::models::light_time_d(&THIRD_BODY, linear_d);
    epoch.add_seconds(days * SECONDS_PER_DAY)
}

/// True BJD_TDB of primary minimum `cycle`.
pub fn true_minimum(cycle: i64) -> Instant {
    true_minimum_at(cycle as f64)
}
