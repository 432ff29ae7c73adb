//! Detrending before a search: a polynomial in time, or one zero point per segment
//! (segments separated by gaps, e.g. nights or observing runs), per band.

use crate::fit::weighted_linear_lsq;
use crate::periodogram::{SearchError, Series};

/// A polynomial trend removed from a series.
#[derive(Debug, Clone, PartialEq)]
pub struct PolynomialTrend {
    /// Coefficients c_k of Σ c_k x^k with x = (t − t_mid)/half_span ∈ [−1, 1].
    pub coefficients: Vec<f64>,
    /// Mid-time t_mid of the series, days from the caller's epoch.
    pub t_mid_d: f64,
    /// Half the time span of the series, days.
    pub half_span_d: f64,
    /// Values minus the trend, plus the trend's mean level c_0.
    pub detrended: Vec<f64>,
}

/// Fits and removes a weighted polynomial of `degree` (0..=10) in time, keeping the mean
/// level. Source: weighted linear least squares (see [`crate::fit::linear`]).
pub fn remove_polynomial(series: &Series, degree: usize) -> Result<PolynomialTrend, SearchError> {
    if degree > 10 {
        return Err(SearchError::InvalidParameter {
            name: "polynomial degree",
            value: degree as f64,
            expected: "0 to 10",
        });
    }
    let p = degree + 1;
    if series.len() <= p {
        return Err(SearchError::TooFewPoints {
            needed: p + 1,
            got: series.len(),
            dropped: series.n_dropped,
            reason: "a polynomial trend of this degree",
        });
    }
    let t0 = series.time_d[0];
    let t1 = series.time_d[series.len() - 1];
    let mid = 0.5 * (t0 + t1);
    let half = (0.5 * (t1 - t0)).max(1e-300);
    let mut design = Vec::with_capacity(series.len() * p);
    for &t in &series.time_d {
        let x = (t - mid) / half;
        let mut v = 1.0;
        for _ in 0..p {
            design.push(v);
            v *= x;
        }
    }
    let fit = weighted_linear_lsq(&design, p, &series.value, &series.weight)?;
    let detrended = (0..series.len())
        .map(|i| {
            let trend: f64 = (1..p).map(|k| design[i * p + k] * fit.params[k]).sum();
            series.value[i] - trend
        })
        .collect();
    Ok(PolynomialTrend { coefficients: fit.params, t_mid_d: mid, half_span_d: half, detrended })
}

/// Zero points removed per segment and band.
#[derive(Debug, Clone, PartialEq)]
pub struct SegmentOffsets {
    /// Segment index of each point.
    pub segment: Vec<usize>,
    /// Offset removed per (segment, band): `offsets[segment][band]` (NaN where empty).
    pub offsets: Vec<Vec<f64>>,
    /// Values minus their segment's offset plus the band's overall weighted mean.
    pub detrended: Vec<f64>,
}

/// Splits the series at gaps longer than `gap_d` days and removes each segment's weighted
/// mean per band, restoring the band's overall weighted mean (common practice for
/// night-to-night zero-point drifts).
pub fn remove_segment_offsets(series: &Series, gap_d: f64) -> Result<SegmentOffsets, SearchError> {
    if !(gap_d.is_finite() && gap_d > 0.0) {
        return Err(SearchError::InvalidParameter { name: "gap (d)", value: gap_d, expected: "a finite gap > 0 days" });
    }
    let n = series.len();
    let nb = series.n_bands();
    let mut segment = vec![0usize; n];
    for i in 1..n {
        segment[i] = segment[i - 1] + usize::from(series.time_d[i] - series.time_d[i - 1] > gap_d);
    }
    let nseg = segment.last().map_or(0, |s| s + 1);
    let mut sw = vec![vec![0.0; nb]; nseg];
    let mut swy = vec![vec![0.0; nb]; nseg];
    let mut bw = vec![0.0; nb];
    let mut bwy = vec![0.0; nb];
    for i in 0..n {
        let (s, b, w) = (segment[i], series.band[i], series.weight[i]);
        sw[s][b] += w;
        swy[s][b] += w * series.value[i];
        bw[b] += w;
        bwy[b] += w * series.value[i];
    }
    let offsets: Vec<Vec<f64>> = (0..nseg)
        .map(|s| (0..nb).map(|b| if sw[s][b] > 0.0 { swy[s][b] / sw[s][b] } else { f64::NAN }).collect())
        .collect();
    let detrended = (0..n)
        .map(|i| series.value[i] - offsets[segment[i]][series.band[i]] + bwy[series.band[i]] / bw[series.band[i]])
        .collect();
    Ok(SegmentOffsets { segment, offsets, detrended })
}

#[cfg(test)]
mod tests {
    use super::*;
    #[test]
    fn removes_exact_polynomial_and_offsets() {
        let t: Vec<f64> = (0..50).map(|i| i as f64 * 0.3).collect();
        let y: Vec<f64> =
            t.iter().map(|&t| 5.0 + 0.1 * t - 0.01 * t * t + if (t as i64) % 2 == 0 { 1e-3 } else { -1e-3 }).collect();
        let s = Series::from_arrays(&t, &y, None).unwrap();
        let tr = remove_polynomial(&s, 2).unwrap();
        let m = tr.detrended.iter().sum::<f64>() / 50.0;
        assert!(tr.detrended.iter().all(|v| (v - m).abs() < 2e-3));
        // two nights with offsets 0 and 0.5 → flat after removal
        let t2 = [0.1, 0.2, 0.3, 1.1, 1.2, 1.3];
        let y2 = [1.0, 1.1, 0.9, 1.5, 1.6, 1.4];
        let s2 = Series::from_arrays(&t2, &y2, None).unwrap();
        let so = remove_segment_offsets(&s2, 0.5).unwrap();
        assert_eq!(so.offsets.len(), 2);
        assert!((so.detrended[3] - so.detrended[0]).abs() < 1e-12);
    }
}
