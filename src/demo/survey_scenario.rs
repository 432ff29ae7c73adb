//! The invented survey field of the demo: 160 light curves (BJD_TDB, magnitudes) of
//! sinusoidal and sawtooth pulsators, detached eclipsing binaries with unequal minima,
//! transiting planets and constant stars over one 90-night season (8 points a night, a
//! quarter of the nights lost), written with the truth beside them. The class labels of the
//! truth are the ones the survey cascade gives (`skyclock::survey::cascade`).

use std::fmt::Write as _;
use std::path::Path;

use anyhow::Result;

use super::random::SeededRandom;

/// Light curves, one row per point, sources contiguous.
pub const SURVEY_FILE: &str = "survey_field.csv";
/// Truth: source, class, period.
pub const SURVEY_TRUTH_FILE: &str = "survey_field_truth.csv";
/// Sources in the field.
pub const SURVEY_SOURCES: usize = 160;

/// The classes of the field and how many of each.
pub const SURVEY_CLASSES: [(&str, usize); 5] = [
    ("sinusoidal", 35),
    ("non-sinusoidal-pulsator", 30),
    ("eclipsing-binary", 30),
    ("transit-like", 20),
    ("constant", 45),
];

/// Writes the survey and its truth into `folder`.
pub fn write_survey(folder: &Path, seed: u64) -> Result<()> {
    let mut rng = SeededRandom::new(seed ^ 0x5eed_0001);
    let mut data = String::from("source,bjd_tdb,mag,mag_err\n");
    let mut truth = String::from("source,class,period_d,amplitude_mag\n");
    let mut id = 0;
    for (class, count) in SURVEY_CLASSES {
        for _ in 0..count {
            id += 1;
            let name = format!("field-{id:04}");
            let log_uniform = |rng: &mut SeededRandom, a: f64, b: f64| (a.ln() + (b / a).ln() * rng.uniform()).exp();
            let period_d = match class {
                "sinusoidal" => log_uniform(&mut rng, 0.08, 3.0),
                "non-sinusoidal-pulsator" => 0.3 + 0.6 * rng.uniform(),
                "eclipsing-binary" => log_uniform(&mut rng, 0.6, 4.0),
                "transit-like" => log_uniform(&mut rng, 1.0, 5.0),
                _ => 0.0,
            };
            let amplitude = match class {
                "transit-like" => 0.012 + 0.018 * rng.uniform(),
                "constant" => 0.0,
                _ => 0.05 + 0.25 * rng.uniform(),
            };
            let noise =
                if class == "transit-like" { 0.003 + 0.003 * rng.uniform() } else { 0.004 + 0.012 * rng.uniform() };
            let secondary = 0.2 + 0.6 * rng.uniform();
            let half_width = 0.03 + 0.04 * rng.uniform();
            let duty = 0.02 + 0.03 * rng.uniform();
            let phase0 = rng.uniform();
            writeln!(truth, "{name},{class},{period_d:.7},{amplitude:.4}")?;
            let base = 12.0 + 3.0 * rng.uniform();
            for night in 0..90 {
                if rng.uniform() < 0.25 {
                    continue;
                }
                for k in 0..8 {
                    let t = 2_461_000.6 + night as f64 + 0.0375 * k as f64 + 0.01 * rng.uniform();
                    let phase =
                        if period_d > 0.0 { ((t - 2_461_000.0) / period_d + phase0).rem_euclid(1.0) } else { 0.0 };
                    let signal = match class {
                        "sinusoidal" => amplitude * (std::f64::consts::TAU * phase).sin(),
                        "non-sinusoidal-pulsator" => {
                            amplitude * if phase < 0.15 { 0.5 - phase / 0.15 } else { -0.5 + (phase - 0.15) / 0.85 }
                        }
                        "eclipsing-binary" => {
                            let d = |x: f64| if x.abs() < half_width { 1.0 - (x / half_width).powi(2) } else { 0.0 };
                            amplitude * (d(phase - phase.round()) + secondary * d(phase - 0.5))
                        }
                        "transit-like" if phase.min(1.0 - phase) < 0.5 * duty => amplitude,
                        _ => 0.0,
                    };
                    writeln!(data, "{name},{t:.6},{:.4},{noise:.4}", base + signal + noise * rng.normal())?;
                }
            }
        }
    }
    std::fs::write(folder.join(SURVEY_FILE), data)?;
    std::fs::write(folder.join(SURVEY_TRUTH_FILE), truth)?;
    Ok(())
}
