//! Integration of the model over each exposure: a long cadence smears ingress and egress,
//! and fitting the instantaneous model to binned data biases the shape (Kipping 2010,
//! MNRAS 408, 1758). The flux of an exposure is the mean of the model at N evenly spaced
//! instants across it.

use serde::{Deserialize, Serialize};

/// How each data point's exposure is integrated.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Exposure {
    /// Length of each exposure, days (the point's time is its middle).
    pub duration_d: f64,
    /// Number of instants averaged per exposure (1: the instantaneous model).
    pub samples: usize,
}

impl Exposure {
    /// Instantaneous model (no integration).
    pub const INSTANT: Exposure = Exposure { duration_d: 0.0, samples: 1 };

    /// Supersampling that keeps the smearing error below roughly `tolerance` in relative flux
    /// for a transit of depth `depth` and ingress duration `ingress_d`: the error of an
    /// N-point midpoint average of a linear ramp with curvature at its ends scales as
    /// depth·(Δt/(N·τ))²/8 (common practice; Kipping 2010, §3), so N = ⌈Δt/τ · √(depth/(8·tol))⌉.
    pub fn for_cadence(duration_d: f64, depth: f64, ingress_d: f64, tolerance: f64) -> Exposure {
        if !(duration_d > 0.0 && ingress_d > 0.0 && tolerance > 0.0 && depth > 0.0) {
            return Exposure::INSTANT;
        }
        let n = (duration_d / ingress_d * (depth / (8.0 * tolerance)).sqrt()).ceil();
        Exposure { duration_d, samples: (n as usize).clamp(1, 101) }
    }

    /// Offsets from the point's mid-exposure time, days, of the instants averaged: the
    /// midpoints of N equal parts of the exposure (Kipping 2010, eq. 30).
    pub fn offsets_d(&self) -> Vec<f64> {
        let n = self.samples.max(1);
        if n == 1 || !(self.duration_d > 0.0) {
            return vec![0.0];
        }
        (0..n).map(|j| ((j as f64 + 0.5) / n as f64 - 0.5) * self.duration_d).collect()
    }
}

/// Mean of `model` over the exposure centred on `t_d`.
pub fn integrate_exposure(t_d: f64, offsets_d: &[f64], model: impl Fn(f64) -> f64) -> f64 {
    offsets_d.iter().map(|o| model(t_d + o)).sum::<f64>() / offsets_d.len() as f64
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn offsets_are_symmetric_midpoints() {
        let e = Exposure { duration_d: 0.02, samples: 4 };
        let o = e.offsets_d();
        assert_eq!(o.len(), 4);
        assert!((o[0] + 0.0075).abs() < 1e-15 && (o[3] - 0.0075).abs() < 1e-15);
        // A linear model is integrated exactly by the midpoint rule.
        let m = integrate_exposure(1.0, &o, |t| 3.0 * t + 1.0);
        assert!((m - 4.0).abs() < 1e-14);
    }
}
