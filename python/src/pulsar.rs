//! Bindings of the photon-event stages of pulsar timing: the Z²ₙ pulsation search over
//! frequency and its derivative (`pulsar::search::search_pulsations`) and the pulse profile
//! with its template (`pulsar::profile::pulse_profile`). Events are carried to BJD_TDB as
//! the command line carries an event table.

use numpy::{AllowTypeChange, IntoPyArray, PyArrayLike1};
use polars::prelude::Column;
use pyo3::prelude::*;
use pyo3::types::PyDict;
use skyclock::arrival::DelayOptions;
use skyclock::arrival::table::{ObserverSpec, TableRequest, correct_table};
use skyclock::constants::SECONDS_PER_DAY;
use skyclock::pulsar::model::TimingModel;
use skyclock::pulsar::profile::{ProfileRequest, check_weights, pulse_profile};
use skyclock::pulsar::search::{PulsationSearchRequest, search_pulsations};
use skyclock::table::float_column as read_floats;
use skyclock::time::{Instant, TimeScale};

use crate::convert::{ARRAYS, check_length, error, floats, table, text_column, to_json};
use crate::place::{Place, clock};

/// Event times carried to the barycentre: the BJD_TDB instants and the weights.
fn barycentric_events(
    times: &[Option<String>],
    weights: Option<Vec<f64>>,
    clock_label: &str,
    place: &Place,
    one_site_only: bool,
) -> PyResult<(Vec<Instant>, Option<Vec<f64>>)> {
    let clock_spec = clock(clock_label)?;
    let description = place.description()?;
    let source = place.source_unless_barycentric(Some(&clock_spec), description.as_ref())?;
    let observer = if one_site_only {
        match place.single_site(description.as_ref())? {
            Some(s) => ObserverSpec::Site(s),
            None => ObserverSpec::Geocentre,
        }
    } else {
        place.observer_spec(description.as_ref(), None)?
    };
    let reference = place.reference()?;
    let corrector = reference.corrector(source, DelayOptions::default());
    let mut columns = vec![text_column("times", times)];
    if let Some(w) = &weights {
        check_length("weights", w.len(), times.len())?;
        columns.push(Column::new("weights".into(), w.clone()));
    }
    let df = table(columns)?;
    let request = TableRequest { time_column: "times".into(), clock: Some(clock_spec), clock_column: None, observer };
    let (corrected, _) = correct_table(&df, ARRAYS, &request, &corrector).map_err(error)?;
    let jd1 = read_floats(&corrected, ARRAYS, "bjd_tdb_jd1").map_err(error)?;
    let jd2 = read_floats(&corrected, ARRAYS, "bjd_tdb_jd2").map_err(error)?;
    let instants = jd1.iter().zip(&jd2).map(|(a, b)| Instant::from_jd_two_part(TimeScale::Tdb, *a, *b)).collect();
    let weights = match weights {
        Some(_) => Some(read_floats(&corrected, ARRAYS, "weights").map_err(error)?),
        None => None,
    };
    Ok((instants, weights))
}

/// Options of the pulsation search.
#[derive(Debug, serde::Deserialize)]
#[serde(deny_unknown_fields)]
struct SearchKeywords {
    min_freq_hz: f64,
    max_freq_hz: f64,
    min_freq_deriv_hz_per_s: f64,
    max_freq_deriv_hz_per_s: f64,
    oversampling: f64,
    harmonics: usize,
}

/// Z²ₙ search of photon events over frequency and its derivative with the trials-corrected
/// false alarm of the best trial (library: `pulsar::search::search_pulsations`). Returns
/// (result JSON, grid columns `freq_hz`, `freq_deriv_hz_per_s`, `z2`).
#[pyfunction]
#[pyo3(signature = (times, options, place, clock, weights=None))]
pub fn search_pulsations_in_events<'py>(
    py: Python<'py>,
    times: Vec<Option<String>>,
    options: &str,
    place: &str,
    clock: &str,
    weights: Option<PyArrayLike1<'py, f64, AllowTypeChange>>,
) -> PyResult<(String, Bound<'py, PyDict>)> {
    let o: SearchKeywords = crate::convert::options(options, "pulsation search options")?;
    let place: Place = crate::convert::options(place, "place options")?;
    let weights = weights.as_ref().map(floats);
    let search = PulsationSearchRequest {
        min_freq_hz: o.min_freq_hz,
        max_freq_hz: o.max_freq_hz,
        min_freq_deriv_hz_per_s: o.min_freq_deriv_hz_per_s,
        max_freq_deriv_hz_per_s: o.max_freq_deriv_hz_per_s,
        oversampling: o.oversampling,
        harmonics: o.harmonics,
    };
    let (result, columns) = py.detach(|| -> PyResult<_> {
        let (instants, weights) = barycentric_events(&times, weights, clock, &place, true)?;
        if instants.is_empty() {
            return Err(error(format!("{ARRAYS}: the event table has no rows")));
        }
        let (result, spectrum) = search_pulsations(&instants, weights.as_deref(), &search).map_err(|e| {
            if e.to_string().contains("weight") {
                error(format!("{ARRAYS}, column 'weights': {e}"))
            } else {
                error(format!("{ARRAYS}: {e}"))
            }
        })?;
        let grid = &result.grid;
        let (mut f, mut fd, mut z2) = (Vec::new(), Vec::new(), Vec::new());
        for (d, deriv) in grid.freq_derivs_hz_per_s.iter().enumerate() {
            for k in 0..grid.freq_count {
                f.push(grid.freq_hz(k));
                fd.push(*deriv);
                z2.push(spectrum.z2(d, k));
            }
        }
        Ok((result, (f, fd, z2)))
    })?;
    let (f, fd, z2) = columns;
    let d = PyDict::new(py);
    d.set_item("freq_hz", f.into_pyarray(py))?;
    d.set_item("freq_deriv_hz_per_s", fd.into_pyarray(py))?;
    d.set_item("z2", z2.into_pyarray(py))?;
    Ok((to_json(&result)?, d))
}

/// Options of the pulse profile.
#[derive(Debug, serde::Deserialize)]
#[serde(deny_unknown_fields)]
struct ProfileKeywords {
    bins: usize,
    harmonics: usize,
    gaussian_components: Option<usize>,
    model_validity_days: f64,
    instrument: String,
}

/// Folds photon events with a timing model (TOML text, `model_name` for messages) into a
/// binned profile with errors, a Fourier or Gaussian-component template and the H and
/// Z²ₙ tests (library: `pulsar::profile::pulse_profile`). Returns the result JSON.
#[pyfunction]
#[pyo3(signature = (times, model_toml, model_name, options, place, clock, weights=None))]
pub fn fold_pulse_profile<'py>(
    py: Python<'py>,
    times: Vec<Option<String>>,
    model_toml: &str,
    model_name: &str,
    options: &str,
    place: &str,
    clock: &str,
    weights: Option<PyArrayLike1<'py, f64, AllowTypeChange>>,
) -> PyResult<String> {
    let o: ProfileKeywords = crate::convert::options(options, "profile options")?;
    let place: Place = crate::convert::options(place, "place options")?;
    if !(o.model_validity_days > 0.0 && o.model_validity_days.is_finite()) {
        return Err(error(format!("model_validity_days {}: must be > 0", o.model_validity_days)));
    }
    let model = TimingModel::from_toml(model_toml, model_name).map_err(error)?;
    let request = ProfileRequest {
        bins: o.bins,
        harmonics: o.harmonics,
        gaussian_components: o.gaussian_components,
        valid_for_s: o.model_validity_days * SECONDS_PER_DAY,
        instrument: o.instrument.clone(),
    };
    let weights = weights.as_ref().map(floats);
    let result = py.detach(|| -> PyResult<_> {
        let (instants, weights) = barycentric_events(&times, weights, clock, &place, false)?;
        if instants.is_empty() {
            return Err(error(format!("{ARRAYS}: the event table has no rows")));
        }
        let epoch = model.epoch();
        let times_s: Vec<f64> = instants.iter().map(|t| t.seconds_since(&epoch)).collect();
        if let Some(w) = &weights {
            check_weights(times_s.len(), Some(w)).map_err(|e| error(format!("{ARRAYS}, column 'weights': {e}")))?;
        }
        pulse_profile(&model, &times_s, weights.as_deref(), &request)
            .map_err(|e| error(format!("{ARRAYS}, column 'times': {e}")))
    })?;
    to_json(&result)
}

/// Options of the event arrival times.
#[derive(Debug, serde::Deserialize)]
#[serde(deny_unknown_fields)]
struct ArrivalKeywords {
    segment_duration_s: Option<f64>,
    segment_photons: Option<usize>,
    min_photons: usize,
    model_validity_days: f64,
    instrument: String,
}

/// Arrival times from photon events: the events cut into segments, each cross-correlated
/// with the template (the JSON of a pulse template, as `pulse_profile` returns it) (library:
/// `pulsar::event_toas::event_arrival_times`). Returns the result JSON.
#[pyfunction]
#[pyo3(signature = (times, model_toml, model_name, template_json, options, place, clock, weights=None))]
pub fn arrival_times_from_events<'py>(
    py: Python<'py>,
    times: Vec<Option<String>>,
    model_toml: &str,
    model_name: &str,
    template_json: &str,
    options: &str,
    place: &str,
    clock: &str,
    weights: Option<PyArrayLike1<'py, f64, AllowTypeChange>>,
) -> PyResult<String> {
    use skyclock::pulsar::event_toas::{Segmentation, event_arrival_times};
    use skyclock::pulsar::profile::PulseTemplate;
    let o: ArrivalKeywords = crate::convert::options(options, "arrival-time options")?;
    let place: Place = crate::convert::options(place, "place options")?;
    let segmentation = match (o.segment_duration_s, o.segment_photons) {
        (Some(seconds), None) => Segmentation::Duration { seconds },
        (None, Some(count)) => Segmentation::Photons { count },
        _ => {
            return Err(error(
                "say how to cut the events: give exactly one of segment_duration_s=SECONDS or segment_photons=COUNT",
            ));
        }
    };
    if !(o.model_validity_days > 0.0 && o.model_validity_days.is_finite()) {
        return Err(error(format!("model_validity_days {}: must be > 0", o.model_validity_days)));
    }
    let model = TimingModel::from_toml(model_toml, model_name).map_err(error)?;
    let template: PulseTemplate =
        serde_json::from_str(template_json).map_err(|e| error(format!("template: not a pulse template: {e}")))?;
    template.validate().map_err(|e| error(format!("template: {e}")))?;
    let weights = weights.as_ref().map(floats);
    let result = py.detach(|| -> PyResult<_> {
        let (instants, weights) = barycentric_events(&times, weights, clock, &place, false)?;
        if instants.is_empty() {
            return Err(error(format!("{ARRAYS}: the event table has no rows")));
        }
        if let Some(w) = &weights
            && let Some((i, v)) = w.iter().enumerate().find(|(_, v)| !(0.0..=1.0).contains(*v))
        {
            return Err(error(format!(
                "{ARRAYS}, row {}, column 'weights': weight {v}; weights are probabilities in [0, 1]",
                i + 1
            )));
        }
        let epoch = model.epoch();
        let times_s: Vec<f64> = instants.iter().map(|t| t.seconds_since(&epoch)).collect();
        event_arrival_times(
            &model,
            &times_s,
            weights.as_deref(),
            &template,
            segmentation,
            o.min_photons,
            o.model_validity_days * SECONDS_PER_DAY,
            &o.instrument,
        )
        .map_err(|e| error(format!("{ARRAYS}, column 'times': {e}")))
    })?;
    to_json(&result)
}
