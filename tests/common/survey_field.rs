//! Invented stars of every class of the survey cascade, shared by the cascade's recovery
//! tests (tests/survey_cascade_field.rs, tests/survey_cascade_three_years.rs): synthetic
//! recovery data with fixed seeds, not a reference. Included with `#[path]`.

use skyclock::fit::SeededRng;
use skyclock::survey::cascade::VariabilityClass;

fn frac(x: f64) -> f64 {
    x - x.floor()
}

/// One invented star: its true class and period (0 for a constant), magnitudes and σ.
pub struct Star {
    pub class: VariabilityClass,
    pub period_d: f64,
    pub time_d: Vec<f64>,
    pub mag: Vec<f64>,
    pub err: Vec<f64>,
}

/// A star of `class` observed at `time_d` (days), mean magnitude `base_mag`: period,
/// noise (0.005–0.02 mag, 0.003–0.006 for transits), amplitude and shape drawn from `rng`
/// — sinusoids (0.1–3 d), sawtooth pulsators with a sharp rise (0.3–1 d), detached
/// eclipsing binaries with unequal minima (0.5–5 d), box transits of 1–3 % (1–5 d,
/// duty cycle 2–5 %).
pub fn invented_star(class: VariabilityClass, time_d: Vec<f64>, base_mag: f64, rng: &mut SeededRng) -> Star {
    let log_uniform = |rng: &mut SeededRng, a: f64, b: f64| (a.ln() + (b / a).ln() * rng.uniform()).exp();
    let (period_d, noise) = match class {
        VariabilityClass::Sinusoidal => (log_uniform(rng, 0.1, 3.0), 0.005 + 0.015 * rng.uniform()),
        VariabilityClass::NonSinusoidalPulsator => (0.3 + 0.7 * rng.uniform(), 0.005 + 0.015 * rng.uniform()),
        VariabilityClass::EclipsingBinary => (log_uniform(rng, 0.5, 5.0), 0.005 + 0.015 * rng.uniform()),
        VariabilityClass::TransitLike => (log_uniform(rng, 1.0, 5.0), 0.003 + 0.003 * rng.uniform()),
        VariabilityClass::Constant => (0.0, 0.005 + 0.015 * rng.uniform()),
    };
    let amp = match class {
        VariabilityClass::Sinusoidal => 0.03 + 0.17 * rng.uniform(),
        VariabilityClass::NonSinusoidalPulsator => 0.1 + 0.4 * rng.uniform(),
        VariabilityClass::EclipsingBinary => 0.1 + 0.5 * rng.uniform(),
        VariabilityClass::TransitLike => 0.01 + 0.02 * rng.uniform(),
        VariabilityClass::Constant => 0.0,
    };
    let secondary = 0.2 + 0.6 * rng.uniform();
    let half_width = 0.03 + 0.04 * rng.uniform();
    let duty = 0.02 + 0.03 * rng.uniform();
    let ph0 = rng.uniform();
    let mag = time_d
        .iter()
        .map(|&x| {
            let ph = if period_d > 0.0 { frac(x / period_d + ph0) } else { 0.0 };
            let signal = match class {
                VariabilityClass::Sinusoidal => amp * (std::f64::consts::TAU * ph).sin(),
                VariabilityClass::NonSinusoidalPulsator => {
                    amp * if ph < 0.15 { 0.5 - ph / 0.15 } else { -0.5 + (ph - 0.15) / 0.85 }
                }
                VariabilityClass::EclipsingBinary => {
                    let d = |u: f64| if u.abs() < half_width { 1.0 - (u / half_width).powi(2) } else { 0.0 };
                    amp * (d(ph - ph.round()) + secondary * d(ph - 0.5))
                }
                VariabilityClass::TransitLike if ph.min(1.0 - ph) < 0.5 * duty => amp,
                VariabilityClass::TransitLike => 0.0,
                VariabilityClass::Constant => 0.0,
            };
            base_mag + signal + noise * rng.normal()
        })
        .collect();
    let err = vec![noise; time_d.len()];
    Star { class, period_d, time_d, mag, err }
}
