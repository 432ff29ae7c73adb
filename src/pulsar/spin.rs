//! Rotational phase of a spinning neutron star from a Taylor series in time.
//!
//! φ(t) = φ₀ + ν t + ν̇ t²/2 + ν̈ t³/6, t in seconds (TDB at the barycentre, after the
//! emission delays are removed) from the epoch; φ in cycles. Source: common practice
//! (e.g. Lorimer & Kramer, Handbook of Pulsar Astronomy, 2005, eq. 8.1 — from memory).

use super::PulsarError;

/// Spin parameters at an epoch.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Spin {
    /// Spin frequency ν, Hz.
    pub freq_hz: f64,
    /// First derivative ν̇, Hz/s.
    pub freq_deriv_hz_per_s: f64,
    /// Second derivative ν̈, Hz/s².
    pub freq_second_deriv_hz_per_s2: f64,
}

impl Spin {
    /// Checks that ν is positive and all values are finite.
    pub fn validate(&self) -> Result<(), PulsarError> {
        if !(self.freq_hz > 0.0 && self.freq_hz.is_finite()) {
            return Err(PulsarError::Model(format!("spin frequency {} Hz: must be positive and finite", self.freq_hz)));
        }
        if !(self.freq_deriv_hz_per_s.is_finite() && self.freq_second_deriv_hz_per_s2.is_finite()) {
            return Err(PulsarError::Model("spin frequency derivatives must be finite".into()));
        }
        Ok(())
    }

    /// Phase in cycles (no constant term) at `t_s` seconds after the epoch.
    pub fn phase_cycles(&self, t_s: f64) -> f64 {
        t_s * (self.freq_hz + t_s * (0.5 * self.freq_deriv_hz_per_s + t_s * self.freq_second_deriv_hz_per_s2 / 6.0))
    }

    /// Instantaneous frequency dφ/dt at `t_s`, Hz.
    pub fn freq_at_hz(&self, t_s: f64) -> f64 {
        self.freq_hz + t_s * (self.freq_deriv_hz_per_s + 0.5 * t_s * self.freq_second_deriv_hz_per_s2)
    }

    /// Fractional phase in [0, 1) of each event time; the times must be sorted, finite and
    /// inside ±`valid_for_s` of the epoch (a Taylor spin model drifts away from it).
    pub fn fold(&self, times_s: &[f64], valid_for_s: f64) -> Result<Vec<f64>, PulsarError> {
        self.validate()?;
        for (i, &t) in times_s.iter().enumerate() {
            if !t.is_finite() {
                return Err(PulsarError::Input(format!("event {} has time {t}", i + 1)));
            }
            if t.abs() > valid_for_s {
                return Err(PulsarError::Input(format!(
                    "event {} lies {:.3e} s from the model epoch, outside the model's validity of ±{valid_for_s:.3e} s; use a model with an epoch nearer the data or widen the validity",
                    i + 1,
                    t
                )));
            }
            if i > 0 && t < times_s[i - 1] {
                return Err(PulsarError::Input(format!(
                    "event {} (t = {t} s) is earlier than event {}: sort the events by time",
                    i + 1,
                    i
                )));
            }
        }
        Ok(times_s.iter().map(|&t| self.phase_cycles(t).rem_euclid(1.0)).collect())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn phase_derivative_is_frequency() {
        let s = Spin { freq_hz: 17.43, freq_deriv_hz_per_s: -2.6e-13, freq_second_deriv_hz_per_s2: 1e-20 };
        let t = 1.3e7;
        let h = 1e-3;
        let num = (s.phase_cycles(t + h) - s.phase_cycles(t - h)) / (2.0 * h);
        assert!((num - s.freq_at_hz(t)).abs() < 1e-5);
        assert!(s.fold(&[2.0, 1.0], 1e9).unwrap_err().to_string().contains("sort"));
        assert!(s.fold(&[2.0e10], 1e9).unwrap_err().to_string().contains("validity"));
    }
}
