//! The light-time method: timings of a strictly periodic source that were NOT carried to
//! the barycentre keep the annual light-travel-time term of the observer's orbit,
//!
//!   t_obs(E) = T₀ + P·E [+ Q·E²] − A·(r · n̂),
//!
//! with r the observer's barycentric position in au, n̂ the unit vector towards the source
//! and A the light time per astronomical unit (s/au). Fitting A by weighted least squares
//! alongside the ephemeris measures the light time per au — and with the au in metres, the
//! speed of light — from nothing but event timings and the geometry of the observer's orbit.
//!
//! Expected value: A = au / c = 149 597 870 700 m / 299 792 458 m s⁻¹ = 499.004 783 8 s
//! (IAU 2012 Resolution B2 defines the au; c is exact in the SI; "499.004784 s per au" is
//! common practice). Nothing here prints.

use super::cycles::{CycleOptions, ReferenceEphemeris, assign_cycles};
use super::{EventKind, OcError, Timing};
use crate::constants::SECONDS_PER_DAY;
use crate::fit::weighted_linear_lsq;
use crate::time::Instant;

pub use crate::constants::{ASTRONOMICAL_UNIT_M, LIGHT_TIME_PER_AU_S, SPEED_OF_LIGHT_M_PER_S};

/// One timing whose arrival time still holds the observer's light-travel-time term.
#[derive(Debug, Clone, PartialEq)]
pub struct UncorrectedTiming {
    /// Time of the event as seen by the observer, on the TDB scale (clock and relativistic
    /// terms applied, the Rømer delay NOT applied).
    pub observer_tdb: Instant,
    /// r · n̂: the observer's barycentric position projected on the direction to the source, au.
    pub projection_au: f64,
    /// 1σ uncertainty of the time, days.
    pub error_d: f64,
    /// Event kind (secondaries get half cycles).
    pub kind: EventKind,
    /// 1-based row of the input table.
    pub row: usize,
}

/// Options of the measurement.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct LightTimeOptions {
    /// Fit a quadratic ephemeris term Q·E² as well (a period change).
    pub quadratic: bool,
    /// Keep going when the cycle count is ambiguous.
    pub allow_ambiguous_cycles: bool,
}

/// The measured light time per au and what came with it.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct LightTimeMeasurement {
    /// Light time per au A, s, and its 1σ (from the covariance, errors as given).
    pub light_time_per_au_s: f64,
    /// 1σ of A, s.
    pub light_time_per_au_sigma_s: f64,
    /// The same 1σ scaled by √(χ²/dof) when the reduced χ² exceeds 1 (errors underestimated).
    pub light_time_per_au_sigma_scaled_s: f64,
    /// Speed of light au/A, m/s.
    pub speed_of_light_m_per_s: f64,
    /// 1σ of the speed of light (from the unscaled σ of A), m/s.
    pub speed_of_light_sigma_m_per_s: f64,
    /// Fitted period, days, and its 1σ.
    pub period_d: f64,
    /// 1σ of the period, days.
    pub period_sigma_d: f64,
    /// Fitted shift of the epoch from the reference, days, and its 1σ.
    pub epoch_shift_d: f64,
    /// 1σ of the epoch shift, days.
    pub epoch_shift_sigma_d: f64,
    /// Quadratic term Q (d/cycle²) and its 1σ, when fitted.
    pub quadratic_d: Option<(f64, f64)>,
    /// χ² of the fit.
    pub chi2: f64,
    /// Degrees of freedom.
    pub dof: usize,
    /// χ²/dof.
    pub reduced_chi2: f64,
    /// Number of timings.
    pub n: usize,
    /// Smallest and largest projection r·n̂ covered, au (the lever arm of the measurement).
    pub projection_range_au: (f64, f64),
    /// Per timing in time order: (row, cycle, time since epoch d, residual d).
    pub residuals: Vec<(usize, f64, f64, f64)>,
    /// Warnings from the cycle count.
    pub warnings: Vec<String>,
    /// The defined light time per au (IAU 2012 au and SI c), s, for comparison.
    pub defined_light_time_per_au_s: f64,
    /// (A − defined value) / scaled 1σ of A.
    pub deviation_from_defined_sigma: f64,
}

/// Measures the light time per au from timings not corrected to the barycentre.
///
/// Given: timings at the observer (TDB scale) with their projections r·n̂ (au) and errors
/// (days); a reference ephemeris (epoch and period of the source as seen by the observer);
/// options. Returned: A (s/au) with 1σ, c = au/A (m/s), the fitted ephemeris, χ².
/// Errors: too few timings, bad errors, duplicate timings, an ambiguous cycle count, a
/// projection range under 0.2 au (the timings do not cover enough of the observer's orbit
/// to separate the light-time term from the ephemeris), a singular design.
/// Accuracy: linear weighted least squares, exact to rounding; the result is as good as the
/// timings and their stated errors. Source: the light-time argument of Rømer (1676), as
/// modelled by the Rømer delay of the barycentric correction (e.g. Eastman, Siverd &
/// Gaudi 2010, PASP 122, 935, eq. 2).
pub fn measure_light_time(
    timings: &[UncorrectedTiming],
    reference: &ReferenceEphemeris,
    options: &LightTimeOptions,
) -> Result<LightTimeMeasurement, OcError> {
    let p = if options.quadratic { 4 } else { 3 };
    if timings.len() < p + 2 {
        return Err(OcError::TooFewTimings { model: "light-time measurement", needed: p + 2, got: timings.len() });
    }
    for t in timings {
        if !t.projection_au.is_finite() {
            return Err(OcError::Invalid(format!(
                "row {}: the observer's projected position {} au is not finite",
                t.row, t.projection_au
            )));
        }
    }
    let as_timings: Vec<Timing> = timings
        .iter()
        .map(|t| Timing { bjd_tdb: t.observer_tdb, error_d: t.error_d, kind: t.kind, source: None, row: t.row })
        .collect();
    let series =
        assign_cycles(&as_timings, reference, &CycleOptions { allow_ambiguous: options.allow_ambiguous_cycles })?;
    let projection_of_row: std::collections::HashMap<usize, f64> =
        timings.iter().map(|t| (t.row, t.projection_au)).collect();
    let projection: Vec<f64> = series.row.iter().map(|r| projection_of_row[r]).collect();
    let (lo, hi) = projection.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| (a.min(v), b.max(v)));
    if hi - lo < 0.2 {
        return Err(OcError::Invalid(format!(
            "the timings cover projections r·n̂ from {lo:.3} to {hi:.3} au only; the light-time term needs timings spread over a good part of a year (a range of at least 0.2 au)"
        )));
    }
    // Columns: 1, E, [E²], −r·n̂/86400 (the coefficient is A in s/au).
    let mut design = Vec::with_capacity(series.len() * p);
    for (i, &e) in series.cycle.iter().enumerate() {
        design.push(1.0);
        design.push(e);
        if options.quadratic {
            design.push(e * e);
        }
        design.push(-projection[i] / SECONDS_PER_DAY);
    }
    let weights = series.weights();
    let fit = weighted_linear_lsq(&design, p, &series.oc_d, &weights)?;
    let sigma = |j: usize| fit.covariance[j * p + j].max(0.0).sqrt();
    let a = fit.params[p - 1];
    let a_sigma = sigma(p - 1);
    let dof = series.len() - p;
    let reduced = fit.chi2 / dof as f64;
    let residuals = (0..series.len())
        .map(|i| {
            let model: f64 = (0..p).map(|j| design[i * p + j] * fit.params[j]).sum();
            (series.row[i], series.cycle[i], series.time_d[i], series.oc_d[i] - model)
        })
        .collect();
    if !(a.is_finite() && a > 0.0) {
        return Err(OcError::NotConverged {
            model: "light-time measurement",
            detail: format!("the fitted light time per au is {a} s; the timings do not constrain it"),
        });
    }
    Ok(LightTimeMeasurement {
        light_time_per_au_s: a,
        light_time_per_au_sigma_s: a_sigma,
        light_time_per_au_sigma_scaled_s: a_sigma * reduced.max(1.0).sqrt(),
        speed_of_light_m_per_s: ASTRONOMICAL_UNIT_M / a,
        speed_of_light_sigma_m_per_s: ASTRONOMICAL_UNIT_M * a_sigma / (a * a),
        period_d: reference.period_d + fit.params[1],
        period_sigma_d: sigma(1),
        epoch_shift_d: fit.params[0],
        epoch_shift_sigma_d: sigma(0),
        quadratic_d: options.quadratic.then(|| (fit.params[2], sigma(2))),
        chi2: fit.chi2,
        dof,
        reduced_chi2: reduced,
        n: series.len(),
        projection_range_au: (lo, hi),
        residuals,
        warnings: series.warnings,
        defined_light_time_per_au_s: LIGHT_TIME_PER_AU_S,
        deviation_from_defined_sigma: (a - LIGHT_TIME_PER_AU_S) / (a_sigma * reduced.max(1.0).sqrt()),
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::time::TimeScale;

    /// Noise-free synthetic timings with a known A: the fit returns it to rounding.
    #[test]
    fn recovers_the_light_time_of_exact_synthetic_timings() {
        let epoch = Instant::from_jd_two_part(TimeScale::Tdb, 2_460_000.5, 0.25);
        let period_d = 1.234_567;
        let truth_a = 480.0;
        let timings: Vec<UncorrectedTiming> = (0..200)
            .map(|k| {
                let e = (k * 3) as f64;
                let t_d = e * period_d;
                let proj = (std::f64::consts::TAU * t_d / 365.25).cos() * 0.9;
                UncorrectedTiming {
                    observer_tdb: epoch.add_seconds(t_d * SECONDS_PER_DAY - truth_a * proj),
                    projection_au: proj,
                    error_d: 1e-4,
                    kind: EventKind::Primary,
                    row: k + 1,
                }
            })
            .collect();
        let reference = ReferenceEphemeris { epoch, period_d: period_d + 1e-6, period_sigma_d: 0.0 };
        let m = measure_light_time(&timings, &reference, &LightTimeOptions::default()).unwrap();
        assert!((m.light_time_per_au_s - truth_a).abs() < 1e-4, "{}", m.light_time_per_au_s);
        assert!((m.period_d - period_d).abs() < 1e-10);
    }

    #[test]
    fn refuses_timings_that_cover_too_little_of_the_orbit() {
        let epoch = Instant::from_jd_two_part(TimeScale::Tdb, 2_460_000.5, 0.0);
        let timings: Vec<UncorrectedTiming> = (0..20)
            .map(|k| UncorrectedTiming {
                observer_tdb: epoch.add_seconds(k as f64 * SECONDS_PER_DAY),
                projection_au: 0.5 + 0.001 * k as f64,
                error_d: 1e-4,
                kind: EventKind::Primary,
                row: k + 1,
            })
            .collect();
        let reference = ReferenceEphemeris { epoch, period_d: 1.0, period_sigma_d: 0.0 };
        let err = measure_light_time(&timings, &reference, &LightTimeOptions::default()).unwrap_err();
        assert!(err.to_string().contains("0.2 au"), "{err}");
    }
}
