//! The timing model: spin, dispersion, instrument offsets and a Keplerian binary orbit with
//! Einstein and Shapiro terms, and the analytic derivatives of the pulse phase with respect
//! to every parameter.
//!
//! Emission time t_e = t − Δ_disp − Δ_inst − Δ_bin(t_e), t the barycentric (TDB) arrival in
//! seconds after the epoch. Dispersion Δ_disp = K·DM/f², K = 4.148808×10³ s MHz² pc⁻¹ cm³
//! (common practice), f the observing frequency (the topocentric frequency stands in for the
//! barycentric one: the Doppler factor ≤1e-4 changes Δ_disp by ≤2e-4 of itself).
//! Binary (Blandford & Teukolsky 1976, ApJ 205, 580, eqs. 2.33–2.36; Shapiro term of
//! Damour & Deruelle 1986 in the BT geometry): with α = x sin ω, β = x√(1−e²) cos ω,
//! Δ_bin = α(cos E − e) + (β + γ) sin E − 2r ln[1 − e cos E − s(sin ω (cos E − e) +
//! √(1−e²) cos ω sin E)], E from Kepler's equation at the emission time (solved exactly by
//! iteration, which replaces BT's first-order factor). Phase φ = φ₀ + ν t_e + ν̇ t_e²/2 + ν̈ t_e³/6.
//!
//! Position and proper motion: the arrival times were barycentred towards a fixed direction
//! n̂₀; a source truly at n̂₀ + Δn̂ arrives at the barycentre later by Δ_pos = (r_obs·Δn̂)/c,
//! r_obs the observer's barycentric position (Lorimer & Kramer 2005, *Handbook of Pulsar
//! Astronomy*, §8.2, the Rømer delay r·n̂/c to first order in Δn̂ — from memory). With ê, n̂_N
//! the unit vectors east and north at n̂₀, Δn̂ = θ_E(t) ê + θ_N(t) n̂_N, θ_E = Δα cos δ + μ_α* t,
//! θ_N = Δδ + μ_δ t, t the barycentric time after the model epoch (the position epoch);
//! so Δ_pos enters as t_e = t + Δ_pos − Δ_disp − …. Neglected: second order in |Δn̂|
//! (≤ 500 s·|Δn̂|²/2, 6 ns at 1″) and the direction dependence of the Shapiro and
//! wavefront-curvature terms.

use crate::constants::SECONDS_PER_DAY;
use std::collections::BTreeMap;
use std::f64::consts::{PI, TAU};

use super::PulsarError;
use super::spin::Spin;
use crate::fit::{Parameter, UnknownParameter, parse_parameter};

/// Dispersion constant K, s MHz² pc⁻¹ cm³ (common practice).
pub const DISPERSION_CONSTANT_S_MHZ2: f64 = 4.148808e3;
const DAY_S: f64 = SECONDS_PER_DAY;
/// Julian year, s (IAU: 365.25 d of 86 400 s), the unit of proper motions.
pub const JULIAN_YEAR_S: f64 = 365.25 * DAY_S;
/// Milliarcseconds to radians.
const MAS_TO_RAD: f64 = std::f64::consts::PI / 648_000_000.0;

/// A Keplerian orbit with relativistic timing terms.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Orbit {
    /// Orbital period, days.
    pub orbital_period_d: f64,
    /// Projected semi-major axis a sin i / c, light seconds.
    pub projected_semi_major_axis_lt_s: f64,
    /// Eccentricity (0 ≤ e < 1).
    #[serde(default)]
    pub eccentricity: f64,
    /// Longitude of periastron ω, degrees.
    #[serde(default)]
    pub periastron_longitude_deg: f64,
    /// Time of periastron, seconds after the model epoch (TDB).
    pub periastron_time_s: f64,
    /// Einstein delay amplitude γ, s.
    #[serde(default)]
    pub einstein_amplitude_s: f64,
    /// Shapiro range r = T☉ m_c, s.
    #[serde(default)]
    pub shapiro_range_s: f64,
    /// Shapiro shape s = sin i.
    #[serde(default)]
    pub shapiro_shape: f64,
}

impl Orbit {
    /// Orbital phase from periastron, cycles in [0, 1), at `t_s` seconds after the epoch.
    pub fn phase_from_periastron_cycles(&self, t_s: f64) -> f64 {
        ((t_s - self.periastron_time_s) / (self.orbital_period_d * DAY_S)).rem_euclid(1.0)
    }
}

/// The full timing model (TOML: see [`TimingModel::from_toml`]).
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TimingModel {
    /// Source name (free text).
    #[serde(default)]
    pub name: String,
    /// Epoch: integer MJD day (TDB).
    pub epoch_mjd_day_tdb: i64,
    /// Epoch: seconds of that day (TDB).
    #[serde(default)]
    pub epoch_seconds_of_day_tdb: f64,
    /// Phase at the epoch, cycles.
    #[serde(default)]
    pub phase_offset_cycles: f64,
    /// Spin frequency ν, Hz.
    pub freq_hz: f64,
    /// ν̇, Hz/s.
    #[serde(default)]
    pub freq_deriv_hz_per_s: f64,
    /// ν̈, Hz/s².
    #[serde(default)]
    pub freq_second_deriv_hz_per_s2: f64,
    /// Dispersion measure, pc cm⁻³.
    #[serde(default)]
    pub dispersion_measure_pc_per_cm3: f64,
    /// Offset of the true position from the one used to barycentre, east (Δα cos δ), mas,
    /// at the model epoch.
    #[serde(default)]
    pub position_offset_ra_mas: f64,
    /// Offset of the true position from the one used to barycentre, north (Δδ), mas, at the
    /// model epoch.
    #[serde(default)]
    pub position_offset_dec_mas: f64,
    /// Proper motion east (μ_α cos δ), mas per Julian year, added to any proper motion the
    /// barycentring already applied.
    #[serde(default)]
    pub proper_motion_ra_mas_per_yr: f64,
    /// Proper motion north (μ_δ), mas per Julian year, added to any proper motion the
    /// barycentring already applied.
    #[serde(default)]
    pub proper_motion_dec_mas_per_yr: f64,
    /// Constant delay per instrument, s (the first instrument of a fit is the zero point).
    #[serde(default)]
    pub instrument_delays_s: BTreeMap<String, f64>,
    /// Binary orbit, if any.
    #[serde(default)]
    pub orbit: Option<Orbit>,
    /// The parameters to fit (keys of this file; instrument delays as
    /// `instrument_delay_s:NAME`). The phase offset is always fitted.
    #[serde(default)]
    pub fit: Vec<FitParameter>,
}

/// Where the observer was when one arrival time was barycentred, and towards which
/// direction: what a position refinement needs.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ObserverGeometry {
    /// The observer's barycentric position, ICRS axes, light seconds.
    pub position_lt_s: [f64; 3],
    /// Unit vector towards the source that the barycentring used, ICRS.
    pub source_unit: [f64; 3],
}

impl ObserverGeometry {
    /// Projections (r·ê/c, r·n̂_N/c) of the observer's position on the unit vectors east
    /// and north of the source direction, light seconds. At a celestial pole, where east is
    /// undefined, the ICRS y axis stands in for east.
    pub fn east_north_lt_s(&self) -> (f64, f64) {
        let [x, y, z] = self.source_unit;
        let rho = (x * x + y * y).sqrt();
        let (east, north) = if rho > 1e-15 {
            ([-y / rho, x / rho, 0.0], [-z * x / rho, -z * y / rho, rho])
        } else {
            ([0.0, 1.0, 0.0], [-z.signum(), 0.0, 0.0])
        };
        let r = self.position_lt_s;
        let dot = |a: [f64; 3]| r[0] * a[0] + r[1] * a[1] + r[2] * a[2];
        (dot(east), dot(north))
    }
}

/// One barycentred arrival time.
#[derive(Debug, Clone, PartialEq)]
pub struct ArrivalTime {
    /// Barycentric arrival, seconds after the model epoch (TDB).
    pub t_s: f64,
    /// 1-σ uncertainty, s.
    pub error_s: f64,
    /// Observing frequency, MHz (None: no dispersion, e.g. X-rays).
    pub freq_mhz: Option<f64>,
    /// Instrument name (for instrument delays).
    pub instrument: String,
    /// Observer position and barycentring direction (None for times given already at the
    /// barycentre; a position or proper-motion refinement then cannot be applied).
    pub observer: Option<ObserverGeometry>,
}

/// Spin parameters, in the order used in design matrices.
pub const SPIN_PARAMETERS: [TimingParameter; 4] = [
    TimingParameter::PhaseOffsetCycles,
    TimingParameter::FreqHz,
    TimingParameter::FreqDerivHzPerS,
    TimingParameter::FreqSecondDerivHzPerS2,
];
/// Orbit parameters, in the order of the orbit partials.
pub const ORBIT_PARAMETERS: [TimingParameter; 8] = [
    TimingParameter::OrbitalPeriodD,
    TimingParameter::ProjectedSemiMajorAxisLtS,
    TimingParameter::Eccentricity,
    TimingParameter::PeriastronLongitudeDeg,
    TimingParameter::PeriastronTimeS,
    TimingParameter::EinsteinAmplitudeS,
    TimingParameter::ShapiroRangeS,
    TimingParameter::ShapiroShape,
];

/// Position and proper-motion parameters (see the module documentation).
pub const POSITION_PARAMETERS: [TimingParameter; 4] = [
    TimingParameter::PositionOffsetRaMas,
    TimingParameter::PositionOffsetDecMas,
    TimingParameter::ProperMotionRaMasPerYr,
    TimingParameter::ProperMotionDecMasPerYr,
];

/// A parameter of the timing model with a fixed name (every key of the model file that
/// holds a number, except the epoch). Instrument delays are keyed by instrument name and are
/// [`FitParameter::InstrumentDelay`].
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum TimingParameter {
    /// Phase at the epoch, cycles.
    PhaseOffsetCycles,
    /// Spin frequency ν, Hz.
    FreqHz,
    /// ν̇, Hz/s.
    FreqDerivHzPerS,
    /// ν̈, Hz/s².
    FreqSecondDerivHzPerS2,
    /// Dispersion measure, pc cm⁻³.
    DispersionMeasurePcPerCm3,
    /// Position offset east (Δα cos δ), mas.
    PositionOffsetRaMas,
    /// Position offset north (Δδ), mas.
    PositionOffsetDecMas,
    /// Proper motion east, mas/yr.
    ProperMotionRaMasPerYr,
    /// Proper motion north, mas/yr.
    ProperMotionDecMasPerYr,
    /// Orbital period, d.
    OrbitalPeriodD,
    /// Projected semi-major axis, light seconds.
    ProjectedSemiMajorAxisLtS,
    /// Eccentricity.
    Eccentricity,
    /// Longitude of periastron, degrees.
    PeriastronLongitudeDeg,
    /// Time of periastron, s after the epoch.
    PeriastronTimeS,
    /// Einstein delay amplitude γ, s.
    EinsteinAmplitudeS,
    /// Shapiro range r, s.
    ShapiroRangeS,
    /// Shapiro shape s = sin i.
    ShapiroShape,
}

impl TimingParameter {
    /// True for the parameters of the `[orbit]` table.
    pub fn is_orbit(self) -> bool {
        ORBIT_PARAMETERS.contains(&self)
    }
}

impl Parameter for TimingParameter {
    const ALL: &'static [TimingParameter] = &[
        TimingParameter::PhaseOffsetCycles,
        TimingParameter::FreqHz,
        TimingParameter::FreqDerivHzPerS,
        TimingParameter::FreqSecondDerivHzPerS2,
        TimingParameter::DispersionMeasurePcPerCm3,
        TimingParameter::PositionOffsetRaMas,
        TimingParameter::PositionOffsetDecMas,
        TimingParameter::ProperMotionRaMasPerYr,
        TimingParameter::ProperMotionDecMasPerYr,
        TimingParameter::OrbitalPeriodD,
        TimingParameter::ProjectedSemiMajorAxisLtS,
        TimingParameter::Eccentricity,
        TimingParameter::PeriastronLongitudeDeg,
        TimingParameter::PeriastronTimeS,
        TimingParameter::EinsteinAmplitudeS,
        TimingParameter::ShapiroRangeS,
        TimingParameter::ShapiroShape,
    ];

    fn name(self) -> &'static str {
        use TimingParameter as T;
        match self {
            T::PhaseOffsetCycles => "phase_offset_cycles",
            T::FreqHz => "freq_hz",
            T::FreqDerivHzPerS => "freq_deriv_hz_per_s",
            T::FreqSecondDerivHzPerS2 => "freq_second_deriv_hz_per_s2",
            T::DispersionMeasurePcPerCm3 => "dispersion_measure_pc_per_cm3",
            T::PositionOffsetRaMas => "position_offset_ra_mas",
            T::PositionOffsetDecMas => "position_offset_dec_mas",
            T::ProperMotionRaMasPerYr => "proper_motion_ra_mas_per_yr",
            T::ProperMotionDecMasPerYr => "proper_motion_dec_mas_per_yr",
            T::OrbitalPeriodD => "orbital_period_d",
            T::ProjectedSemiMajorAxisLtS => "projected_semi_major_axis_lt_s",
            T::Eccentricity => "eccentricity",
            T::PeriastronLongitudeDeg => "periastron_longitude_deg",
            T::PeriastronTimeS => "periastron_time_s",
            T::EinsteinAmplitudeS => "einstein_amplitude_s",
            T::ShapiroRangeS => "shapiro_range_s",
            T::ShapiroShape => "shapiro_shape",
        }
    }

    fn unit(self) -> &'static str {
        use TimingParameter as T;
        match self {
            T::PhaseOffsetCycles => "cycle",
            T::FreqHz => "Hz",
            T::FreqDerivHzPerS => "Hz/s",
            T::FreqSecondDerivHzPerS2 => "Hz/s²",
            T::DispersionMeasurePcPerCm3 => "pc cm⁻³",
            T::PositionOffsetRaMas | T::PositionOffsetDecMas => "mas",
            T::ProperMotionRaMasPerYr | T::ProperMotionDecMasPerYr => "mas/yr",
            T::OrbitalPeriodD => "d",
            T::ProjectedSemiMajorAxisLtS => "lt-s",
            T::Eccentricity | T::ShapiroShape => "1",
            T::PeriastronLongitudeDeg => "deg",
            T::PeriastronTimeS | T::EinsteinAmplitudeS | T::ShapiroRangeS => "s",
        }
    }
}

impl std::fmt::Display for TimingParameter {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}

/// Prefix of an instrument delay's name in fit lists: `instrument_delay_s:NAME`.
pub const INSTRUMENT_DELAY_PREFIX: &str = "instrument_delay_s:";

/// A parameter a timing fit can adjust: one of the fixed [`TimingParameter`]s or the delay
/// of one named instrument. Written and read as its name (`freq_hz`,
/// `instrument_delay_s:NAME`); an unknown name is refused with the list of known ones.
#[derive(Debug, Clone, PartialEq, Eq, Hash, PartialOrd, Ord, serde::Serialize, serde::Deserialize)]
#[serde(try_from = "String", into = "String")]
pub enum FitParameter {
    /// A parameter with a fixed name.
    Model(TimingParameter),
    /// The constant delay of the named instrument, s.
    InstrumentDelay(String),
}

impl FitParameter {
    /// Unit of the value.
    pub fn unit(&self) -> &'static str {
        match self {
            FitParameter::Model(p) => p.unit(),
            FitParameter::InstrumentDelay(_) => "s",
        }
    }
}

impl From<TimingParameter> for FitParameter {
    fn from(p: TimingParameter) -> FitParameter {
        FitParameter::Model(p)
    }
}

impl From<&TimingParameter> for FitParameter {
    fn from(p: &TimingParameter) -> FitParameter {
        FitParameter::Model(*p)
    }
}

impl From<&FitParameter> for FitParameter {
    fn from(p: &FitParameter) -> FitParameter {
        p.clone()
    }
}

impl PartialEq<TimingParameter> for FitParameter {
    fn eq(&self, other: &TimingParameter) -> bool {
        *self == FitParameter::Model(*other)
    }
}

impl std::fmt::Display for FitParameter {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            FitParameter::Model(p) => f.write_str(p.name()),
            FitParameter::InstrumentDelay(name) => write!(f, "{INSTRUMENT_DELAY_PREFIX}{name}"),
        }
    }
}

impl std::str::FromStr for FitParameter {
    type Err = UnknownParameter;

    /// Parses `freq_hz`, …, or `instrument_delay_s:NAME` (NAME not empty).
    fn from_str(s: &str) -> Result<FitParameter, UnknownParameter> {
        let wanted = s.trim();
        if let Some(name) = wanted.strip_prefix(INSTRUMENT_DELAY_PREFIX)
            && !name.trim().is_empty()
        {
            return Ok(FitParameter::InstrumentDelay(name.trim().to_string()));
        }
        parse_parameter::<TimingParameter>(wanted).map(FitParameter::Model).map_err(|mut e| {
            e.known.push("instrument_delay_s:NAME");
            e
        })
    }
}

impl TryFrom<String> for FitParameter {
    type Error = UnknownParameter;
    fn try_from(s: String) -> Result<FitParameter, UnknownParameter> {
        s.parse()
    }
}

impl From<FitParameter> for String {
    fn from(p: FitParameter) -> String {
        p.to_string()
    }
}

/// Why a timing model is refused.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ModelError {
    /// The spin part is not physical.
    #[error("{0}")]
    Spin(String),
    /// A value outside its physical range.
    #[error("{key} = {value}: must be {expected}")]
    OutOfRange {
        /// The model-file key.
        key: &'static str,
        /// The value given.
        value: f64,
        /// What would be accepted.
        expected: &'static str,
    },
    /// An orbit parameter is fitted or set in a model without an `[orbit]` table.
    #[error("fit names '{0}', an orbit parameter, but the model has no [orbit] table; add one or remove the name")]
    NeedsOrbit(TimingParameter),
    /// A parameter name that the model does not know.
    #[error(transparent)]
    Unknown(#[from] UnknownParameter),
    /// A spin derivative that makes the frequency zero or negative at an arrival time.
    #[error(
        "key '{key}' = {value:e} makes the spin frequency {freq_hz:.6e} Hz (not positive) at arrival time {arrival} ({days:.1} d from the model epoch); the frequency must stay > 0 over the data: check the sign and the units (Hz/s, Hz/s²) of the derivative"
    )]
    FrequencyNotPositive {
        /// The derivative's model-file key.
        key: &'static str,
        /// Its value.
        value: f64,
        /// 1-based arrival time (row of the arrival-time table).
        arrival: usize,
        /// Days from the model epoch.
        days: f64,
        /// The frequency there, Hz.
        freq_hz: f64,
    },
}

/// Emission time and the pieces needed for derivatives.
#[derive(Debug, Clone, Copy)]
struct Emission {
    t_e: f64,
    /// ∂Δ_bin/∂q at fixed t_e, for the orbit parameters, before the implicit factor.
    orbit_partials: [f64; 8],
    /// ∂Δ_bin/∂t_e.
    orbit_rate: f64,
}

impl TimingModel {
    /// Reads a model from TOML text; `origin` names the file in errors.
    ///
    /// Every mistake is reported by key ([`super::model_file`]): an unknown key, a value of
    /// the wrong type, a missing required key and a syntax error with the file's line and the
    /// dotted key as the parser finds them; a value out of range ([`Self::validate`]) with
    /// the line where the key is set.
    pub fn from_toml(text: &str, origin: &str) -> Result<TimingModel, PulsarError> {
        use super::model_file::{ModelFileMistake, line_of_key, mistake_from_toml};
        let m: TimingModel =
            toml::from_str(text).map_err(|e| PulsarError::Model(mistake_from_toml(text, &e).describe(origin)))?;
        m.validate().map_err(|e| {
            let mistake = match &e {
                ModelError::OutOfRange { key, value, expected } => ModelFileMistake {
                    line: line_of_key(text, key),
                    key: Some(key.to_string()),
                    message: format!("{value} is out of range: must be {expected}"),
                },
                ModelError::NeedsOrbit(_) | ModelError::Unknown(_) => {
                    ModelFileMistake { line: line_of_key(text, "fit"), key: Some("fit".into()), message: e.to_string() }
                }
                other => ModelFileMistake { line: None, key: None, message: other.to_string() },
            };
            PulsarError::Model(mistake.describe(origin))
        })?;
        Ok(m)
    }

    /// The model as TOML text.
    pub fn to_toml(&self) -> Result<String, PulsarError> {
        toml::to_string_pretty(self).map_err(|e| PulsarError::Model(e.to_string()))
    }

    /// The spin part.
    pub fn spin(&self) -> Spin {
        Spin {
            freq_hz: self.freq_hz,
            freq_deriv_hz_per_s: self.freq_deriv_hz_per_s,
            freq_second_deriv_hz_per_s2: self.freq_second_deriv_hz_per_s2,
        }
    }

    /// The epoch as an instant (TDB).
    pub fn epoch(&self) -> crate::time::Instant {
        crate::time::Instant::from_mjd_parts(
            crate::time::TimeScale::Tdb,
            self.epoch_mjd_day_tdb,
            self.epoch_seconds_of_day_tdb,
        )
    }

    /// Checks physical ranges and that every fitted orbit parameter has an orbit.
    pub fn validate(&self) -> Result<(), ModelError> {
        let range = |key, value: f64, ok: bool, expected| {
            if ok { Ok(()) } else { Err(ModelError::OutOfRange { key, value, expected }) }
        };
        let f = self.freq_hz;
        range("freq_hz", f, f > 0.0 && f.is_finite(), "> 0 Hz and finite (a rotation frequency, not a period)")?;
        let sod = self.epoch_seconds_of_day_tdb;
        range("epoch_seconds_of_day_tdb", sod, (0.0..86_400.0).contains(&sod), "in [0, 86400) s")?;
        let mjd = self.epoch_mjd_day_tdb as f64;
        range(
            "epoch_mjd_day_tdb",
            mjd,
            (-2_400_001.0..=2_973_484.0).contains(&mjd),
            "an MJD in −2400001 … 2973484 (JD 0 to AD 9999)",
        )?;
        for (key, value) in [
            ("phase_offset_cycles", self.phase_offset_cycles),
            ("freq_deriv_hz_per_s", self.freq_deriv_hz_per_s),
            ("freq_second_deriv_hz_per_s2", self.freq_second_deriv_hz_per_s2),
            ("position_offset_ra_mas", self.position_offset_ra_mas),
            ("position_offset_dec_mas", self.position_offset_dec_mas),
            ("proper_motion_ra_mas_per_yr", self.proper_motion_ra_mas_per_yr),
            ("proper_motion_dec_mas_per_yr", self.proper_motion_dec_mas_per_yr),
        ] {
            range(key, value, value.is_finite(), "a finite number")?;
        }
        if let Some((_, d)) = self.instrument_delays_s.iter().find(|(_, d)| !d.is_finite()) {
            range("instrument_delays_s", *d, false, "finite delays, s")?;
        }
        self.spin().validate().map_err(|e| ModelError::Spin(e.to_string()))?;
        let dm = self.dispersion_measure_pc_per_cm3;
        range("dispersion_measure_pc_per_cm3", dm, dm.is_finite() && dm >= 0.0, "≥ 0")?;
        if let Some(o) = &self.orbit {
            let pb = o.orbital_period_d;
            range("orbit.orbital_period_d", pb, pb > 0.0 && pb.is_finite(), "> 0")?;
            range("orbit.eccentricity", o.eccentricity, (0.0..1.0).contains(&o.eccentricity), "in [0, 1)")?;
            let x = o.projected_semi_major_axis_lt_s;
            range("orbit.projected_semi_major_axis_lt_s", x, x >= 0.0 && x.is_finite(), "≥ 0")?;
            let r = o.shapiro_range_s;
            range("orbit.shapiro_range_s", r, r >= 0.0 && r.is_finite(), "≥ 0")?;
            range("orbit.shapiro_shape", o.shapiro_shape, (-1.0..=1.0).contains(&o.shapiro_shape), "in [−1, 1]")?;
            for (key, value) in [
                ("orbit.periastron_longitude_deg", o.periastron_longitude_deg),
                ("orbit.periastron_time_s", o.periastron_time_s),
                ("orbit.einstein_amplitude_s", o.einstein_amplitude_s),
            ] {
                range(key, value, value.is_finite(), "a finite number")?;
            }
        }
        for p in &self.fit {
            if let FitParameter::Model(q) = p
                && q.is_orbit()
                && self.orbit.is_none()
            {
                return Err(ModelError::NeedsOrbit(*q));
            }
        }
        Ok(())
    }

    /// Checks that the spin frequency ν(t) = ν + ν̇t + ν̈t²/2 stays > 0 at every arrival time
    /// of `toas` (a derivative of the wrong sign or in the wrong units makes it negative
    /// within the data, and a fit would then report a lost phase connection instead). The
    /// error names the derivative's key, the first arrival time concerned and the frequency
    /// there.
    pub fn check_spin_over(&self, toas: &[ArrivalTime]) -> Result<(), ModelError> {
        let spin = self.spin();
        for (i, a) in toas.iter().enumerate() {
            let nu = spin.freq_at_hz(a.t_s);
            if !(nu > 0.0) {
                let (key, value) = if self.freq_second_deriv_hz_per_s2 != 0.0
                    && (self.freq_hz + a.t_s * self.freq_deriv_hz_per_s) > 0.0
                {
                    ("freq_second_deriv_hz_per_s2", self.freq_second_deriv_hz_per_s2)
                } else {
                    ("freq_deriv_hz_per_s", self.freq_deriv_hz_per_s)
                };
                return Err(ModelError::FrequencyNotPositive {
                    key,
                    value,
                    arrival: i + 1,
                    days: a.t_s / DAY_S,
                    freq_hz: nu,
                });
            }
        }
        Ok(())
    }

    /// Value of a parameter (`None` for an orbit parameter of a model without an orbit; an
    /// instrument without a delay has 0).
    pub fn get(&self, p: impl Into<FitParameter>) -> Option<f64> {
        use TimingParameter as T;
        let q = match p.into() {
            FitParameter::InstrumentDelay(i) => return Some(*self.instrument_delays_s.get(&i).unwrap_or(&0.0)),
            FitParameter::Model(q) => q,
        };
        let o = self.orbit.as_ref();
        Some(match q {
            T::PhaseOffsetCycles => self.phase_offset_cycles,
            T::FreqHz => self.freq_hz,
            T::FreqDerivHzPerS => self.freq_deriv_hz_per_s,
            T::FreqSecondDerivHzPerS2 => self.freq_second_deriv_hz_per_s2,
            T::DispersionMeasurePcPerCm3 => self.dispersion_measure_pc_per_cm3,
            T::PositionOffsetRaMas => self.position_offset_ra_mas,
            T::PositionOffsetDecMas => self.position_offset_dec_mas,
            T::ProperMotionRaMasPerYr => self.proper_motion_ra_mas_per_yr,
            T::ProperMotionDecMasPerYr => self.proper_motion_dec_mas_per_yr,
            T::OrbitalPeriodD => o?.orbital_period_d,
            T::ProjectedSemiMajorAxisLtS => o?.projected_semi_major_axis_lt_s,
            T::Eccentricity => o?.eccentricity,
            T::PeriastronLongitudeDeg => o?.periastron_longitude_deg,
            T::PeriastronTimeS => o?.periastron_time_s,
            T::EinsteinAmplitudeS => o?.einstein_amplitude_s,
            T::ShapiroRangeS => o?.shapiro_range_s,
            T::ShapiroShape => o?.shapiro_shape,
        })
    }

    /// Value of the parameter called `name`; an unknown name is refused with the known ones.
    pub fn get_by_name(&self, name: &str) -> Result<Option<f64>, UnknownParameter> {
        Ok(self.get(name.parse::<FitParameter>()?))
    }

    /// Sets a parameter. An orbit parameter of a model without an orbit is refused.
    pub fn set(&mut self, p: impl Into<FitParameter>, v: f64) -> Result<(), ModelError> {
        use TimingParameter as T;
        let q = match p.into() {
            FitParameter::InstrumentDelay(i) => {
                self.instrument_delays_s.insert(i, v);
                return Ok(());
            }
            FitParameter::Model(q) => q,
        };
        if q.is_orbit() && self.orbit.is_none() {
            return Err(ModelError::NeedsOrbit(q));
        }
        match q {
            T::PhaseOffsetCycles => self.phase_offset_cycles = v,
            T::FreqHz => self.freq_hz = v,
            T::FreqDerivHzPerS => self.freq_deriv_hz_per_s = v,
            T::FreqSecondDerivHzPerS2 => self.freq_second_deriv_hz_per_s2 = v,
            T::DispersionMeasurePcPerCm3 => self.dispersion_measure_pc_per_cm3 = v,
            T::PositionOffsetRaMas => self.position_offset_ra_mas = v,
            T::PositionOffsetDecMas => self.position_offset_dec_mas = v,
            T::ProperMotionRaMasPerYr => self.proper_motion_ra_mas_per_yr = v,
            T::ProperMotionDecMasPerYr => self.proper_motion_dec_mas_per_yr = v,
            _ => {
                if let Some(o) = self.orbit.as_mut() {
                    match q {
                        T::OrbitalPeriodD => o.orbital_period_d = v,
                        T::ProjectedSemiMajorAxisLtS => o.projected_semi_major_axis_lt_s = v,
                        T::Eccentricity => o.eccentricity = v,
                        T::PeriastronLongitudeDeg => o.periastron_longitude_deg = v,
                        T::PeriastronTimeS => o.periastron_time_s = v,
                        T::EinsteinAmplitudeS => o.einstein_amplitude_s = v,
                        T::ShapiroRangeS => o.shapiro_range_s = v,
                        _ => o.shapiro_shape = v,
                    }
                }
            }
        }
        Ok(())
    }

    /// Sets the parameter called `name`; an unknown name is refused with the known ones.
    pub fn set_by_name(&mut self, name: &str, v: f64) -> Result<(), ModelError> {
        self.set(name.parse::<FitParameter>()?, v)
    }

    /// Dispersion delay, s, at observing frequency `freq_mhz`.
    pub fn dispersion_delay_s(&self, freq_mhz: Option<f64>) -> f64 {
        match freq_mhz {
            Some(f) if f > 0.0 => DISPERSION_CONSTANT_S_MHZ2 * self.dispersion_measure_pc_per_cm3 / (f * f),
            _ => 0.0,
        }
    }

    /// True when any position or proper-motion parameter is non-zero or fitted.
    pub fn refines_position(&self) -> bool {
        POSITION_PARAMETERS.iter().any(|p| self.get(p) != Some(0.0) || self.fit.iter().any(|f| f == p))
    }

    /// Refuses a model that carries a non-zero position offset or proper motion where the
    /// times have no observer geometry (photon events, which are folded after barycentring
    /// towards the command-line position): the offset would be silently ignored.
    pub fn require_no_position_offset(&self) -> Result<(), PulsarError> {
        let set: Vec<String> = POSITION_PARAMETERS
            .iter()
            .filter_map(|p| self.get(p).filter(|v| *v != 0.0).map(|v| format!("{p} = {v}")))
            .collect();
        if set.is_empty() {
            return Ok(());
        }
        Err(PulsarError::Model(format!(
            "the model carries {}, but photon events are folded after barycentring towards the position given on the command line, where that refinement cannot be applied; give the corrected position (the `position` of the fit summary) as --ra/--dec and set these keys to 0",
            set.join(", ")
        )))
    }

    /// Extra barycentric delay Δ_pos = r_obs·Δn̂/c, s, of an arrival time from the position
    /// offset and proper motion (0 without observer geometry), with ∂Δ_pos/∂p for
    /// [`POSITION_PARAMETERS`] (s per mas and s per mas/yr). First order in Δn̂.
    pub fn position_delay_s(&self, toa: &ArrivalTime) -> (f64, [f64; 4]) {
        let Some(g) = &toa.observer else { return (0.0, [0.0; 4]) };
        let (east, north) = g.east_north_lt_s();
        let years = toa.t_s / JULIAN_YEAR_S;
        let theta_e = (self.position_offset_ra_mas + self.proper_motion_ra_mas_per_yr * years) * MAS_TO_RAD;
        let theta_n = (self.position_offset_dec_mas + self.proper_motion_dec_mas_per_yr * years) * MAS_TO_RAD;
        let pe = east * MAS_TO_RAD;
        let pn = north * MAS_TO_RAD;
        (east * theta_e + north * theta_n, [pe, pn, pe * years, pn * years])
    }

    /// Binary delay Δ_bin, s, at emission time `t_e` (s after epoch), its rate ∂Δ/∂t_e and
    /// its partials with respect to the orbit parameters (in [`ORBIT_PARAMETERS`] order and units).
    fn orbit_delay(o: &Orbit, t_e: f64) -> (f64, f64, [f64; 8]) {
        let pb_s = o.orbital_period_d * DAY_S;
        let e = o.eccentricity;
        let w = o.periastron_longitude_deg.to_radians();
        let (sw, cw) = w.sin_cos();
        let mean = TAU * ((t_e - o.periastron_time_s) / pb_s);
        let m_red = mean.rem_euclid(TAU);
        let mut big_e = if e < 0.8 { m_red } else { PI };
        for _ in 0..50 {
            let step = (big_e - e * big_e.sin() - m_red) / (1.0 - e * big_e.cos());
            big_e -= step;
            if step.abs() < 1e-15 {
                break;
            }
        }
        let (se, ce) = big_e.sin_cos();
        let rt = (1.0 - e * e).sqrt();
        let x = o.projected_semi_major_axis_lt_s;
        let alpha = x * sw;
        let beta = x * rt * cw;
        let geom = sw * (ce - e) + rt * cw * se;
        let d = 1.0 - e * ce - o.shapiro_shape * geom;
        let shapiro = if o.shapiro_range_s > 0.0 { -2.0 * o.shapiro_range_s * d.max(1e-12).ln() } else { 0.0 };
        let delay = alpha * (ce - e) + (beta + o.einstein_amplitude_s) * se + shapiro;
        // partial derivatives
        let s = o.shapiro_shape;
        let r = o.shapiro_range_s;
        let dd_de_anom = e * se - s * (-sw * se + rt * cw * ce);
        let dd_ecc = -ce - s * (-sw - e / rt * cw * se);
        let dd_w = -s * (cw * (ce - e) - rt * sw * se);
        let ds = |dd: f64| -2.0 * r / d * dd;
        let d_eanom = -alpha * se + (beta + o.einstein_amplitude_s) * ce + ds(dd_de_anom);
        let de_dm = 1.0 / (1.0 - e * ce);
        let de_decc = se / (1.0 - e * ce);
        let rate = d_eanom * de_dm * TAU / pb_s;
        let p_pb = d_eanom * de_dm * (-mean / o.orbital_period_d);
        let p_x = geom;
        let p_e = d_eanom * de_decc + (-alpha - x * cw * e / rt * se) + ds(dd_ecc);
        let p_w = (x * cw * (ce - e) - x * rt * sw * se + ds(dd_w)) * PI / 180.0;
        let p_t0 = -rate;
        let p_gamma = se;
        let p_r = -2.0 * d.max(1e-12).ln();
        let p_s = ds(-geom);
        (delay, rate, [p_pb, p_x, p_e, p_w, p_t0, p_gamma, p_r, p_s])
    }

    fn emission(&self, toa: &ArrivalTime) -> Emission {
        let t_fixed = toa.t_s + self.position_delay_s(toa).0
            - self.dispersion_delay_s(toa.freq_mhz)
            - self.instrument_delays_s.get(&toa.instrument).copied().unwrap_or(0.0);
        let Some(o) = &self.orbit else {
            return Emission { t_e: t_fixed, orbit_partials: [0.0; 8], orbit_rate: 0.0 };
        };
        // t_e = t_fixed − Δ(t_e): Newton iteration on g(t_e) = t_e + Δ(t_e) − t_fixed.
        let mut t_e = t_fixed;
        for _ in 0..6 {
            let (d, rate, _) = Self::orbit_delay(o, t_e);
            let step = (t_e + d - t_fixed) / (1.0 + rate);
            t_e -= step;
            if step.abs() < 1e-12 {
                break;
            }
        }
        let (_, rate, partials) = Self::orbit_delay(o, t_e);
        Emission { t_e, orbit_partials: partials, orbit_rate: rate }
    }

    /// Pulse phase (cycles, including the whole turns) of one arrival time.
    pub fn phase_cycles(&self, toa: &ArrivalTime) -> f64 {
        self.phase_offset_cycles + self.spin().phase_cycles(self.emission(toa).t_e)
    }

    /// Analytic ∂φ/∂p (cycles per parameter unit) for the named parameters.
    /// Delays enter through t_e: ∂φ/∂q = −ν(t_e)·∂Δ/∂q/(1 + ∂Δ_bin/∂t_e) (implicit derivative).
    pub fn phase_derivatives(&self, toa: &ArrivalTime, parameters: &[FitParameter]) -> Vec<f64> {
        use TimingParameter as T;
        let em = self.emission(toa);
        let t = em.t_e;
        let nu = self.spin().freq_at_hz(t);
        let implicit = 1.0 / (1.0 + em.orbit_rate);
        parameters
            .iter()
            .map(|p| match p {
                FitParameter::InstrumentDelay(inst) => {
                    if *inst == toa.instrument {
                        -nu * implicit
                    } else {
                        0.0
                    }
                }
                FitParameter::Model(q) => match q {
                    T::PhaseOffsetCycles => 1.0,
                    T::FreqHz => t,
                    T::FreqDerivHzPerS => 0.5 * t * t,
                    T::FreqSecondDerivHzPerS2 => t * t * t / 6.0,
                    T::DispersionMeasurePcPerCm3 => match toa.freq_mhz {
                        Some(f) if f > 0.0 => -nu * implicit * DISPERSION_CONSTANT_S_MHZ2 / (f * f),
                        _ => 0.0,
                    },
                    other => {
                        if let Some(k) = POSITION_PARAMETERS.iter().position(|p| p == other) {
                            nu * implicit * self.position_delay_s(toa).1[k]
                        } else if let Some(k) = ORBIT_PARAMETERS.iter().position(|p| p == other) {
                            -nu * implicit * em.orbit_partials[k]
                        } else {
                            0.0
                        }
                    }
                },
            })
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    pub(crate) fn binary_model() -> TimingModel {
        TimingModel {
            name: "invented".into(),
            epoch_mjd_day_tdb: 60000,
            epoch_seconds_of_day_tdb: 0.0,
            phase_offset_cycles: 0.1,
            freq_hz: 173.7,
            freq_deriv_hz_per_s: -1.3e-15,
            freq_second_deriv_hz_per_s2: 0.0,
            dispersion_measure_pc_per_cm3: 21.3,
            position_offset_ra_mas: 120.0,
            position_offset_dec_mas: -80.0,
            proper_motion_ra_mas_per_yr: 15.0,
            proper_motion_dec_mas_per_yr: -9.0,
            instrument_delays_s: [("b".to_string(), 3e-6)].into_iter().collect(),
            orbit: Some(Orbit {
                orbital_period_d: 1.7,
                projected_semi_major_axis_lt_s: 2.4,
                eccentricity: 0.2,
                periastron_longitude_deg: 70.0,
                periastron_time_s: 1.0e4,
                einstein_amplitude_s: 2e-4,
                shapiro_range_s: 3e-6,
                shapiro_shape: 0.9,
            }),
            fit: vec![],
        }
    }

    #[test]
    fn analytic_derivatives_match_numeric() {
        let m = binary_model();
        let mut names: Vec<FitParameter> =
            SPIN_PARAMETERS.iter().chain(ORBIT_PARAMETERS.iter()).map(Into::into).collect();
        names.push(TimingParameter::DispersionMeasurePcPerCm3.into());
        names.push("instrument_delay_s:b".parse().unwrap());
        for (k, t) in [-3.1e6, 1.0e4, 4.4e5, 2.9e7].into_iter().enumerate() {
            let toa = ArrivalTime {
                t_s: t,
                error_s: 1e-6,
                freq_mhz: Some(1400.0),
                instrument: if k % 2 == 0 { "b".into() } else { "a".into() },
                observer: None,
            };
            let a = m.phase_derivatives(&toa, &names);
            for (j, n) in names.iter().enumerate() {
                let v = m.get(n).unwrap();
                let h = 1e-6 * v.abs().max(1e-3) * if n.to_string().starts_with("freq") { 1e-4 } else { 1.0 };
                let (mut up, mut dn) = (m.clone(), m.clone());
                up.set(n, v + h).unwrap();
                dn.set(n, v - h).unwrap();
                let num = (up.phase_cycles(&toa) - dn.phase_cycles(&toa)) / (2.0 * h);
                let tol = 1e-5 * a[j].abs().max(num.abs()) + 1e-6 * (m.phase_cycles(&toa).abs() * 1e-15 / h).max(1e-9);
                assert!(
                    (a[j] - num).abs() <= tol.max(2e-16 * m.phase_cycles(&toa).abs() / h * 4.0),
                    "{n} at t={t}: analytic {} numeric {num}",
                    a[j]
                );
            }
        }
    }

    /// An invented observer 1 au from the barycentre in the ecliptic plane, source at
    /// RA 120°, Dec 35° (synthetic geometry).
    fn geometry(t_s: f64) -> ObserverGeometry {
        let a = TAU * t_s / JULIAN_YEAR_S;
        let eps = 23.44_f64.to_radians();
        let au_lt_s = 499.004_784;
        let (ra, dec) = (120f64.to_radians(), 35f64.to_radians());
        ObserverGeometry {
            position_lt_s: [au_lt_s * a.cos(), au_lt_s * a.sin() * eps.cos(), au_lt_s * a.sin() * eps.sin()],
            source_unit: [dec.cos() * ra.cos(), dec.cos() * ra.sin(), dec.sin()],
        }
    }

    #[test]
    fn position_derivatives_match_numeric() {
        // The phase is linear in the position parameters except through the orbit's implicit
        // emission time, so a large step (1000 mas, 1000 mas/yr: ~ms delays) keeps the
        // central difference free of rounding while its truncation error stays ≪ 1e-6.
        let m = binary_model();
        let names: Vec<FitParameter> = POSITION_PARAMETERS.iter().map(Into::into).collect();
        for t in [-3.1e6, 1.0e4, 4.4e5, 2.9e7] {
            let toa = ArrivalTime {
                t_s: t,
                error_s: 1e-6,
                freq_mhz: Some(1400.0),
                instrument: "a".into(),
                observer: Some(geometry(t)),
            };
            let a = m.phase_derivatives(&toa, &names);
            for (j, n) in names.iter().enumerate() {
                let v = m.get(n).unwrap();
                let h = 1000.0;
                let (mut up, mut dn) = (m.clone(), m.clone());
                up.set(n, v + h).unwrap();
                dn.set(n, v - h).unwrap();
                let num = (up.phase_cycles(&toa) - dn.phase_cycles(&toa)) / (2.0 * h);
                let rounding = 4.0 * f64::EPSILON * m.phase_cycles(&toa).abs() / h;
                assert!(
                    a[j] != 0.0 && (a[j] - num).abs() <= 1e-6 * a[j].abs() + rounding,
                    "{n} at t={t}: analytic {} numeric {num}",
                    a[j]
                );
            }
            // without the observer's position the parameters have no effect
            let bare = ArrivalTime { observer: None, ..toa.clone() };
            assert!(m.phase_derivatives(&bare, &names).iter().all(|d| *d == 0.0));
        }
    }

    #[test]
    fn east_and_north_are_orthonormal_to_the_source() {
        // Δn̂ for a small step east/north must match the difference of exact unit vectors
        // at (α + ε/cos δ, δ) and (α, δ + ε): geometry of the sphere (common practice).
        let g = geometry(1.0e7);
        let (ra, dec) = (120f64.to_radians(), 35f64.to_radians());
        let unit = |a: f64, d: f64| [d.cos() * a.cos(), d.cos() * a.sin(), d.sin()];
        let eps = 1e-7;
        let r = g.position_lt_s;
        let dot = |u: [f64; 3], w: [f64; 3]| u[0] * w[0] + u[1] * w[1] + u[2] * w[2];
        let base = dot(r, unit(ra, dec));
        let (e, n) = g.east_north_lt_s();
        let de = (dot(r, unit(ra + eps / dec.cos(), dec)) - base) / eps;
        let dn = (dot(r, unit(ra, dec + eps)) - base) / eps;
        assert!((e - de).abs() < 1e-4 && (n - dn).abs() < 1e-4, "{e} {de} {n} {dn}");
    }

    #[test]
    fn events_refuse_a_model_with_a_position_offset() {
        let mut m = binary_model();
        let e = crate::pulsar::profile::fold_events(&m, &[0.0, 1.0], 1e9, "a").unwrap_err().to_string();
        assert!(e.contains("position_offset_ra_mas = 120") && e.contains("--ra/--dec"), "{e}");
        for p in POSITION_PARAMETERS {
            m.set(p, 0.0).unwrap();
        }
        assert!(crate::pulsar::profile::fold_events(&m, &[0.0, 1.0], 1e9, "a").is_ok());
    }

    #[test]
    fn unknown_parameter_names_are_refused_with_the_known_ones() {
        let e = TimingModel::from_toml("epoch_mjd_day_tdb = 60000\nfreq_hz = 1.0\nfit = [\"freq_dot\"]\n", "m.toml")
            .unwrap_err()
            .to_string();
        assert!(e.contains("m.toml") && e.contains("freq_dot") && e.contains("freq_deriv_hz_per_s"), "{e}");
        assert!(e.contains("instrument_delay_s:NAME"), "{e}");
        let mut m = binary_model();
        assert!(m.set_by_name("spin_rate", 1.0).unwrap_err().to_string().contains("known parameters"));
        assert!(m.get_by_name("spin_rate").is_err());
        m.set_by_name("instrument_delay_s:c", 4e-6).unwrap();
        assert_eq!(m.get_by_name("instrument_delay_s:c").unwrap(), Some(4e-6));
        let e =
            TimingModel::from_toml("epoch_mjd_day_tdb = 60000\nfreq_hz = 1.0\nfit = [\"eccentricity\"]\n", "m.toml")
                .unwrap_err()
                .to_string();
        assert!(e.contains("no [orbit] table"), "{e}");
        let mut isolated = m.clone();
        isolated.orbit = None;
        assert_eq!(
            isolated.set(TimingParameter::Eccentricity, 0.1),
            Err(ModelError::NeedsOrbit(TimingParameter::Eccentricity))
        );
        // every fixed name parses back to its parameter
        for p in TimingParameter::ALL {
            assert_eq!(p.name().parse::<FitParameter>().unwrap(), FitParameter::Model(*p));
        }
    }

    #[test]
    fn toml_round_trip_and_unknown_keys() {
        let m = binary_model();
        let text = m.to_toml().unwrap();
        assert_eq!(TimingModel::from_toml(&text, "x.toml").unwrap(), m);
        let e = TimingModel::from_toml("epoch_mjd_day_tdb = 60000\nfreq_hz = 1.0\nspin_rate = 3\n", "m.toml")
            .unwrap_err()
            .to_string();
        assert!(e.contains("m.toml") && e.contains("spin_rate"), "{e}");
    }
}
