//! Bindings of the arrival stage: a set of arrival times to BJD_TDB with every delay term
//! (`arrival::barycentre_table`), single times between scales (`arrival::convert_times`)
//! and BJD_TDB back to the clock at an observer (`arrival::observer_times`).

use pyo3::prelude::*;
use pyo3::types::PyDict;
use skyclock::arrival::table::TableRequest;
use skyclock::arrival::{CorrectionPath, DelayOptions};
use skyclock::time::{TimeFormat, TimeScale, parse_time};

use crate::convert::{ARRAYS, check_length, error, table, table_to_python, text_column, to_json};
use crate::place::{Place, clock};

/// Options of `barycentre` besides the place.
#[derive(Debug, serde::Deserialize)]
#[serde(deny_unknown_fields)]
struct BarycentreOptions {
    clock: Option<String>,
    solar_shapiro: bool,
    planet_shapiro: bool,
    exact_per_row: bool,
}

/// Corrects arrival times to BJD_TDB (library: `arrival::barycentre_table_along`; dense rows
/// interpolated between exactly corrected nodes, ≤ 1 ns, unless `exact_per_row`). `times` are
/// texts in the clock `clock` (or per row in `clocks`); `site_names` names the site of each
/// row. Returns (result JSON, table columns: the inputs and every added column).
#[pyfunction]
#[pyo3(signature = (times, options, place, clocks=None, site_names=None))]
pub fn barycentre<'py>(
    py: Python<'py>,
    times: Vec<Option<String>>,
    options: &str,
    place: &str,
    clocks: Option<Vec<Option<String>>>,
    site_names: Option<Vec<Option<String>>>,
) -> PyResult<(String, Bound<'py, PyDict>)> {
    let o: BarycentreOptions = crate::convert::options(options, "barycentre options")?;
    let place: Place = crate::convert::options(place, "place options")?;
    let n = times.len();
    let mut columns = vec![text_column("times", &times)];
    if let Some(c) = &clocks {
        check_length("clocks", c.len(), n)?;
        columns.push(text_column("clocks", c));
    }
    if let Some(s) = &site_names {
        check_length("site_names", s.len(), n)?;
        columns.push(text_column("site_names", s));
    }
    let one_clock = match (&o.clock, &clocks) {
        (Some(_), Some(_)) => return Err(error("give either clock= or clocks=, not both")),
        (None, None) => return Err(error("say how the times are written: clock='jd_utc' (for example) or clocks=")),
        (Some(label), None) => Some(clock(label)?),
        (None, Some(_)) => None,
    };
    let description = place.description()?;
    let source = place.source(description.as_ref())?;
    let observer = place.observer_spec(description.as_ref(), site_names.as_ref().map(|_| "site_names"))?;
    let reference = place.reference()?;
    let delays = DelayOptions { shapiro_sun: o.solar_shapiro, shapiro_planets: o.planet_shapiro };
    let request = TableRequest {
        time_column: "times".into(),
        clock: one_clock,
        clock_column: clocks.as_ref().map(|_| "clocks".to_string()),
        observer,
    };
    let path = if o.exact_per_row { CorrectionPath::ExactEveryRow } else { CorrectionPath::Automatic };
    let df = table(columns)?;
    let (out, run) = py
        .detach(|| skyclock::arrival::barycentre_table_along(&df, ARRAYS, &request, &reference, &source, delays, path))
        .map_err(error)?;
    Ok((to_json(&run)?, table_to_python(py, &out)?))
}

/// Options of `convert_times`.
#[derive(Debug, serde::Deserialize)]
#[serde(deny_unknown_fields)]
struct ConvertOptions {
    format: String,
    scale: String,
    to_scale: Option<String>,
    to_format: Option<String>,
}

fn time_format(text: &str) -> PyResult<TimeFormat> {
    TimeFormat::parse(text)
        .ok_or_else(|| error(format!("unknown time format '{text}'; use jd, mjd, reduced-jd or iso")))
}

fn time_scale(text: &str) -> PyResult<TimeScale> {
    TimeScale::parse(text)
        .ok_or_else(|| error(format!("unknown time scale '{text}'; use utc, tai, tt, tdb, tcb or gps")))
}

/// Converts single times between scales and formats (library: `arrival::convert_times`);
/// TDB includes the site's topocentric term when a site is given. Returns the result JSON.
#[pyfunction]
pub fn convert_times(py: Python<'_>, times: Vec<String>, options: &str, place: &str) -> PyResult<String> {
    let o: ConvertOptions = crate::convert::options(options, "conversion options")?;
    let place: Place = crate::convert::options(place, "place options")?;
    let format = time_format(&o.format)?;
    let scale = time_scale(&o.scale)?;
    let to_format = match &o.to_format {
        Some(f) => time_format(f)?,
        None => format,
    };
    let targets: Vec<TimeScale> = match &o.to_scale {
        Some(s) => vec![time_scale(s)?],
        None => TimeScale::ALL.to_vec(),
    };
    if times.is_empty() {
        return Err(error("no times given"));
    }
    let reference = place.reference()?;
    let description = place.description()?;
    let site = place.single_site(description.as_ref())?;
    let converter = reference.converter.at_site(site.as_ref().map(|s| s.dtdb_site()));
    let mut instants = Vec::with_capacity(times.len());
    for (i, text) in times.iter().enumerate() {
        let t = parse_time(text, format, scale, converter.leap_seconds())
            .map_err(|e| error(format!("{ARRAYS}, row {}, column 'times': time '{text}': {e}", i + 1)))?;
        instants.push((text.clone(), t));
    }
    let result = py
        .detach(|| skyclock::arrival::convert_times(&instants, &converter, &targets, to_format, site.is_some()))
        .map_err(error)?;
    to_json(&result)
}

/// BJD_TDB instants carried back to the clock reading (scale `to_scale`) at which the signal
/// reaches the observer (library: `arrival::observer_times`). Returns the result JSON.
#[pyfunction]
pub fn observer_times(py: Python<'_>, bjd_tdb: Vec<String>, to_scale: &str, place: &str) -> PyResult<String> {
    let place: Place = crate::convert::options(place, "place options")?;
    let scale = time_scale(to_scale)?;
    let description = place.description()?;
    let source = place.source(description.as_ref())?;
    let observer = place.observer(description.as_ref())?;
    let reference = place.reference()?;
    let instants = bjd_tdb
        .iter()
        .enumerate()
        .map(|(i, text)| {
            parse_time(text, TimeFormat::Jd, TimeScale::Tdb, reference.converter.leap_seconds())
                .map_err(|e| error(format!("{ARRAYS}, row {}, column 'bjd_tdb': BJD_TDB '{text}': {e}", i + 1)))
        })
        .collect::<PyResult<Vec<_>>>()?;
    let result = py
        .detach(|| skyclock::arrival::observer_times(&instants, &observer, scale, &reference, &source))
        .map_err(error)?;
    to_json(&result)
}
