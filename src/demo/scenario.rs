//! The invented scenario and the code that writes its data files.
//!
//! Truth: KX Inventa (invented), RA 05:12:33.21, Dec +21:07:44.0 (close to the ecliptic, so
//! the Rømer delay swings by ±8 min over the year). Primary minima follow
//! BJD_TDB = 2459000.34567890 + 0.83712345 · E exactly. Timings 2019–2024 from three
//! invented observatories, each with Gaussian timing noise of its own size, reported in
//! mixed clocks: JD UTC, HJD UTC (legacy), BJD TDB, MJD TT and ISO UTC.

use std::collections::BTreeMap;
use std::fmt::Write as _;
use std::path::Path;

use anyhow::{Context, Result};

use super::random::SeededRandom;
use crate::arrival::{BarycentricCorrector, DelayOptions, Source};
use crate::config::parse_description;
use crate::ephemeris::embedded;
use crate::observer::{EarthOrientation, Observer, Site};
use crate::time::format::format_whole_and_fraction;
use crate::time::{Instant, LeapSecondTable, ScaleConverter, TimeFormat, TimeScale, format_time};

/// Reference epoch of the true ephemeris, BJD_TDB (JD).
pub const TRUE_EPOCH_JD: (f64, f64) = (2_459_000.5, -0.154_321_10);
/// True period, d.
pub const TRUE_PERIOD_D: f64 = 0.837_123_45;
/// Seed of the scenario.
pub const SEED: u64 = 20_261_202;

/// The sites and source of the scenario, as TOML.
pub const DESCRIPTION_TOML: &str = r#"# Invented observatories and the invented eclipsing binary of the skyclock demo.
[[site]]
name = "Ridge Hollow Observatory"
east_longitude_deg = -105.123
latitude_deg = 39.456
height_m = 2150.0

[[site]]
name = "Salt Flat Station"
east_longitude_deg = 20.811
latitude_deg = -32.379
height_m = 1798.0

[[site]]
name = "Kestrel Point"
east_longitude_deg = 149.066
latitude_deg = -31.277
height_m = 1149.0

[source]
name = "KX Inventa"
ra = "05:12:33.21"
dec = "+21:07:44.0"
"#;

/// File names inside the datasets folder.
pub const DESCRIPTION_FILE: &str = "kx_inventa_sites.toml";
/// Timings file.
pub const MINIMA_FILE: &str = "kx_inventa_minima.csv";

/// True BJD_TDB of primary minimum `cycle`.
pub fn true_minimum(cycle: i64) -> Instant {
    let epoch = Instant::from_jd_two_part(TimeScale::Tdb, TRUE_EPOCH_JD.0, TRUE_EPOCH_JD.1);
    // Split cycle × period into whole days and the rest to keep precision.
    let days = cycle as f64 * TRUE_PERIOD_D;
    epoch.add_seconds(days * 86_400.0)
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
        ("Salt Flat Station", ("B. Marrowdale", 45.0)),
        ("Kestrel Point", ("C. Tansyworth", 70.0)),
    ]
    .into_iter()
    .collect();
    let mut rng = SeededRandom::new(SEED);
    let first_cycle = -300_i64; // mid-2018
    let last_cycle = 2_300_i64; // late 2024
    let mut csv = String::from("site,observer,clock,time,error_d\n");
    let mut cycle = first_cycle;
    while cycle <= last_cycle {
        cycle += 2 + rng.below(20) as i64;
        let site = &sites[rng.below(sites.len() as u64) as usize];
        let (observer_name, sigma_s) = observers[site.name.as_str()];
        let noise_s = sigma_s * rng.normal();
        let bjd = true_minimum(cycle).add_seconds(noise_s);
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
            ("iso_utc", crate::time::format::format_iso(&utc, 3))
        };
        // Observers report times to 1e-5 d (~1 s) as is common practice.
        let text = round_decimal_text(&text, clock);
        let error_d = sigma_s / 86_400.0;
        writeln!(csv, "{},{},{},{},{:.6}", site.name, observer_name, clock, text, error_d)?;
    }
    std::fs::write(folder.join(MINIMA_FILE), csv)?;
    std::fs::write(folder.join(DESCRIPTION_FILE), DESCRIPTION_TOML)?;
    Ok(())
}

/// Rounds a day-number text to 6 decimals (ISO text is kept).
fn round_decimal_text(text: &str, clock: &str) -> String {
    if clock.starts_with("iso") {
        return text.to_string();
    }
    match crate::time::format::parse_split_decimal(text) {
        Some(d) => format_whole_and_fraction(d.whole, d.fraction, 6),
        None => text.to_string(),
    }
}
