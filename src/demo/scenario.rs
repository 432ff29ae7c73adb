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
use std::collections::BTreeMap;
use std::fmt::Write as _;
use std::path::Path;

use anyhow::{Context, Result};

use super::random::SeededRandom;
use skyclock::arrival::{BarycentricCorrector, DelayOptions, Source};
use skyclock::config::parse_description;
use skyclock::ephemeris::embedded;
use skyclock::observer::{EarthOrientation, Observer, Site};
use skyclock::time::format::format_whole_and_fraction;
use skyclock::time::{Instant, LeapSecondTable, ScaleConverter, TimeFormat, TimeScale, format_time};

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
/// Depth of the primary and secondary eclipse, mag; half-width of each eclipse in phase.
pub const ECLIPSE_DEPTHS_MAG: (f64, f64, f64) = (0.75, 0.30, 0.07);
/// Photometric noise of the season, mag.
pub const PHOTOMETRY_NOISE_MAG: f64 = 0.008;

/// The sites and source of the scenario, as TOML.
pub const DESCRIPTION_TOML: &str = r#"# Invented observatories and the invented eclipsing binary of the skyclock demo.
[[site]]
name = "Ridge Hollow Observatory"
east_longitude_deg = -105.123
latitude_deg = 39.456
height_m = 2150.0

[[site]]
name = "Saltbush Plain Station"
east_longitude_deg = 23.472
latitude_deg = -30.618
height_m = 1342.0

[[site]]
name = "Kestrel Downs"
east_longitude_deg = 146.517
latitude_deg = -30.406
height_m = 212.0

[source]
name = "KX Inventa"
ra = "05:12:33.21"
dec = "+21:07:44.0"
"#;

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

/// The invented light curve: magnitude at BJD_TDB `t` (eclipses with parabolic bottoms at
/// the true minima, a weak ellipsoidal term).
pub fn true_magnitude(t: &Instant) -> f64 {
    let epoch = true_minimum(0);
    let e = (t.seconds_since(&epoch) / SECONDS_PER_DAY / TRUE_PERIOD_D).round();
    let (d1, d2, w) = ECLIPSE_DEPTHS_MAG;
    let dip = |centre: Instant, depth: f64| {
        let x = t.seconds_since(&centre) / SECONDS_PER_DAY / TRUE_PERIOD_D;
        if x.abs() < w { depth * (1.0 - (x / w).powi(2)) } else { 0.0 }
    };
    let mut m = 11.40;
    for k in [e - 1.0, e, e + 1.0] {
        m += dip(true_minimum_at(k), d1) + dip(true_minimum_at(k + 0.5), d2);
    }
    let phase = t.seconds_since(&epoch) / SECONDS_PER_DAY / TRUE_PERIOD_D;
    m + 0.015 * (1.0 - (2.0 * std::f64::consts::TAU * phase).cos())
}

/// Writes the scenario's files into `folder` (created if needed).
pub fn write_datasets(folder: &Path) -> Result<()> {
    std::fs::create_dir_all(folder).with_context(|| format!("creating {}", folder.display()))?;
    let description = parse_description(DESCRIPTION_TOML, DESCRIPTION_FILE)?;
    let source: Source = description.source.clone().context("scenario has a source")?;
    let sites: Vec<Site> = description.sites.values().cloned().collect();
    let converter = ScaleConverter::new(LeapSecondTable::builtin());
    let corrector = BarycentricCorrector::new(
        embedded(),
        converter.clone(),
        EarthOrientation::Ignored,
        source,
        DelayOptions::default(),
    );
    let observers: BTreeMap<&str, (&str, f64)> = [
        ("Ridge Hollow Observatory", ("A. Quillfeather", 25.0)),
        ("Saltbush Plain Station", ("B. Marrowdale", 45.0)),
        ("Kestrel Downs", ("C. Tansyworth", 70.0)),
    ]
    .into_iter()
    .collect();
    let mut rng = SeededRandom::new(SEED);
    let first_cycle = -10_500_i64; // early 1996
    let last_cycle = 2_400_i64; // late 2025
    let ccd_era = -6_100_i64; // 2006
    let mut csv = String::from("site,observer,clock,kind,time,error_d\n");
    let mut cycle = first_cycle;
    while cycle <= last_cycle {
        cycle += if cycle < ccd_era { 30 + rng.below(60) as i64 } else { 4 + rng.below(30) as i64 };
        // Observable only in the star's season (about September to March).
        let t = true_minimum(cycle);
        let (_, month, _) = skyclock::time::calendar::civil_from_mjd(t.mjd_day());
        if (4..=8).contains(&month) {
            continue;
        }
        let site = &sites[rng.below(sites.len() as u64) as usize];
        let (observer_name, ccd_sigma_s) = observers[site.name.as_str()];
        let sigma_s = if cycle < ccd_era { SECONDS_PER_DAY * (0.0015 + 0.0015 * rng.uniform()) } else { ccd_sigma_s };
        let secondary = rng.uniform() < 0.2;
        let centre = if secondary { true_minimum_at(cycle as f64 + 0.5) } else { t };
        let noise_s = sigma_s * rng.normal();
        let bjd = centre.add_seconds(noise_s);
        let observer = Observer::Site(site.clone());
        let utc = corrector.arrival_at_observer(&bjd, &observer, TimeScale::Utc)?;
        let pick = rng.uniform();
        let (clock, text) = if pick < 0.40 {
            ("jd_utc", format_time(&utc, TimeFormat::Jd))
        } else if pick < 0.65 {
            let helio = corrector.heliocentric_delay_s(&utc, &observer)?;
            ("hjd_utc", format_time(&utc.add_seconds(helio), TimeFormat::Jd))
        } else if pick < 0.80 {
            ("bjd_tdb", format_time(&bjd, TimeFormat::Jd))
        } else if pick < 0.90 {
            ("mjd_tt", format_time(&converter.convert(&utc, TimeScale::Tt)?, TimeFormat::Mjd))
        } else {
            ("iso_utc", skyclock::time::format::format_iso(&utc, 3))
        };
        // Observers report times to 1e-5 d (~1 s) as is common practice.
        let text = round_decimal_text(&text, clock);
        let error_d = sigma_s / SECONDS_PER_DAY;
        let kind = if secondary { "secondary" } else { "primary" };
        writeln!(csv, "{},{},{},{},{},{:.6}", site.name, observer_name, clock, kind, text, error_d)?;
    }
    std::fs::write(folder.join(MINIMA_FILE), csv)?;
    std::fs::write(folder.join(DESCRIPTION_FILE), DESCRIPTION_TOML)?;
    write_photometry(folder, &corrector, &sites[0], &mut rng)?;
    super::pulsar_scenario::write_pulsar_datasets(folder, SEED)?;
    super::planet_scenario::write_planet_datasets(folder, SEED)?;
    Ok(())
}

/// One season of CCD photometry from Ridge Hollow (JD UTC as read at the telescope): clear
/// nights (65 %) from 2025-09-20 to 2025-12-18, a point every 5 min while the star is up at
/// night (6 h a night), Gaussian noise of [`PHOTOMETRY_NOISE_MAG`].
fn write_photometry(
    folder: &Path,
    corrector: &BarycentricCorrector,
    site: &Site,
    rng: &mut SeededRandom,
) -> Result<()> {
    let observer = Observer::Site(site.clone());
    let mut csv = String::from("time,mag,mag_err\n");
    // 2025-09-20 is MJD 60938; local midnight at longitude −105° is ~07:00 UTC.
    for night in 0..90 {
        if rng.uniform() >= 0.65 {
            continue;
        }
        for k in 0..72 {
            let utc = Instant::from_utc_parts_unchecked(
                60_938 + night,
                3.6 * 3_600.0 + 300.0 * k as f64 + 20.0 * rng.uniform(),
            );
            let bjd = corrector.correct(&utc, &observer, skyclock::arrival::ReferencePoint::Observer)?.bjd_tdb;
            let mag = true_magnitude(&bjd) + PHOTOMETRY_NOISE_MAG * rng.normal();
            writeln!(csv, "{},{mag:.4},{PHOTOMETRY_NOISE_MAG}", format_time(&utc, TimeFormat::Jd))?;
        }
    }
    std::fs::write(folder.join(PHOTOMETRY_FILE), csv)?;
    Ok(())
}

/// Rounds a day-number text to 6 decimals (ISO text is kept).
fn round_decimal_text(text: &str, clock: &str) -> String {
    if clock.starts_with("iso") {
        return text.to_string();
    }
    match skyclock::time::format::parse_split_decimal(text) {
        Some(d) => format_whole_and_fraction(d.whole, d.fraction, 6),
        None => text.to_string(),
    }
}
