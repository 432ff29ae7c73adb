//! Phase dispersion minimisation (Stellingwerf 1978, ApJ 224, 953): fold at each trial
//! frequency, split phase into equal bins, and compare the pooled within-bin variance
//! s² = Σ(n_j − 1)s_j² / (Σn_j − M) with the total variance σ²; θ = s²/σ² is small at the
//! true period. Reported as power = 1 − θ so that, as for every method, higher is better.
//! Unweighted, single bin cover (Stellingwerf's (N_b, N_c) = (n_bins, 1)).

use super::{FrequencyGrid, Periodogram, SearchError, Series, Spectrum};
use rayon::prelude::*;

/// Phase dispersion minimisation with `n_bins` phase bins (2..=100; 10 is customary).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PhaseDispersion {
    /// Number of equal phase bins (2 to 100).
    pub n_bins: usize,
}

impl Default for PhaseDispersion {
    fn default() -> Self {
        PhaseDispersion { n_bins: 10 }
    }
}

impl Periodogram for PhaseDispersion {
    fn name(&self) -> &'static str {
        "phase dispersion minimisation"
    }
    fn min_points(&self) -> usize {
        2 * self.n_bins.max(2)
    }
    fn check_series(&self, series: &Series) -> Result<(), SearchError> {
        if !(2..=100).contains(&self.n_bins) {
            return Err(SearchError::InvalidParameter {
                name: "phase bins",
                value: self.n_bins as f64,
                expected: "2 to 100",
            });
        }
        if series.len() < self.min_points() {
            return Err(SearchError::TooFewPoints {
                needed: self.min_points(),
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
        let y = series.band_centred_values();
        let n = y.len();
        let mean = y.iter().sum::<f64>() / n as f64;
        let var = y.iter().map(|v| (v - mean) * (v - mean)).sum::<f64>() / (n - 1) as f64;
        let nb = self.n_bins;
        let t0 = series.time_d[0];
        let power = (0..grid.len)
            .into_par_iter()
            .map_init(
                || (vec![0usize; nb], vec![0.0f64; nb], vec![0.0f64; nb]),
                |(cnt, sum, sum2), k| {
                    let f = grid.freq_per_day(k);
                    cnt.iter_mut().for_each(|v| *v = 0);
                    sum.iter_mut().for_each(|v| *v = 0.0);
                    sum2.iter_mut().for_each(|v| *v = 0.0);
                    for i in 0..n {
                        let x = (series.time_d[i] - t0) * f; // ≥ 0: truncation is the floor
                        let b = (((x - (x as i64) as f64) * nb as f64) as i64 as usize).min(nb - 1);
                        cnt[b] += 1;
                        sum[b] += y[i];
                        sum2[b] += y[i] * y[i];
                    }
                    let (mut num, mut dof) = (0.0, 0usize);
                    for b in 0..nb {
                        if cnt[b] > 1 {
                            num += sum2[b] - sum[b] * sum[b] / cnt[b] as f64;
                            dof += cnt[b] - 1;
                        }
                    }
                    if dof == 0 || var <= 0.0 { 0.0 } else { 1.0 - (num / dof as f64) / var }
                },
            )
            .collect();
        Ok(Spectrum { grid: *grid, power, amplitude: None, algorithm: None })
    }
}
