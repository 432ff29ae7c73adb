//! Multi-harmonic periodogram (Schwarzenberg-Czerny 1996, ApJ 460, L107): at each trial
//! frequency a weighted Fourier series of K harmonics plus a zero point per band is fitted
//! by linear least squares; power = (χ²₀ − χ²(f))/χ²₀ ∈ [0, 1] (the analysis-of-variance
//! statistic up to a monotonic transform). K = 1 is the generalised Lomb–Scargle periodogram.
//! Harmonics by the Chebyshev recurrence cos(kx) = 2cos x cos((k−1)x) − cos((k−2)x).

use super::{FrequencyGrid, Periodogram, SearchError, Series, Spectrum};
use crate::fit::small::cholesky_solve_in_place;
use rayon::prelude::*;
use std::f64::consts::TAU;

/// Multi-harmonic periodogram with `harmonics` terms (1..=10).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MultiHarmonic {
    /// Number K of harmonics in the fitted Fourier series (1 to 10).
    pub harmonics: usize,
}

impl Periodogram for MultiHarmonic {
    fn name(&self) -> &'static str {
        "multi-harmonic periodogram"
    }
    fn min_points(&self) -> usize {
        2 * self.harmonics + 2
    }
    fn check_series(&self, series: &Series) -> Result<(), SearchError> {
        if !(1..=10).contains(&self.harmonics) {
            return Err(SearchError::InvalidParameter {
                name: "harmonics",
                value: self.harmonics as f64,
                expected: "1 to 10",
            });
        }
        let need = 2 * self.harmonics + series.n_bands() + 1;
        if series.len() < need {
            return Err(SearchError::TooFewPoints {
                needed: need,
                got: series.len(),
                dropped: series.n_dropped,
                reason: self.name(),
            });
        }
        Ok(())
    }
    fn evaluate_unchecked(&self, series: &Series, grid: &FrequencyGrid) -> Result<Spectrum, SearchError> {
        // parameters are public: re-check them here so that no call can index out of range
        self.check_series(series)?;
        let kh = self.harmonics;
        let nb = series.n_bands();
        let p = nb + 2 * kh;
        let y = series.band_centred_values();
        let w = &series.weight;
        let chi0: f64 = y.iter().zip(w).map(|(y, w)| w * y * y).sum();
        let t0 = series.time_d[0];
        let power = (0..grid.len)
            .into_par_iter()
            .map_init(
                || (vec![0.0; p * p], vec![0.0; p], vec![0.0; p]),
                |(a, b, row), k| {
                    let f = grid.freq_per_day(k);
                    a.iter_mut().for_each(|v| *v = 0.0);
                    b.iter_mut().for_each(|v| *v = 0.0);
                    for i in 0..y.len() {
                        row.iter_mut().for_each(|v| *v = 0.0);
                        row[series.band[i]] = 1.0;
                        let (s1, c1) = (TAU * f * (series.time_d[i] - t0)).sin_cos();
                        let (mut cp, mut sp, mut c, mut s) = (1.0, 0.0, c1, s1);
                        for h in 0..kh {
                            row[nb + 2 * h] = c;
                            row[nb + 2 * h + 1] = s;
                            let (cn, sn) = (2.0 * c1 * c - cp, 2.0 * c1 * s - sp);
                            (cp, sp, c, s) = (c, s, cn, sn);
                        }
                        let wi = w[i];
                        for u in 0..p {
                            let wu = wi * row[u];
                            if wu == 0.0 {
                                continue;
                            }
                            b[u] += wu * y[i];
                            for v in 0..=u {
                                a[u * p + v] += wu * row[v];
                            }
                        }
                    }
                    for u in 0..p {
                        for v in 0..u {
                            a[v * p + u] = a[u * p + v];
                        }
                    }
                    let rhs = b.clone();
                    if !cholesky_solve_in_place(a, b, p) || chi0 <= 0.0 {
                        return 0.0;
                    }
                    // χ² = χ²₀ − bᵀx for the least-squares solution x
                    let explained: f64 = rhs.iter().zip(b.iter()).map(|(r, x)| r * x).sum();
                    (explained / chi0).clamp(0.0, 1.0)
                },
            )
            .collect();
        Ok(Spectrum { grid: *grid, power, amplitude: None, algorithm: None })
    }
}
