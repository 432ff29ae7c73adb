//! Bindings of the light-curve stages: period search (`survey::search::search_series` and
//! `survey::report::period_search_report`), folding (`fold::fold_light_curve`) and frequency
//! extraction (`frequencies::prewhiten`). The light curve is assembled exactly as the command
//! line assembles a table's columns (`survey::input::assemble`), so that the same numbers
//! give the same result to the last bit.

use numpy::{AllowTypeChange, IntoPyArray, PyArrayLike1};
use pyo3::prelude::*;
use pyo3::types::PyDict;
use skyclock::arrival::table::ObserverSpec;
use skyclock::frequencies::detrend::{remove_polynomial, remove_segment_offsets};
use skyclock::frequencies::prewhiten::{PrewhitenOptions, prewhiten};
use skyclock::frequencies::summary::FrequencyExtractionResult;
use skyclock::periodogram::significance::BootstrapOptions;
use skyclock::periodogram::{Algorithm, GridRequest, plan_grid};
use skyclock::survey::input::{LightCurveColumns, TableLightCurve, is_barycentric_tdb};
use skyclock::survey::load::{LightCurveSource, TimeOrigin, light_curve_from_frame};
use skyclock::survey::report::period_search_report;
use skyclock::survey::search::{SearchMethod, SearchPlan, search_series};
use skyclock::time::{LeapSecondTable, TimeFormat, TimeScale, parse_time};

use crate::convert::{ARRAYS, check_length, error, floats, table, text_column, to_json};
use crate::place::{Place, clock};

/// A light curve as handed over from Python: times as text, values and errors as floats
/// (written as text in their shortest round-trip form, as a table file holds them).
pub struct LightCurveInput {
    pub times: Vec<Option<String>>,
    pub values: Vec<f64>,
    pub errors: Option<Vec<f64>>,
    pub bands: Option<Vec<Option<String>>>,
    pub clock: String,
    pub clocks: Option<Vec<Option<String>>>,
    pub site_names: Option<Vec<Option<String>>>,
    pub place: Place,
}

fn number_texts(v: &[f64]) -> Vec<Option<String>> {
    v.iter().map(|x| Some(format!("{x}"))).collect()
}

impl LightCurveInput {
    /// The light curve in days since its epoch (BJD_TDB) and a note on how the times were
    /// taken; times in an observer clock are carried to the barycentre first (library:
    /// `survey::load::light_curve_from_frame`, the in-memory form of the command line's
    /// `read_light_curve`).
    pub fn load(&self) -> PyResult<(TableLightCurve, String)> {
        let n = self.times.len();
        check_length("values", self.values.len(), n)?;
        if let Some(e) = &self.errors {
            check_length("errors", e.len(), n)?;
        }
        if let Some(b) = &self.bands {
            check_length("bands", b.len(), n)?;
        }
        let mut columns = vec![text_column("times", &self.times), text_column("values", &number_texts(&self.values))];
        if let Some(e) = &self.errors {
            columns.push(text_column("errors", &number_texts(e)));
        }
        if let Some(b) = &self.bands {
            columns.push(text_column("bands", b));
        }
        if let Some(c) = &self.clocks {
            check_length("clocks", c.len(), n)?;
            columns.push(text_column("clocks", c));
        }
        if let Some(s) = &self.site_names {
            check_length("site_names", s.len(), n)?;
            columns.push(text_column("site_names", s));
        }
        let df = table(columns)?;
        let clock_spec = clock(&self.clock)?;
        let reference = self.place.reference()?;
        let (observer, source) = if self.clocks.is_none() && is_barycentric_tdb(&clock_spec) {
            (ObserverSpec::Geocentre, None)
        } else {
            let description = self.place.description()?;
            let observer =
                self.place.observer_spec(description.as_ref(), self.site_names.as_ref().map(|_| "site_names"))?;
            (observer, Some(self.place.source(description.as_ref())?))
        };
        let request = LightCurveSource {
            path: std::path::Path::new(ARRAYS),
            columns: LightCurveColumns {
                time: "times".into(),
                value: "values".into(),
                error: self.errors.as_ref().map(|_| "errors".to_string()),
                band: self.bands.as_ref().map(|_| "bands".to_string()),
            },
            times: match &self.clocks {
                Some(_) => TimeOrigin::ClockColumn("clocks".into()),
                None => TimeOrigin::Clock(self.clock.clone()),
            },
            observer,
            source,
        };
        light_curve_from_frame(&df, ARRAYS, &request, &reference).map_err(error)
    }
}

/// Builds the light-curve input from the Python arguments.
fn light_curve_input(
    times: Vec<Option<String>>,
    values: PyArrayLike1<'_, f64, AllowTypeChange>,
    errors: Option<PyArrayLike1<'_, f64, AllowTypeChange>>,
    bands: Option<Vec<Option<String>>>,
    clock: String,
    clocks: Option<Vec<Option<String>>>,
    site_names: Option<Vec<Option<String>>>,
    place: &str,
) -> PyResult<LightCurveInput> {
    Ok(LightCurveInput {
        times,
        values: floats(&values),
        errors: errors.as_ref().map(floats),
        bands,
        clock,
        clocks,
        site_names,
        place: crate::convert::options(place, "place options")?,
    })
}

/// The period-search options, spelled as the command line spells them.
#[derive(Debug, Clone, serde::Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SearchOptions {
    pub method: String,
    pub harmonics: usize,
    pub phase_bins: usize,
    pub durations_d: Vec<f64>,
    pub brightness: String,
    pub max_freq_per_day: f64,
    pub min_freq_per_day: Option<f64>,
    pub oversampling: f64,
    pub kernel: String,
    pub peaks: usize,
    pub memory_limit_gib: f64,
    pub bootstrap_trials: Option<usize>,
    pub seed: u64,
}

/// The kernel of the Lomb–Scargle family: auto, exact or fast.
pub fn algorithm(kernel: &str) -> PyResult<Algorithm> {
    match kernel {
        "auto" => Ok(Algorithm::Auto),
        "exact" => Ok(Algorithm::Exact),
        "fast" => Ok(Algorithm::Fast),
        other => Err(error(format!("kernel '{other}' is not one of auto, exact, fast"))),
    }
}

impl SearchOptions {
    /// The library's search plan (as `find-periods` and `survey-batch` build it).
    pub fn plan(&self, window_sidelobes: usize) -> PyResult<SearchPlan> {
        let magnitudes = match self.brightness.as_str() {
            "magnitude" => true,
            "flux" => false,
            other => return Err(error(format!("brightness '{other}' is not one of magnitude, flux"))),
        };
        let method = match self.method.as_str() {
            "sinusoid" => SearchMethod::Sinusoid,
            "classical-sinusoid" => SearchMethod::ClassicalSinusoid,
            "harmonics" => SearchMethod::Harmonics(self.harmonics),
            "phase-dispersion" => SearchMethod::PhaseDispersion(self.phase_bins),
            "conditional-entropy" => SearchMethod::ConditionalEntropy { phase_bins: self.phase_bins, value_bins: 10 },
            "box" => {
                if let Some(v) = self.durations_d.iter().find(|v| !(v.is_finite() && **v > 0.0)) {
                    return Err(error(format!("durations_d: every duration must be > 0 days, got {v}")));
                }
                SearchMethod::Box {
                    durations: skyclock::periodogram::bls::BoxDurations::Fixed(self.durations_d.clone()),
                    values_are_magnitudes: magnitudes,
                }
            }
            "cascade" => {
                if !(1..=5).contains(&self.harmonics) {
                    return Err(error(format!(
                        "harmonics: the survey cascade takes 1 to 5 harmonics, got {}",
                        self.harmonics
                    )));
                }
                let mut c = skyclock::survey::cascade::CascadeOptions::new(magnitudes);
                c.harmonics = self.harmonics;
                SearchMethod::Cascade(c)
            }
            other => {
                return Err(error(format!(
                    "method '{other}' is not one of sinusoid, classical-sinusoid, harmonics, phase-dispersion, conditional-entropy, box, cascade"
                )));
            }
        };
        if !(self.memory_limit_gib.is_finite() && self.memory_limit_gib > 0.0) {
            return Err(error(format!("memory_limit_gib must be > 0, got {}", self.memory_limit_gib)));
        }
        Ok(SearchPlan {
            method,
            algorithm: algorithm(&self.kernel)?,
            grid: GridRequest {
                oversampling: self.oversampling,
                min_freq_per_day: self.min_freq_per_day,
                max_freq_per_day: self.max_freq_per_day,
                memory_limit_bytes: (self.memory_limit_gib * (1u64 << 30) as f64) as u128,
            },
            peaks: self.peaks,
            refine_peaks: true,
            window_sidelobes,
            bootstrap: self.bootstrap_trials.map(|trials| BootstrapOptions { trials, seed: self.seed }),
        })
    }
}

/// Periodogram of one light curve with its top peaks, errors, false-alarm probabilities
/// and alias notes. Returns (report JSON, spectrum columns).
#[pyfunction]
#[pyo3(signature = (times, values, options, place, clock, errors=None, bands=None, clocks=None, site_names=None))]
pub fn search_periods<'py>(
    py: Python<'py>,
    times: Vec<Option<String>>,
    values: PyArrayLike1<'py, f64, AllowTypeChange>,
    options: &str,
    place: &str,
    clock: String,
    errors: Option<PyArrayLike1<'py, f64, AllowTypeChange>>,
    bands: Option<Vec<Option<String>>>,
    clocks: Option<Vec<Option<String>>>,
    site_names: Option<Vec<Option<String>>>,
) -> PyResult<(String, Bound<'py, PyDict>)> {
    let input = light_curve_input(times, values, errors, bands, clock, clocks, site_names, place)?;
    let o: SearchOptions = crate::convert::options(options, "search options")?;
    let plan = o.plan(3)?;
    let mut warnings = Vec::new();
    let (report, spectrum) = py.detach(|| -> PyResult<_> {
        let (lc, note) = input.load()?;
        warnings.clone_from(&lc.warnings);
        let series = lc.series().map_err(error)?;
        let out = search_series(&series, &plan).map_err(|e| error(lc.locate(e)))?;
        let report = period_search_report(&out, &plan.method.label(), &note, &lc.epoch_jd_text());
        let f = out.spectrum.grid.frequencies();
        Ok((report, (f, out.spectrum.power.clone(), out.spectrum.amplitude.clone())))
    })?;
    crate::convert::warn_times(py, &warnings)?;
    let (f, power, amplitude) = spectrum;
    let d = PyDict::new(py);
    let period: Vec<f64> = f.iter().map(|x| 1.0 / x).collect();
    d.set_item("freq_per_day", f.into_pyarray(py))?;
    d.set_item("period_d", period.into_pyarray(py))?;
    d.set_item("power", power.into_pyarray(py))?;
    if let Some(a) = amplitude {
        d.set_item("amplitude", a.into_pyarray(py))?;
    }
    Ok((to_json(&report)?, d))
}

/// Options of `fold`.
#[derive(Debug, serde::Deserialize)]
#[serde(deny_unknown_fields)]
struct FoldOptions {
    period_d: f64,
    epoch_bjd_tdb: Option<String>,
    refine_harmonics: Option<usize>,
    bins: usize,
    bin_statistic: String,
}

/// Folds a light curve at a period (library: `fold::fold_light_curve`). Returns (report
/// JSON, per-point columns, per-bin columns).
#[pyfunction]
#[pyo3(signature = (times, values, options, place, clock, errors=None, bands=None, clocks=None, site_names=None))]
pub fn fold_light_curve<'py>(
    py: Python<'py>,
    times: Vec<Option<String>>,
    values: PyArrayLike1<'py, f64, AllowTypeChange>,
    options: &str,
    place: &str,
    clock: String,
    errors: Option<PyArrayLike1<'py, f64, AllowTypeChange>>,
    bands: Option<Vec<Option<String>>>,
    clocks: Option<Vec<Option<String>>>,
    site_names: Option<Vec<Option<String>>>,
) -> PyResult<(String, Bound<'py, PyDict>, Bound<'py, PyDict>)> {
    use skyclock::fold::{BinStatistic, FoldRequest};
    let input = light_curve_input(times, values, errors, bands, clock, clocks, site_names, place)?;
    let o: FoldOptions = crate::convert::options(options, "fold options")?;
    if !(o.period_d.is_finite() && o.period_d > 0.0) {
        return Err(error(format!("period_d must be a positive number of days, got {}", o.period_d)));
    }
    let statistic = match o.bin_statistic.as_str() {
        "mean" => BinStatistic::Mean,
        "median" => BinStatistic::Median,
        other => return Err(error(format!("bin_statistic '{other}' is not one of mean, median"))),
    };
    let mut warnings = Vec::new();
    let (report, points, bins) = py.detach(|| -> PyResult<_> {
        let (lc, note) = input.load()?;
        warnings.clone_from(&lc.warnings);
        let series = lc.series().map_err(error)?;
        let epoch_d = match &o.epoch_bjd_tdb {
            None => series.time_d()[0],
            Some(text) => {
                let t = parse_time(text, TimeFormat::Jd, TimeScale::Tdb, &LeapSecondTable::builtin())
                    .map_err(|e| error(format!("epoch_bjd_tdb: {e}")))?;
                skyclock::survey::input::days_since(&t, &lc.epoch)
            }
        };
        let request = FoldRequest {
            period_d: o.period_d,
            epoch_d,
            refine_harmonics: o.refine_harmonics,
            bins: o.bins,
            statistic,
        };
        let folded = skyclock::fold::fold_light_curve(&series, &request, &note).map_err(|e| error(lc.locate(e)))?;
        let points = folded.points_table(&series, &lc.input_rows(&series)).map_err(error)?;
        let bins = folded.bins_table().map_err(error)?;
        Ok((folded.report, points, bins))
    })?;
    crate::convert::warn_times(py, &warnings)?;
    let points = crate::convert::table_to_python(py, &points)?;
    let bins = crate::convert::table_to_python(py, &bins)?;
    Ok((to_json(&report)?, points, bins))
}

/// Options of `extract_frequencies`.
#[derive(Debug, serde::Deserialize)]
#[serde(deny_unknown_fields)]
struct ExtractionOptions {
    max_freq_per_day: f64,
    oversampling: f64,
    signal_to_noise_stop: f64,
    max_frequencies: usize,
    noise_box_per_day: f64,
    kernel: String,
    detrend_polynomial_degree: Option<usize>,
    segment_gap_d: Option<f64>,
}

/// Iterative frequency extraction (prewhitening) to a signal-to-noise limit, optionally
/// after detrending (library: `frequencies::prewhiten`). Returns the result JSON.
#[pyfunction]
#[pyo3(signature = (times, values, options, place, clock, errors=None, bands=None, clocks=None, site_names=None))]
pub fn extract_frequencies<'py>(
    py: Python<'py>,
    times: Vec<Option<String>>,
    values: PyArrayLike1<'py, f64, AllowTypeChange>,
    options: &str,
    place: &str,
    clock: String,
    errors: Option<PyArrayLike1<'py, f64, AllowTypeChange>>,
    bands: Option<Vec<Option<String>>>,
    clocks: Option<Vec<Option<String>>>,
    site_names: Option<Vec<Option<String>>>,
) -> PyResult<String> {
    let input = light_curve_input(times, values, errors, bands, clock, clocks, site_names, place)?;
    let o: ExtractionOptions = crate::convert::options(options, "extraction options")?;
    let kernel = algorithm(&o.kernel)?;
    let mut warnings = Vec::new();
    let result = py.detach(|| -> PyResult<FrequencyExtractionResult> {
        let (lc, note) = input.load()?;
        warnings.clone_from(&lc.warnings);
        let mut series = lc.series().map_err(error)?;
        let mut detrending = Vec::new();
        if let Some(deg) = o.detrend_polynomial_degree {
            let t = remove_polynomial(&series, deg).map_err(|e| error(lc.locate(e)))?;
            series = series.with_values(t.detrended).map_err(|e| error(lc.locate(e)))?;
            detrending.push(format!("polynomial of degree {deg}"));
        }
        if let Some(gap) = o.segment_gap_d {
            let s = remove_segment_offsets(&series, gap).map_err(|e| error(lc.locate(e)))?;
            series = series.with_values(s.detrended).map_err(|e| error(lc.locate(e)))?;
            detrending.push(format!("zero point per segment (gaps > {gap} d)"));
        }
        let mut req = GridRequest::up_to(o.max_freq_per_day);
        req.oversampling = o.oversampling;
        let grid = plan_grid(series.baseline_d(), &req).map_err(|e| error(lc.locate(e)))?.grid;
        let options = PrewhitenOptions {
            max_frequencies: o.max_frequencies,
            snr_stop: o.signal_to_noise_stop,
            noise_box_per_day: o.noise_box_per_day,
            algorithm: kernel,
        };
        let result = prewhiten(&series, &grid, &options).map_err(|e| error(lc.locate(e)))?;
        Ok(FrequencyExtractionResult::from_run(&series, &result, &options, detrending, lc.epoch_jd_text(), note))
    })?;
    crate::convert::warn_times(py, &warnings)?;
    to_json(&result)
}
