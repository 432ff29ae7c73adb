//! The invented binary pulsar of the demo, Veyra Beacon: radio arrival times from one invented
//! site over 500 days (UTC at the site, dispersed at 1400 and 820 MHz) and an 8 ks list of
//! X-ray photon arrival times already referred to the barycentre (TDB), both made from one
//! true timing model ([`true_model`]) with `pulsar::model`.

use skyclock::constants::SECONDS_PER_DAY;
use std::fmt::Write as _;
use std::path::Path;

use anyhow::{Context, Result};

use super::random::SeededRandom;
use skyclock::arrival::{BarycentricCorrector, DelayOptions};
use skyclock::config::parse_description;
use skyclock::ephemeris::embedded;
use skyclock::observer::{EarthOrientation, Observer};
use skyclock::pulsar::model::{ArrivalTime, Orbit, TimingModel};
use skyclock::time::{LeapSecondTable, ScaleConverter, TimeFormat, TimeScale, format_time};

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
/// File names inside the datasets folder.
pub const PULSAR_DESCRIPTION_FILE: &str = "veyra_beacon.toml";
/// Radio arrival times.
pub const PULSAR_TOAS_FILE: &str = "veyra_beacon_radio_toas.csv";
/// X-ray photon events (barycentric).
pub const PULSAR_EVENTS_FILE: &str = "veyra_beacon_xray_events.csv";
/// Starting model for the timing fit (true values slightly perturbed).
pub const PULSAR_START_MODEL_FILE: &str = "veyra_beacon_start_model.toml";

/// The true timing model (invented).
pub fn true_model() -> TimingModel {
    TimingModel {
        name: "Veyra Beacon".into(),
        epoch_mjd_day_tdb: 60_400,
        epoch_seconds_of_day_tdb: 0.0,
        phase_offset_cycles: 0.0,
        freq_hz: 46.382_917_3,
        freq_deriv_hz_per_s: -2.1e-14,
        freq_second_deriv_hz_per_s2: 0.0,
        dispersion_measure_pc_per_cm3: 38.2,
        position_offset_ra_mas: 0.0,
        position_offset_dec_mas: 0.0,
        proper_motion_ra_mas_per_yr: 0.0,
        proper_motion_dec_mas_per_yr: 0.0,
        instrument_delays_s: Default::default(),
        orbit: Some(Orbit {
            orbital_period_d: 1.733_2,
            projected_semi_major_axis_lt_s: 2.841,
            eccentricity: 0.08,
            periastron_longitude_deg: 71.0,
            periastron_time_s: 35_000.0,
            einstein_amplitude_s: 0.0,
            shapiro_range_s: 0.0,
            shapiro_shape: 0.0,
        }),
        fit: Vec::new(),
    }
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
    let description = parse_description(PULSAR_DESCRIPTION_TOML, PULSAR_DESCRIPTION_FILE)?;
    let source = description.source.clone().context("the pulsar description has a source")?;
    let site = description.sites.values().next().cloned().context("the pulsar description has a site")?;
    let converter = ScaleConverter::new(LeapSecondTable::builtin());
    let corrector =
        BarycentricCorrector::new(embedded(), converter, EarthOrientation::Ignored, source, DelayOptions::default());
    let model = true_model();
    let epoch = model.epoch();
    let mut rng = SeededRandom::new(seed ^ 0x5eed_0002);
    // Radio: 110 arrival times, 500 days, 30 µs (1400 MHz) or 60 µs (820 MHz), Gaussian.
    let mut csv = String::from("time,error_us,freq_mhz,instrument\n");
    for k in 0..110 {
        let day = -250.0 + 500.0 * (k as f64 + 0.8 * rng.uniform()) / 110.0;
        let (freq, sigma_us, instrument) =
            if rng.uniform() < 0.7 { (1400.0, 30.0, "wideband-1400") } else { (820.0, 60.0, "lowband-820") };
        let guess = day * SECONDS_PER_DAY;
        let n = (model.spin().phase_cycles(guess)).round();
        let t_bary = pulse_arrival_s(&model, n, guess, Some(freq)) + sigma_us * 1e-6 * rng.normal();
        let bjd = epoch.add_seconds(t_bary);
        let utc = corrector.arrival_at_observer(&bjd, &Observer::Site(site.clone()), TimeScale::Utc)?;
        writeln!(csv, "{},{sigma_us},{freq},{instrument}", format_time(&utc, TimeFormat::Mjd))?;
    }
    std::fs::write(folder.join(PULSAR_TOAS_FILE), csv)?;
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
