//! The invented binary pulsar of the demo, Veyra Beacon: radio arrival times from one invented
//! site over 500 days (UTC at the site, dispersed at 1400 and 820 MHz) and an 8 ks list of
//! X-ray photon arrival times already referred to the barycentre (TDB), both made from one
//! true timing model ([`true_model`]) with `pulsar::model`.

use skyclock::pulsar::model::{Orbit, TimingModel};

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
