//! The invented survey field of the demo: 220 light curves (BJD_TDB, magnitudes) of
//! pulsators, eclipsing binaries, transiting planets and constant stars over one 80-night
//! season with nightly gaps, written with the truth beside them.

use std::fmt::Write as _;
use std::path::Path;

use anyhow::Result;

use super::random::SeededRandom;

/// Light curves, one row per point, sources contiguous.
pub const SURVEY_FILE: &str = "survey_field.csv";
/// Truth: source, class, period.
pub const SURVEY_TRUTH_FILE: &str = "survey_field_truth.csv";

/// Writes the survey and its truth into `folder`.
pub fn write_survey(folder: &Path, seed: u64) -> Result<()> {
    let mut rng = SeededRandom::new(seed ^ 0x5eed_0001);
    let mut data = String::from("source,bjd_tdb,mag,mag_err\n");
    let mut truth = String::from("source,class,period_d,amplitude_mag\n");
    let classes = [
        ("sinusoidal-pulsator", 60),
        ("sawtooth-pulsator", 50),
        ("eclipsing-binary", 40),
        ("transit", 20),
        ("constant", 50),
    ];
    let mut id = 0;
    for (class, count) in classes {
        for _ in 0..count {
            id += 1;
            let name = format!("field-{id:04}");
            let period_d = match class {
                "sinusoidal-pulsator" => 0.05 + 0.35 * rng.uniform(),
                "sawtooth-pulsator" => 0.3 + 0.5 * rng.uniform(),
                "eclipsing-binary" => 0.6 + 3.4 * rng.uniform(),
                "transit" => 1.5 + 4.0 * rng.uniform(),
                _ => 0.0,
            };
            let amplitude = match class {
                "transit" => 0.012,
                "constant" => 0.0,
                _ => 0.05 + 0.25 * rng.uniform(),
            };
            let noise = 0.004 + 0.008 * rng.uniform();
            let phase0 = rng.uniform();
            writeln!(truth, "{name},{class},{period_d:.7},{amplitude:.4}")?;
            let base = 12.0 + 3.0 * rng.uniform();
            for night in 0..80 {
                if rng.uniform() < 0.3 {
                    continue;
                }
                let mut offsets = [rng.uniform(), rng.uniform(), rng.uniform()];
                offsets.sort_by(|a, b| a.total_cmp(b));
                for u in offsets {
                    let t = 2_461_000.6 + night as f64 + 0.25 * u;
                    let phase =
                        if period_d > 0.0 { ((t - 2_461_000.0) / period_d + phase0).rem_euclid(1.0) } else { 0.0 };
                    let signal = match class {
                        "sinusoidal-pulsator" => amplitude * (std::f64::consts::TAU * phase).sin(),
                        "sawtooth-pulsator" => {
                            amplitude * if phase < 0.15 { 0.5 - phase / 0.15 } else { -0.5 + (phase - 0.15) / 0.85 }
                        }
                        "eclipsing-binary" => {
                            let d = |x: f64| if x.abs() < 0.06 { 1.0 - (x / 0.06).powi(2) } else { 0.0 };
                            let x = phase - phase.round();
                            let y = phase - 0.5;
                            amplitude * (d(x) + 0.4 * d(y))
                        }
                        "transit" => {
                            let x = phase - phase.round();
                            if x.abs() < 0.02 { amplitude } else { 0.0 }
                        }
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
