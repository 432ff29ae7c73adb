//! Conditional entropy period search (Graham et al. 2013, MNRAS 434, 2629): values are
//! scaled to [0, 1], the folded (phase, value) plane is split into n_phase × n_value
//! bins, and H_c = Σ p(φ,m) ln(p(φ)/p(φ,m)) (their eq. 1) is smallest at the true period.
//! Reported as power = ln(n_value) − H_c ≥ 0 (higher is better, as for every method).

use super::{FrequencyGrid, Periodogram, SearchError, Series, Spectrum};
use rayon::prelude::*;

/// Conditional entropy with `n_phase` × `n_value` bins (Graham et al. use 10 × 5).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ConditionalEntropy {
    /// Number of equal phase bins (2 to 1000).
    pub n_phase: usize,
    /// Number of equal bins of the values scaled to [0, 1] (2 to 1000).
    pub n_value: usize,
}

impl Default for ConditionalEntropy {
    fn default() -> Self {
        ConditionalEntropy { n_phase: 10, n_value: 5 }
    }
}

impl Periodogram for ConditionalEntropy {
    fn name(&self) -> &'static str {
        "conditional entropy"
    }
    fn min_points(&self) -> usize {
        self.n_phase.max(2) * 2
    }
    fn check_series(&self, series: &Series) -> Result<(), SearchError> {
        if !(2..=1000).contains(&self.n_phase) || !(2..=1000).contains(&self.n_value) {
            return Err(SearchError::InvalidParameter {
                name: "entropy bins",
                value: self.n_phase.min(self.n_value) as f64,
                expected: "2 to 1000 bins in phase and in value",
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
        let lo = y.iter().cloned().fold(f64::INFINITY, f64::min);
        let hi = y.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
        let span = (hi - lo).max(1e-300);
        let (np, nv) = (self.n_phase, self.n_value);
        let vbin: Vec<usize> = y.iter().map(|v| ((((v - lo) / span) * nv as f64) as usize).min(nv - 1)).collect();
        let n = y.len() as f64;
        let t0 = series.time_d[0];
        let power = (0..grid.len)
            .into_par_iter()
            .map_init(
                || vec![0u32; np * nv],
                |hist, k| {
                    let f = grid.freq_per_day(k);
                    hist.iter_mut().for_each(|v| *v = 0);
                    for (i, &vb) in vbin.iter().enumerate() {
                        let x = (series.time_d[i] - t0) * f; // ≥ 0: truncation is the floor
                        let b = (((x - (x as i64) as f64) * np as f64) as i64 as usize).min(np - 1);
                        hist[b * nv + vb] += 1;
                    }
                    let mut h = 0.0;
                    for b in 0..np {
                        let row = &hist[b * nv..(b + 1) * nv];
                        let pb: f64 = row.iter().map(|&c| c as f64).sum::<f64>() / n;
                        for &c in row {
                            if c > 0 {
                                let pj = c as f64 / n;
                                h += pj * (pb / pj).ln();
                            }
                        }
                    }
                    (nv as f64).ln() - h
                },
            )
            .collect();
        Ok(Spectrum { grid: *grid, power, amplitude: None, algorithm: None })
    }
}
