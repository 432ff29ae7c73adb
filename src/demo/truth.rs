//! The writers of the demo's invented truth, used by `examples/make_demo_datasets.rs` only:
//! the binary reads the committed data in `datasets/` (compiled in, see `run.rs`) and never
//! makes its own input. The observed times are computed from these truth tables by
//! `datasets/generator/observe.py` (astropy + DE440), independently of skyclock's
//! barycentric correction (`datasets/generator/README.md`).

use skyclock::constants::SECONDS_PER_DAY;
use std::collections::BTreeMap;
use std::fmt::Write as _;
use std::path::Path;

use anyhow::{Context, Result};

use super::pulsar_scenario::{PULSAR_DESCRIPTION_FILE, PULSAR_EVENTS_FILE, PULSAR_START_MODEL_FILE, true_model};
use super::random::SeededRandom;
use super::scenario::{DESCRIPTION_FILE, SEED, TRUE_PERIOD_D, true_minimum, true_minimum_at};
use skyclock::arrival::{BarycentricCorrector, DelayOptions, Source};
use skyclock::config::parse_description;
use skyclock::ephemeris::embedded;
use skyclock::observer::{EarthOrientation, Observer, Site};
use skyclock::pulsar::model::{ArrivalTime, TimingModel};
use skyclock::time::{Instant, LeapSecondTable, ScaleConverter, TimeFormat, TimeScale, format_time};

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

/// Site and source of the pulsar, as TOML.
pub const PULSAR_DESCRIPTION_TOML: &str = r#"# The invented radio site and invented binary pulsar of the skyclock demo.
[[site]]
name = "Harrow Moss Radio Array"
east_longitude_deg = 12.482
latitude_deg = 53.911
height_m = 41.0

[source]
name = "Veyra Beacon"
ra = "16:41:07.30"
dec = "-23:35:12.0"
"#;
/// Truth of the radio arrival times (barycentric, TDB), in the generator folder.
pub const PULSAR_TOAS_TRUTH_FILE: &str = "veyra_beacon_radio_truth.csv";
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

/// Folder (inside the datasets folder) of the truth tables and of the generator that turns
/// them into observed times.
pub const GENERATOR_FOLDER: &str = "generator";
/// Truth of the timings: each minimum's true BJD_TDB (with its timing noise) and how it is to
/// be reported (site, observer, clock, kind, σ).
pub const MINIMA_TRUTH_FILE: &str = "kx_inventa_minima_truth.csv";
/// Truth of the photometry: each sample's true BJD_TDB and magnitude.
pub const PHOTOMETRY_TRUTH_FILE: &str = "kx_inventa_photometry_truth.csv";

/// Writes the scenario's truth into `folder`/generator and its descriptions into `folder`
/// (created if needed).
///
/// The observed times (JD UTC, HJD UTC, MJD TT, ISO UTC at the invented sites) are not made
/// here: `datasets/generator/observe.py` computes them from these truth tables with astropy
/// and DE440, independently of skyclock's barycentric correction, so that a fault in that
/// correction shows in what the demo recovers instead of cancelling.
pub fn write_datasets(folder: &Path) -> Result<()> {
    let generator = folder.join(GENERATOR_FOLDER);
    std::fs::create_dir_all(&generator).with_context(|| format!("creating {}", generator.display()))?;
    let description = parse_description(DESCRIPTION_TOML, DESCRIPTION_FILE)?;
    let source: Source = description.source.clone().context("scenario has a source")?;
    let sites: Vec<Site> = description.sites.values().cloned().collect();
    let converter = ScaleConverter::new(LeapSecondTable::builtin());
    // Used only to place the photometry samples at night (see write_photometry_truth).
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
    let mut csv = String::from("site,observer,clock,kind,bjd_tdb,error_d\n");
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
        let pick = rng.uniform();
        let clock = if pick < 0.40 {
            "jd_utc"
        } else if pick < 0.65 {
            "hjd_utc"
        } else if pick < 0.80 {
            "bjd_tdb"
        } else if pick < 0.90 {
            "mjd_tt"
        } else {
            "iso_utc"
        };
        let error_d = sigma_s / SECONDS_PER_DAY;
        let kind = if secondary { "secondary" } else { "primary" };
        writeln!(
            csv,
            "{},{},{},{},{},{:.6}",
            site.name,
            observer_name,
            clock,
            kind,
            format_time(&bjd, TimeFormat::Jd),
            error_d
        )?;
    }
    std::fs::write(generator.join(MINIMA_TRUTH_FILE), csv)?;
    std::fs::write(folder.join(DESCRIPTION_FILE), DESCRIPTION_TOML)?;
    write_photometry_truth(&generator, &corrector, &sites[0], &mut rng)?;
    write_pulsar_datasets(folder, SEED)?;
    super::planet_scenario::write_planet_datasets(folder, SEED)?;
    Ok(())
}

/// The truth of one season of CCD photometry from Ridge Hollow: clear nights (65 %) from
/// 2025-09-20 to 2025-12-18, a sample every 5 min while the star is up at night (6 h a
/// night), Gaussian noise of [`PHOTOMETRY_NOISE_MAG`]. Each sample is written as its true
/// BJD_TDB and magnitude; the generator turns the BJD_TDB into JD UTC at the telescope.
/// skyclock's own correction only places the samples in the night (a fault there would move
/// a sample by minutes, not change the magnitude the truth gives it).
fn write_photometry_truth(
    folder: &Path,
    corrector: &BarycentricCorrector,
    site: &Site,
    rng: &mut SeededRandom,
) -> Result<()> {
    let observer = Observer::Site(site.clone());
    let mut csv = String::from("bjd_tdb,mag,mag_err\n");
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
            writeln!(csv, "{},{mag:.4},{PHOTOMETRY_NOISE_MAG}", format_time(&bjd, TimeFormat::Jd))?;
        }
    }
    std::fs::write(folder.join(PHOTOMETRY_TRUTH_FILE), csv)?;
    Ok(())
}

/// Barycentric arrival time (s after the epoch) of pulse `n` at `freq_mhz`, by Newton steps
/// on the model phase.
fn pulse_arrival_s(model: &TimingModel, n: f64, guess_s: f64, freq_mhz: Option<f64>) -> f64 {
    let mut t = guess_s;
    for _ in 0..8 {
        let toa = ArrivalTime { t_s: t, error_s: 1e-6, freq_mhz, instrument: "default".into(), observer: None };
        let phase = model.phase_cycles(&toa);
        t -= (phase - n) / model.freq_hz;
    }
    t
}

/// Writes the pulsar's files into `folder`.
pub fn write_pulsar_datasets(folder: &Path, seed: u64) -> Result<()> {
    let model = true_model();
    let epoch = model.epoch();
    let mut rng = SeededRandom::new(seed ^ 0x5eed_0002);
    // Radio: 110 arrival times, 500 days, 30 µs (1400 MHz) or 60 µs (820 MHz), Gaussian.
    // Written as the true barycentric arrival (TDB, dispersed at the row's frequency, with its
    // noise); datasets/generator/observe.py carries each to UTC at the site with astropy and
    // DE440, independently of skyclock's barycentric correction.
    let mut csv = String::from("bjd_tdb_mjd,error_us,freq_mhz,instrument\n");
    for k in 0..110 {
        let day = -250.0 + 500.0 * (k as f64 + 0.8 * rng.uniform()) / 110.0;
        let (freq, sigma_us, instrument) =
            if rng.uniform() < 0.7 { (1400.0, 30.0, "wideband-1400") } else { (820.0, 60.0, "lowband-820") };
        let guess = day * SECONDS_PER_DAY;
        let n = (model.spin().phase_cycles(guess)).round();
        let t_bary = pulse_arrival_s(&model, n, guess, Some(freq)) + sigma_us * 1e-6 * rng.normal();
        let bjd = epoch.add_seconds(t_bary);
        writeln!(csv, "{},{sigma_us},{freq},{instrument}", format_time(&bjd, TimeFormat::Mjd))?;
    }
    let generator = folder.join(GENERATOR_FOLDER);
    std::fs::create_dir_all(&generator).with_context(|| format!("creating {}", generator.display()))?;
    std::fs::write(generator.join(PULSAR_TOAS_TRUTH_FILE), csv)?;
    // X-rays: 8 ks starting 20 days after the epoch; 6000 photons, 35 % pulsed with a
    // two-harmonic profile, barycentric TDB (MJD).
    let start_s = 20.0 * SECONDS_PER_DAY;
    let mut csv = String::from("time\n");
    let mut kept = 0;
    while kept < 6_000 {
        let t = start_s + 8_000.0 * rng.uniform();
        let phase = skyclock::pulsar::profile::event_phase_cycles(&model, t, "default");
        let x = std::f64::consts::TAU * phase;
        let density = 0.65 + 0.35 * (1.0 + 0.8 * x.cos() + 0.4 * (2.0 * x - 0.6).cos());
        if rng.uniform() * 1.77 < density {
            writeln!(csv, "{}", format_time(&epoch.add_seconds(t).relabel(TimeScale::Tdb), TimeFormat::Mjd))?;
            kept += 1;
        }
    }
    // Sort by time (events must be in order).
    let mut lines: Vec<&str> = csv.lines().skip(1).collect();
    lines.sort_by(|a, b| a.parse::<f64>().unwrap_or(0.0).total_cmp(&b.parse::<f64>().unwrap_or(0.0)));
    std::fs::write(folder.join(PULSAR_EVENTS_FILE), format!("time\n{}\n", lines.join("\n")))?;
    // Starting model (an invented earlier study): ν off by 4e-9 Hz, ν̇ off by 2e-16 Hz/s,
    // projected semi-major axis off by 2 ms, close enough to keep the phase connected.
    let mut start = model.clone();
    start.freq_hz += 4e-9;
    start.freq_deriv_hz_per_s = -2.08e-14;
    // Every fitted parameter starts away from the truth (a fit that does nothing must fail
    // the demo's comparison): ν by 4e-9 Hz, ν̇ by 1 %, DM by 0.05 pc/cm³, x by 2 ms of light,
    // the time of periastron by 20 s.
    start.dispersion_measure_pc_per_cm3 += 0.05;
    if let Some(o) = start.orbit.as_mut() {
        o.projected_semi_major_axis_lt_s += 0.002;
        o.periastron_time_s += 20.0;
    }
    {
        use skyclock::pulsar::model::TimingParameter as P;
        start.fit = [
            P::FreqHz,
            P::FreqDerivHzPerS,
            P::DispersionMeasurePcPerCm3,
            P::ProjectedSemiMajorAxisLtS,
            P::PeriastronTimeS,
        ]
        .into_iter()
        .map(Into::into)
        .collect();
    }
    std::fs::write(folder.join(PULSAR_START_MODEL_FILE), start.to_toml()?)?;
    std::fs::write(folder.join(PULSAR_DESCRIPTION_FILE), PULSAR_DESCRIPTION_TOML)?;
    Ok(())
}
