//! The `skyclock._native` extension module: thin bindings of the skyclock library for
//! Python. Every function here converts its inputs (numpy arrays, lists of text, option
//! documents written as JSON by the Python wrapper in `python/skyclock/`), calls the same
//! library entry point the command line calls, releases the GIL while the library works,
//! and hands back the typed result as its JSON form plus columns (numpy arrays or lists of
//! text) for the tables. No science is done here.

// Style lints switched off for the whole crate, as in the library (src/lib.rs):
// - `too_many_arguments`: a binding takes the arrays and options its command takes.
// - `neg_cmp_op_on_partial_ord`, `nonminimal_bool`: a refusal is written as the negation
//   of what is accepted, `!(x.is_finite() && x > 0.0)`, which also refuses NaN.
#![allow(clippy::too_many_arguments, clippy::neg_cmp_op_on_partial_ord, clippy::nonminimal_bool)]

mod arrival;
mod convert;
mod events;
mod place;
mod pulsar;
mod search;
mod survey;
mod timing;

use pyo3::prelude::*;

pyo3::create_exception!(
    _native,
    SkyclockError,
    pyo3::exceptions::PyValueError,
    "An error reported by the skyclock library (bad input, a time outside the ephemeris, a fit that failed, …); the message is the library's own."
);

/// The Python module `skyclock._native`.
#[pymodule]
fn _native(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add("SkyclockError", m.py().get_type::<SkyclockError>())?;
    m.add("__version__", env!("CARGO_PKG_VERSION"))?;
    m.add("SUN_CAUTION_DEG", skyclock::predict::SUN_CAUTION_DEG)?;
    m.add_function(wrap_pyfunction!(convert::times_as_text, m)?)?;
    m.add_function(wrap_pyfunction!(arrival::barycentre, m)?)?;
    m.add_function(wrap_pyfunction!(arrival::convert_times, m)?)?;
    m.add_function(wrap_pyfunction!(arrival::observer_times, m)?)?;
    m.add_function(wrap_pyfunction!(search::search_periods, m)?)?;
    m.add_function(wrap_pyfunction!(search::fold_light_curve, m)?)?;
    m.add_function(wrap_pyfunction!(search::extract_frequencies, m)?)?;
    m.add_function(wrap_pyfunction!(survey::survey_batch, m)?)?;
    m.add_function(wrap_pyfunction!(survey::cascade_flags_in_field, m)?)?;
    m.add_function(wrap_pyfunction!(events::time_events, m)?)?;
    m.add_function(wrap_pyfunction!(events::predict_events, m)?)?;
    m.add_function(wrap_pyfunction!(timing::analyse_timings, m)?)?;
    m.add_function(wrap_pyfunction!(timing::fit_pulsar_timing, m)?)?;
    m.add_function(wrap_pyfunction!(pulsar::search_pulsations_in_events, m)?)?;
    m.add_function(wrap_pyfunction!(pulsar::fold_pulse_profile, m)?)?;
    m.add_function(wrap_pyfunction!(pulsar::arrival_times_from_events, m)?)?;
    Ok(())
}
