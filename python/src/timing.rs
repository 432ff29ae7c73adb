//! Bindings of the timing stages: the O–C analysis of times of minimum or maximum with
//! linear, quadratic and light-time models (`oc::analyse`), and the phase-connected fit of
//! a pulsar timing model to arrival times (`pulsar::timing_fit::fit_timing`). Times are
//! carried to BJD_TDB exactly as the command line carries a table's rows.

use numpy::{AllowTypeChange, IntoPyArray, PyArrayLike1};
use polars::prelude::{Column, DataFrame};
use pyo3::prelude::*;
use pyo3::types::PyDict;
use skyclock::arrival::table::{ClockSpec, TableRequest, correct_table, correct_table_with_geometry};
use skyclock::arrival::{BarycentricCorrector, DelayOptions, ReferenceData, ReferencePoint, Source};
use skyclock::constants::SECONDS_PER_DAY;
use skyclock::oc::{
    AnalysisOptions, BootstrapOptions, CycleOptions, EventKind, FitOptions, ModelKind, ReferenceEphemeris, Timing,
    analyse,
};
use skyclock::table::float_column as read_floats;
use skyclock::time::{Instant, TimeFormat, TimeScale, format_time, parse_time};

use crate::convert::{ARRAYS, check_length, error, floats, table, text_column, to_json};
use crate::place::{Place, clock};

/// How a set of times is written and where it was observed.
struct TimesIn {
    times: Vec<Option<String>>,
    clock: Option<String>,
    clocks: Option<Vec<Option<String>>>,
    site_names: Option<Vec<Option<String>>>,
}

impl TimesIn {
    fn clock_spec(&self) -> PyResult<Option<ClockSpec>> {
        match (&self.clock, &self.clocks) {
            (Some(_), Some(_)) => Err(error("give either clock= or clocks=, not both")),
            (None, None) => Err(error("say how the times are written: clock='bjd_tdb' (for example) or clocks=")),
            (Some(label), None) => Ok(Some(clock(label)?)),
            (None, Some(_)) => Ok(None),
        }
    }

    /// The columns of the table the library reads (times, clocks, site names) plus `extra`.
    fn frame(&self, extra: Vec<Column>) -> PyResult<DataFrame> {
        let n = self.times.len();
        let mut columns = vec![text_column("times", &self.times)];
        if let Some(c) = &self.clocks {
            check_length("clocks", c.len(), n)?;
            columns.push(text_column("clocks", c));
        }
        if let Some(s) = &self.site_names {
            check_length("site_names", s.len(), n)?;
            columns.push(text_column("site_names", s));
        }
        for c in extra {
            check_length(c.name().as_str(), c.len(), n)?;
            columns.push(c);
        }
        table(columns)
    }

    fn request(
        &self,
        clock: Option<ClockSpec>,
        place: &Place,
        description: Option<&skyclock::config::Description>,
    ) -> PyResult<TableRequest> {
        Ok(TableRequest {
            time_column: "times".into(),
            clock,
            clock_column: self.clocks.as_ref().map(|_| "clocks".to_string()),
            observer: place.observer_spec(description, self.site_names.as_ref().map(|_| "site_names"))?,
        })
    }
}

fn corrector(reference: &ReferenceData, source: &Source) -> BarycentricCorrector {
    reference.corrector(source.clone(), DelayOptions::default())
}

/// Options of the O–C analysis, spelled as the command line spells them.
#[derive(Debug, serde::Deserialize)]
#[serde(deny_unknown_fields)]
struct OcOptions {
    epoch_bjd_tdb: String,
    period_d: f64,
    period_sigma_d: f64,
    models: Vec<String>,
    allow_ambiguous_cycles: bool,
    companion_period_range_d: Option<(f64, f64)>,
    rescale_per_source: bool,
    robust_loss: bool,
    robust_tuning_constant: Option<f64>,
    bootstrap: usize,
    seed: u64,
    binary_mass_msun: Option<f64>,
}

/// The kind and 1σ error (days) of every timing, checked as the command line checks them.
fn kinds_and_errors(errors_d: &[f64], kinds: Option<&[Option<String>]>) -> PyResult<Vec<(EventKind, f64)>> {
    (0..errors_d.len())
        .map(|i| {
            let kind = match kinds {
                None => EventKind::Primary,
                Some(k) => {
                    let text = k[i].as_deref().unwrap_or("");
                    EventKind::parse(text).ok_or_else(|| {
                        error(format!(
                            "{ARRAYS}, row {}, column 'kinds': event kind '{text}' is not one of primary, secondary, maximum",
                            i + 1
                        ))
                    })?
                }
            };
            if !(errors_d[i].is_finite() && errors_d[i] > 0.0) {
                return Err(error(format!(
                    "{ARRAYS}, row {}, column 'errors_d': error {} d must be finite and > 0",
                    i + 1,
                    errors_d[i]
                )));
            }
            Ok((kind, errors_d[i]))
        })
        .collect()
}

/// O–C analysis of times of minimum or maximum (library: `oc::analyse`): cycle counts
/// against the reference ephemeris, the fits of the models named, their comparison, the
/// companions' minimum masses and the verdicts. Returns (analysis JSON, O–C table columns).
#[pyfunction]
#[pyo3(signature = (times, errors_d, options, place, clock=None, kinds=None, origins=None, clocks=None, site_names=None))]
pub fn analyse_timings<'py>(
    py: Python<'py>,
    times: Vec<Option<String>>,
    errors_d: PyArrayLike1<'py, f64, AllowTypeChange>,
    options: &str,
    place: &str,
    clock: Option<String>,
    kinds: Option<Vec<Option<String>>>,
    origins: Option<Vec<Option<String>>>,
    clocks: Option<Vec<Option<String>>>,
    site_names: Option<Vec<Option<String>>>,
) -> PyResult<(String, Bound<'py, PyDict>)> {
    let o: OcOptions = crate::convert::options(options, "O–C options")?;
    let place: Place = crate::convert::options(place, "place options")?;
    let errors_d = floats(&errors_d);
    let input = TimesIn { times, clock, clocks, site_names };
    let n = input.times.len();
    check_length("errors_d", errors_d.len(), n)?;
    if let Some(k) = &kinds {
        check_length("kinds", k.len(), n)?;
    }
    if let Some(s) = &origins {
        check_length("origins", s.len(), n)?;
    }
    let models: Vec<ModelKind> = o
        .models
        .iter()
        .map(|m| {
            ModelKind::parse(m).ok_or_else(|| {
                error(format!(
                    "models: unknown model '{m}'; use linear, quadratic, light-time, quadratic+light-time, two-light-time or quadratic+two-light-time"
                ))
            })
        })
        .collect::<PyResult<_>>()?;
    let clock = input.clock_spec()?;
    let description = place.description()?;
    let barycentric_tdb = input.clocks.is_none()
        && clock.is_some_and(|c| c.reference == ReferencePoint::Barycentric && c.scale == TimeScale::Tdb);
    let no_position = place.source_file.is_none() && place.ra.is_none() && place.dec.is_none();
    let source = match place.source(description.as_ref()) {
        Ok(s) => s,
        Err(_) if barycentric_tdb && no_position => Source::fixed_degrees("target", 0.0, 0.0).map_err(error)?,
        Err(e) => return Err(e),
    };
    let request = input.request(clock, &place, description.as_ref())?;
    let reference = place.reference()?;
    let df = input.frame(vec![])?;
    let rows = kinds_and_errors(&errors_d, kinds.as_deref())?;
    let epoch = parse_time(&o.epoch_bjd_tdb, TimeFormat::Jd, TimeScale::Tdb, reference.converter.leap_seconds())
        .map_err(|e| error(format!("epoch_bjd_tdb '{}': {e}", o.epoch_bjd_tdb)))?;
    let eph = ReferenceEphemeris { epoch, period_d: o.period_d, period_sigma_d: o.period_sigma_d };
    let options = AnalysisOptions {
        models,
        cycles: CycleOptions { allow_ambiguous: o.allow_ambiguous_cycles },
        fit: FitOptions {
            rescale_per_source: o.rescale_per_source,
            companion_period_range_d: o.companion_period_range_d,
            huber_k: o
                .robust_loss
                .then_some(o.robust_tuning_constant.unwrap_or(skyclock::fit::robust::HUBER_DEFAULT_K)),
            ..Default::default()
        },
        bootstrap: (o.bootstrap > 0).then_some(BootstrapOptions { resamples: o.bootstrap, seed: o.seed }),
        binary_mass_msun: o.binary_mass_msun,
    };
    let corrector = corrector(&reference, &source);
    let (analysis, columns) = py.detach(|| -> PyResult<_> {
        let (corrected, _) = correct_table(&df, ARRAYS, &request, &corrector).map_err(error)?;
        let jd1 = read_floats(&corrected, ARRAYS, "bjd_tdb_jd1").map_err(error)?;
        let jd2 = read_floats(&corrected, ARRAYS, "bjd_tdb_jd2").map_err(error)?;
        let timings: Vec<Timing> = rows
            .iter()
            .enumerate()
            .map(|(i, &(kind, error_d))| Timing {
                bjd_tdb: Instant::from_jd_two_part(TimeScale::Tdb, jd1[i], jd2[i]),
                error_d,
                kind,
                source: origins.as_ref().and_then(|s| s[i].clone()),
                row: i + 1,
            })
            .collect();
        let analysis =
            analyse(&timings, &eph, &options, &|_, _| {}, &|_| {}).map_err(|e| error(format!("{ARRAYS}: {e}")))?;
        let series = analysis.series.as_ref().ok_or_else(|| error("the analysis kept no O–C series"))?;
        let mut floats_out: Vec<(String, Vec<f64>)> = vec![
            ("cycle".into(), series.cycle.clone()),
            ("error_d".into(), series.error_d.clone()),
            ("observed_minus_computed_d".into(), series.oc_d.clone()),
        ];
        for f in &analysis.fits {
            let name = f.kind.name().replace(['+', '-'], "_");
            let model: Vec<f64> = (0..series.len()).map(|i| f.model_oc_d(series.cycle[i], series.time_d[i])).collect();
            let sigma: Vec<f64> =
                (0..series.len()).map(|i| f.model_sigma_d(series.cycle[i], series.time_d[i])).collect();
            let resid: Vec<f64> = series.oc_d.iter().zip(&model).map(|(o, m)| o - m).collect();
            floats_out.push((format!("model_{name}_d"), model));
            floats_out.push((format!("model_sigma_{name}_d"), sigma));
            floats_out.push((format!("residual_{name}_d"), resid));
        }
        let rows: Vec<i64> = series.row.iter().map(|&r| r as i64).collect();
        let bjd: Vec<String> = series
            .time_d
            .iter()
            .map(|&t| format_time(&epoch.add_seconds(t * SECONDS_PER_DAY), TimeFormat::Jd))
            .collect();
        let kind: Vec<String> = series.kind.iter().map(|k| k.name().to_string()).collect();
        let source: Vec<String> = series.source_index.iter().map(|&s| series.sources[s].clone()).collect();
        Ok((analysis, (rows, bjd, kind, source, floats_out)))
    })?;
    let (rows, bjd, kind, source, floats_out) = columns;
    let d = PyDict::new(py);
    d.set_item("row", rows.into_pyarray(py))?;
    d.set_item("bjd_tdb", bjd)?;
    let mut floats_out = floats_out.into_iter();
    if let Some((name, v)) = floats_out.next() {
        d.set_item(name, v.into_pyarray(py))?;
    }
    d.set_item("kind", kind)?;
    d.set_item("source", source)?;
    for (name, v) in floats_out {
        d.set_item(name, v.into_pyarray(py))?;
    }
    Ok((to_json(&analysis)?, d))
}

/// Phase-connected fit of a pulsar timing model (TOML text, `model_name` for messages) to
/// arrival times with 1σ errors in µs (library: `pulsar::timing_fit::fit_timing`). Returns
/// (solution JSON, residual columns, the fitted model as TOML).
#[pyfunction]
#[pyo3(signature = (times, error_us, model_toml, model_name, max_iterations, place, clock=None, freq_mhz=None, instrument=None, clocks=None, site_names=None))]
pub fn fit_pulsar_timing<'py>(
    py: Python<'py>,
    times: Vec<Option<String>>,
    error_us: PyArrayLike1<'py, f64, AllowTypeChange>,
    model_toml: &str,
    model_name: &str,
    max_iterations: usize,
    place: &str,
    clock: Option<String>,
    freq_mhz: Option<PyArrayLike1<'py, f64, AllowTypeChange>>,
    instrument: Option<Vec<Option<String>>>,
    clocks: Option<Vec<Option<String>>>,
    site_names: Option<Vec<Option<String>>>,
) -> PyResult<(String, Bound<'py, PyDict>, String)> {
    use skyclock::pulsar::arrival_times::{arrival_times_from_table, attach_observer_geometry};
    use skyclock::pulsar::model::TimingModel;
    let place: Place = crate::convert::options(place, "place options")?;
    let input = TimesIn { times, clock, clocks, site_names };
    let start = TimingModel::from_toml(model_toml, model_name).map_err(error)?;
    let clock = input.clock_spec()?;
    let description = place.description()?;
    let source = place.source_unless_barycentric(clock.as_ref(), description.as_ref())?;
    let request = input.request(clock, &place, description.as_ref())?;
    let reference = place.reference()?;
    let mut extra = vec![Column::new("error_us".into(), floats(&error_us))];
    if let Some(f) = &freq_mhz {
        let v: Vec<Option<f64>> = floats(f).into_iter().map(|x| x.is_finite().then_some(x)).collect();
        extra.push(Column::new("freq_mhz".into(), v));
    }
    if let Some(i) = &instrument {
        extra.push(text_column("instrument", i));
    }
    let df = input.frame(extra)?;
    let corrector = corrector(&reference, &source);
    let (solution, toas) = py.detach(|| -> PyResult<_> {
        let (corrected, _, geometry) = correct_table_with_geometry(&df, ARRAYS, &request, &corrector).map_err(error)?;
        let mut toas = arrival_times_from_table(&corrected, ARRAYS, &start.epoch()).map_err(error)?;
        attach_observer_geometry(&mut toas, &geometry);
        let solution = skyclock::pulsar::timing_fit::fit_timing(&start, &toas, max_iterations, &source)
            .map_err(|e| error(format!("fitting {model_name} to {ARRAYS}: {e}")))?;
        Ok((solution, toas))
    })?;
    let fit = &solution.fit;
    let d = crate::convert::table_to_python(py, &solution.residuals_table(&toas).map_err(error)?)?;
    let toml = fit.model.to_toml().map_err(error)?;
    Ok((to_json(&solution)?, d, toml))
}
