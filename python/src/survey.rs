//! Binding of the survey batch (`survey::batch::run_batch_with_arrival`): a table of many
//! light curves, handed over from pandas as text columns, searched source by source with
//! the same plan as one light curve; one row per source back, with the columns the command
//! line writes (with method `cascade`, the cascade's class and evidence columns from
//! `survey::cascade_table`).

use numpy::IntoPyArray;
use pyo3::prelude::*;
use pyo3::types::PyDict;
use skyclock::survey::batch::{
    BatchColumns, BatchOptions, ObserverArrival, ReadProgress, RowCells, RowStream, SourceArrival, SourceReport,
    alias_text, run_batch_with_arrival,
};
use skyclock::survey::cascade_table::CascadeTable;
use skyclock::table::TableError;
use skyclock::time::LeapSecondTable;

use crate::convert::{check_length, to_json};
use crate::place::{Place, clock};
use crate::search::SearchOptions;

/// Columns handed over from Python, all as text (empty cells `None`), in table order.
struct PythonRows {
    row: Vec<usize>,
    cells: [Option<Vec<Option<String>>>; 7],
    done: std::sync::Arc<std::sync::atomic::AtomicU64>,
}

impl RowStream for PythonRows {
    fn for_each_row(
        &mut self,
        visit: &mut dyn FnMut(RowCells<'_>) -> Result<(), TableError>,
    ) -> Result<(), TableError> {
        for (i, &row) in self.row.iter().enumerate() {
            let cell = |k: usize| -> Option<&str> {
                self.cells[k].as_ref().and_then(|c| c[i].as_deref()).map(str::trim).filter(|s| !s.is_empty())
            };
            visit(RowCells {
                row,
                source: cell(0),
                time: cell(1),
                value: cell(2),
                error: cell(3),
                band: cell(4),
                ra_deg: cell(5),
                dec_deg: cell(6),
            })?;
            self.done.store(i as u64 + 1, std::sync::atomic::Ordering::Relaxed);
        }
        Ok(())
    }
    fn progress(&self) -> ReadProgress {
        ReadProgress { done: self.done.clone(), total: self.row.len() as u64 }
    }
    fn peak_rows_buffered(&self) -> usize {
        self.row.len()
    }
}

/// Options of `survey_batch` besides the search plan.
#[derive(Debug, serde::Deserialize)]
#[serde(deny_unknown_fields)]
struct BatchKeywords {
    clock: String,
    refine_peaks: bool,
    batch_points: usize,
    table_name: String,
    source_column: String,
    time_column: String,
    value_column: String,
    error_column: Option<String>,
    band_column: Option<String>,
    ra_column: Option<String>,
    dec_column: Option<String>,
    false_alarm_level: f64,
}

/// Per-source columns, as the command line writes them.
#[derive(Default)]
struct Rows {
    id: Vec<String>,
    status: Vec<String>,
    message: Vec<String>,
    first_row: Vec<i64>,
    points: Vec<Option<i64>>,
    dropped: Vec<Option<i64>>,
    baseline: Vec<f64>,
    epoch: Vec<f64>,
    peaks: Vec<[Vec<f64>; 7]>,
    alias: Vec<Vec<String>>,
    /// The cascade's description per source (method `cascade`).
    found: Vec<Option<skyclock::survey::cascade::Classification>>,
}

impl Rows {
    fn add(&mut self, r: SourceReport, k: usize, first_problems: &mut Vec<String>) {
        self.id.push(r.id.clone());
        self.first_row.push(r.first_row as i64);
        self.epoch.push(if r.epoch_jd.is_finite() { r.epoch_jd } else { f64::NAN });
        let fin = |v: f64| if v.is_finite() { v } else { f64::NAN };
        match &r.outcome {
            Ok(o) => {
                self.status.push("searched".into());
                self.message.push(String::new());
                self.points.push(Some(o.n_points as i64));
                self.dropped.push(Some(o.n_dropped as i64));
                self.baseline.push(o.baseline_d);
                for j in 0..k {
                    let p = o.peaks.get(j);
                    let c = &mut self.peaks[j];
                    c[0].push(p.map_or(f64::NAN, |p| p.peak.period_d));
                    c[1].push(p.map_or(f64::NAN, |p| fin(p.peak.period_err_d)));
                    c[2].push(p.map_or(f64::NAN, |p| p.peak.power));
                    c[3].push(p.map_or(f64::NAN, |p| fin(p.fap)));
                    c[4].push(p.map_or(f64::NAN, |p| fin(p.peak.amplitude)));
                    c[5].push(p.map_or(f64::NAN, |p| p.peak.freq_per_day));
                    c[6].push(p.map_or(f64::NAN, |p| fin(p.log10_fap)));
                    self.alias[j].push(alias_text(o, j));
                }
                self.found.push(o.classification.clone());
            }
            Err(m) => {
                if first_problems.len() < 5 {
                    first_problems.push(m.clone());
                }
                self.status.push("skipped".into());
                self.message.push(m.clone());
                self.points.push(None);
                self.dropped.push(None);
                self.baseline.push(f64::NAN);
                for j in 0..k {
                    for c in self.peaks[j].iter_mut() {
                        c.push(f64::NAN);
                    }
                    self.alias[j].push(String::new());
                }
                self.found.push(None);
            }
        }
    }
}

/// Runs the survey batch over text columns (`source`, `time`, `value`, and optionally
/// `error`, `band`, `ra_deg`, `dec_deg`) whose 1-based table rows are `rows`. Returns
/// (summary JSON, per-source columns).
#[pyfunction]
#[pyo3(signature = (rows, source, time, value, options, search, place, error=None, band=None, ra_deg=None, dec_deg=None))]
pub fn survey_batch<'py>(
    py: Python<'py>,
    rows: Vec<i64>,
    source: Vec<Option<String>>,
    time: Vec<Option<String>>,
    value: Vec<Option<String>>,
    options: &str,
    search: &str,
    place: &str,
    error: Option<Vec<Option<String>>>,
    band: Option<Vec<Option<String>>>,
    ra_deg: Option<Vec<Option<String>>>,
    dec_deg: Option<Vec<Option<String>>>,
) -> PyResult<(String, Bound<'py, PyDict>)> {
    let o: BatchKeywords = crate::convert::options(options, "survey options")?;
    let s: SearchOptions = crate::convert::options(search, "search options")?;
    let place: Place = crate::convert::options(place, "place options")?;
    let n = rows.len();
    for (name, c) in [("source", Some(&source)), ("time", Some(&time)), ("value", Some(&value))].into_iter().chain([
        ("error", error.as_ref()),
        ("band", band.as_ref()),
        ("ra", ra_deg.as_ref()),
        ("dec", dec_deg.as_ref()),
    ]) {
        if let Some(c) = c {
            check_length(name, c.len(), n)?;
        }
    }
    if let Some(bad) = rows.iter().find(|r| **r < 1) {
        return Err(crate::convert::error(format!("row numbers count from 1; got {bad}")));
    }
    let clock_spec = clock(&o.clock)?;
    if !(o.false_alarm_level.is_finite() && o.false_alarm_level > 0.0 && o.false_alarm_level < 1.0) {
        return Err(crate::convert::error(format!(
            "false_alarm_level must lie between 0 and 1, got {}",
            o.false_alarm_level
        )));
    }
    let mut plan = s.plan(0)?;
    let cascade = matches!(plan.method, skyclock::survey::search::SearchMethod::Cascade(_));
    plan.refine_peaks = o.refine_peaks;
    let k = plan.peaks;
    let columns = BatchColumns {
        source: o.source_column.clone(),
        time: o.time_column.clone(),
        value: o.value_column.clone(),
        error: o.error_column.clone(),
        band: o.band_column.clone(),
        ra_deg: o.ra_column.clone(),
        dec_deg: o.dec_column.clone(),
    };
    let carry = !skyclock::survey::input::is_barycentric_tdb(&clock_spec);
    let reference = if carry { Some(place.reference()?) } else { None };
    let leap = reference.as_ref().map_or_else(LeapSecondTable::builtin, |r| r.converter.leap_seconds().clone());
    let times_note = match &reference {
        None => format!("times read as {} (already barycentric)", o.clock),
        Some(r) => format!(
            "times carried from {} to BJD_TDB per source (position from its first row) with {}",
            o.clock,
            r.ephemeris.name()
        ),
    };
    let arrival = match &reference {
        None => None,
        Some(r) => {
            let description = place.description()?;
            Some(ObserverArrival {
                ephemeris: r.ephemeris.clone(),
                converter: r.converter.clone(),
                orientation: r.orientation.clone(),
                observer: place.observer(description.as_ref())?,
            })
        }
    };
    let mut stream = PythonRows {
        row: rows.iter().map(|&r| r as usize).collect(),
        cells: [Some(source), Some(time), Some(value), error, band, ra_deg, dec_deg],
        done: Default::default(),
    };
    let options = BatchOptions { clock: clock_spec, batch_points: o.batch_points };
    let (summary, out, first_problems) = py
        .detach(|| {
            let mut out = Rows {
                alias: vec![Vec::new(); k],
                peaks: (0..k).map(|_| Default::default()).collect(),
                ..Default::default()
            };
            let mut first_problems = Vec::new();
            let mut sink = |reports: Vec<SourceReport>| -> Result<(), TableError> {
                for r in reports {
                    out.add(r, k, &mut first_problems);
                }
                Ok(())
            };
            let summary = run_batch_with_arrival(
                &mut stream,
                &o.table_name,
                &columns,
                &options,
                &plan,
                &leap,
                arrival.as_ref().map(|x| x as &dyn SourceArrival),
                &mut sink,
                &|_, _| {},
            );
            summary.map(|s| (s, out, first_problems))
        })
        .map_err(crate::convert::error)?;
    crate::convert::warn_times(py, &summary.warnings)?;
    let d = PyDict::new(py);
    d.set_item("source_id", out.id)?;
    d.set_item("status", out.status)?;
    d.set_item("message", out.message)?;
    d.set_item("first_row", out.first_row.into_pyarray(py))?;
    d.set_item("points", out.points)?;
    d.set_item("rows_dropped_nan", out.dropped)?;
    d.set_item("baseline_d", out.baseline.into_pyarray(py))?;
    d.set_item("time_reference_bjd_tdb", out.epoch.into_pyarray(py))?;
    for (j, (pc, alias)) in out.peaks.into_iter().zip(out.alias).enumerate() {
        let n = j + 1;
        let [period, period_err, power, fap, amp, freq, log10_fap] = pc;
        d.set_item(format!("period_d_{n}"), period.into_pyarray(py))?;
        d.set_item(format!("period_err_d_{n}"), period_err.into_pyarray(py))?;
        d.set_item(format!("freq_per_day_{n}"), freq.into_pyarray(py))?;
        d.set_item(format!("power_{n}"), power.into_pyarray(py))?;
        d.set_item(format!("false_alarm_probability_{n}"), fap.into_pyarray(py))?;
        d.set_item(format!("log10_false_alarm_probability_{n}"), log10_fap.into_pyarray(py))?;
        d.set_item(format!("amplitude_{n}"), amp.into_pyarray(py))?;
        d.set_item(format!("alias_note_{n}"), alias)?;
    }
    let mut class_counts = std::collections::BTreeMap::new();
    if cascade {
        let table = CascadeTable::new(&out.found, summary.sources, o.false_alarm_level);
        class_counts = table.class_counts();
        let df = table.table().map_err(crate::convert::error)?;
        for (name, value) in crate::convert::table_to_python(py, &df)?.iter() {
            d.set_item(name, value)?;
        }
    }
    let doc = serde_json::json!({
        "summary": summary,
        "times": times_note,
        "first_skipped": first_problems,
        "class_counts": class_counts,
    });
    Ok((to_json(&doc)?, d))
}

/// Class, variability flag and field false-alarm probability columns.
type FieldFlags = (Vec<Option<String>>, Vec<Option<bool>>, Vec<Option<f64>>);

/// The cascade's class, variability flag and field false-alarm probability of rows made in
/// parts of a field (one Dask partition each), carried to the whole field of `n_sources`
/// (library `survey::cascade_table::flags_in_larger_field`; exact when `n_sources` is at
/// least each part's count). `classes` and `source_false_alarm` are the rows' `class` and
/// `source_false_alarm_probability` cells (`None` for a skipped source, which stays `None`).
/// Returns (class, variable, field false-alarm probability) columns.
#[pyfunction]
pub fn cascade_flags_in_field(
    classes: Vec<Option<String>>,
    source_false_alarm: Vec<Option<f64>>,
    n_sources: usize,
    false_alarm_level: f64,
) -> PyResult<FieldFlags> {
    if source_false_alarm.len() != classes.len() {
        return Err(crate::convert::error(format!(
            "cascade_flags_in_field: {} classes but {} false-alarm probabilities; give one of each per source",
            classes.len(),
            source_false_alarm.len()
        )));
    }
    if !(false_alarm_level.is_finite() && false_alarm_level > 0.0 && false_alarm_level < 1.0) {
        return Err(crate::convert::error(format!(
            "false_alarm_level must lie between 0 and 1, got {false_alarm_level}"
        )));
    }
    let (mut class, mut variable, mut field) = (Vec::new(), Vec::new(), Vec::new());
    for (c, p) in classes.iter().zip(&source_false_alarm) {
        match c {
            None => {
                class.push(None);
                variable.push(None);
                field.push(None);
            }
            Some(c) => {
                let p = p.filter(|v| v.is_finite());
                let (c, v, f) =
                    skyclock::survey::cascade_table::flags_in_larger_field(c, p, n_sources, false_alarm_level);
                class.push(Some(c));
                variable.push(Some(v));
                field.push(f);
            }
        }
    }
    Ok((class, variable, field))
}
