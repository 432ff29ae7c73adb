//! Input light curves: validation, dropping of non-finite rows, weights and bands.

use super::error::SearchError;

/// A light curve as the caller holds it. Times in days relative to a reference epoch the
/// caller chose (the stage assumes BJD_TDB); values in magnitudes or fluxes; optional
/// 1-σ uncertainties in the units of the values; optional band label per point.
#[derive(Debug, Clone, Copy)]
pub struct LightCurve<'a> {
    pub(crate) time_d: &'a [f64],
    pub(crate) value: &'a [f64],
    /// 1-σ uncertainty per point, in the units of the values (None: equal weights).
    pub error: Option<&'a [f64]>,
    pub(crate) band: Option<&'a [u32]>,
}

impl<'a> LightCurve<'a> {
    /// A single-band light curve without uncertainties.
    pub fn new(time_d: &'a [f64], value: &'a [f64]) -> Self {
        LightCurve { time_d, value, error: None, band: None }
    }
    /// Adds 1-σ uncertainties.
    pub fn with_error(mut self, error: &'a [f64]) -> Self {
        self.error = Some(error);
        self
    }
    /// Adds band labels.
    pub fn with_band(mut self, band: &'a [u32]) -> Self {
        self.band = Some(band);
        self
    }
}

/// A validated light curve: finite values only, times non-decreasing, positive weights.
/// Built only by [`Series::from_light_curve`] / [`Series::from_arrays`] so that every
/// method can rely on its invariants; read it through the accessors.
#[derive(Debug, Clone, PartialEq)]
pub struct Series {
    /// Times, days from the caller's epoch, non-decreasing.
    pub(crate) time_d: Vec<f64>,
    /// Values (magnitudes or fluxes).
    pub(crate) value: Vec<f64>,
    /// Weights 1/σ² (units of value⁻²), or 1 when no uncertainties were given.
    pub(crate) weight: Vec<f64>,
    /// Band index 0..n_bands per point (labels mapped in order of first appearance).
    pub(crate) band: Vec<usize>,
    /// The caller's band labels, indexed by band index.
    pub(crate) band_labels: Vec<u32>,
    /// Input row of each kept point.
    pub(crate) row: Vec<usize>,
    /// Rows dropped because a time, value or uncertainty was NaN or infinite.
    pub(crate) n_dropped: usize,
    /// Whether the weights come from uncertainties.
    pub(crate) has_errors: bool,
}

impl Series {
    /// Validates a light curve. Rows with a non-finite time, value or uncertainty are
    /// dropped and counted; a zero or negative uncertainty, decreasing times, a repeated
    /// time within one band, fewer than 3 points, or a constant light curve are errors.
    pub fn from_light_curve(lc: &LightCurve) -> Result<Series, SearchError> {
        let n = lc.time_d.len();
        if lc.value.len() != n {
            return Err(SearchError::LengthMismatch { what: "values", expected: n, got: lc.value.len() });
        }
        if let Some(e) = lc.error
            && e.len() != n
        {
            return Err(SearchError::LengthMismatch { what: "uncertainties", expected: n, got: e.len() });
        }
        if let Some(b) = lc.band
            && b.len() != n
        {
            return Err(SearchError::LengthMismatch { what: "band labels", expected: n, got: b.len() });
        }
        let mut s = Series {
            time_d: Vec::with_capacity(n),
            value: Vec::with_capacity(n),
            weight: Vec::with_capacity(n),
            band: Vec::with_capacity(n),
            band_labels: Vec::new(),
            row: Vec::with_capacity(n),
            n_dropped: 0,
            has_errors: lc.error.is_some(),
        };
        // last time seen per band: (time, row)
        let mut last_in_band: Vec<(f64, usize)> = Vec::new();
        let mut previous: Option<(f64, usize)> = None;
        for i in 0..n {
            let t = lc.time_d[i];
            let v = lc.value[i];
            let e = lc.error.map(|e| e[i]);
            if !t.is_finite() || !v.is_finite() || e.is_some_and(|e| !e.is_finite()) {
                s.n_dropped += 1;
                continue;
            }
            let w = match e {
                Some(e) if e <= 0.0 => return Err(SearchError::NonPositiveError { row: i, value: e }),
                Some(e) => 1.0 / (e * e),
                None => 1.0,
            };
            if let Some((tp, _)) = previous
                && t < tp
            {
                return Err(SearchError::UnsortedTimes { row: i, time_d: t, previous_d: tp });
            }
            previous = Some((t, i));
            let label = lc.band.map_or(0, |b| b[i]);
            let bi = match s.band_labels.iter().position(|&l| l == label) {
                Some(k) => k,
                None => {
                    s.band_labels.push(label);
                    last_in_band.push((f64::NEG_INFINITY, 0));
                    s.band_labels.len() - 1
                }
            };
            if last_in_band[bi].0 == t {
                return Err(SearchError::DuplicateTime {
                    row: i,
                    first_row: last_in_band[bi].1,
                    time_d: t,
                    band: label,
                });
            }
            last_in_band[bi] = (t, i);
            s.time_d.push(t);
            s.value.push(v);
            s.weight.push(w);
            s.band.push(bi);
            s.row.push(i);
        }
        if s.len() < 3 {
            return Err(SearchError::TooFewPoints {
                needed: 3,
                got: s.len(),
                dropped: s.n_dropped,
                reason: "a period search",
            });
        }
        let constant = (0..s.n_bands()).all(|b| {
            let mut it = s.value.iter().zip(&s.band).filter(|(_, bb)| **bb == b).map(|(v, _)| *v);
            let first = it.next();
            it.all(|v| Some(v) == first)
        });
        if constant {
            return Err(SearchError::ConstantSeries);
        }
        Ok(s)
    }

    /// Validates plain arrays: times (d), values, optional uncertainties.
    pub fn from_arrays(time_d: &[f64], value: &[f64], error: Option<&[f64]>) -> Result<Series, SearchError> {
        Self::from_light_curve(&LightCurve { time_d, value, error, band: None })
    }

    /// Times, days from the caller's epoch, non-decreasing.
    pub fn time_d(&self) -> &[f64] {
        &self.time_d
    }
    /// Values (magnitudes or fluxes).
    pub fn value(&self) -> &[f64] {
        &self.value
    }
    /// Weights 1/σ² (or 1 without uncertainties).
    pub fn weight(&self) -> &[f64] {
        &self.weight
    }
    /// Band index per point.
    pub fn band(&self) -> &[usize] {
        &self.band
    }
    /// The caller's band labels, by band index.
    pub fn band_labels(&self) -> &[u32] {
        &self.band_labels
    }
    /// Input row of each kept point.
    pub fn row(&self) -> &[usize] {
        &self.row
    }
    /// Rows dropped for NaN or infinite values.
    pub fn n_dropped(&self) -> usize {
        self.n_dropped
    }
    /// 1σ uncertainties of the kept points, 1/√weight, in the units of the values; `None`
    /// when the light curve has none (exact inverse of how the weights were made).
    pub fn errors(&self) -> Option<Vec<f64>> {
        self.has_errors().then(|| self.weight().iter().map(|w| 1.0 / w.sqrt()).collect())
    }
    /// Whether the weights come from uncertainties.
    pub fn has_errors(&self) -> bool {
        self.has_errors
    }
    /// Number of kept points.
    pub fn len(&self) -> usize {
        self.time_d.len()
    }
    /// Whether no point was kept (never true for a validated series).
    pub fn is_empty(&self) -> bool {
        self.time_d.is_empty()
    }
    /// Number of distinct bands.
    pub fn n_bands(&self) -> usize {
        self.band_labels.len().max(1)
    }
    /// Time span last − first, days.
    pub fn baseline_d(&self) -> f64 {
        match (self.time_d.first(), self.time_d.last()) {
            (Some(a), Some(b)) => b - a,
            _ => 0.0,
        }
    }
    /// Weighted mean of the values over all bands.
    pub fn weighted_mean(&self) -> f64 {
        let sw: f64 = self.weight.iter().sum();
        self.value.iter().zip(&self.weight).map(|(v, w)| v * w).sum::<f64>() / sw
    }
    /// The same sampling and weights with other values (residuals, bootstrap draws).
    /// `value` must have `len()` entries.
    pub fn with_values(&self, value: Vec<f64>) -> Result<Series, SearchError> {
        if value.len() != self.len() {
            return Err(SearchError::LengthMismatch {
                what: "replacement values",
                expected: self.len(),
                got: value.len(),
            });
        }
        Ok(Series { value, ..self.clone() })
    }
    /// Values with the weighted mean of each band removed.
    pub fn band_centred_values(&self) -> Vec<f64> {
        let nb = self.n_bands();
        let mut sw = vec![0.0; nb];
        let mut swy = vec![0.0; nb];
        for i in 0..self.len() {
            sw[self.band[i]] += self.weight[i];
            swy[self.band[i]] += self.weight[i] * self.value[i];
        }
        (0..self.len()).map(|i| self.value[i] - swy[self.band[i]] / sw[self.band[i]]).collect()
    }
}
