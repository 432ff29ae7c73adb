//! Typed results of the event-stream correction and of time-scale conversion: what
//! `barycentre-events --json` and `convert-time --json` write.

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use super::events::EventStreamSummary;
use super::reference::ReferenceNames;
use crate::time::{Instant, ScaleConverter, TimeError, TimeFormat, TimeScale, format_time};

/// Result of a streamed event-file correction.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BarycentreEventsResult {
    /// Name of the source.
    pub source: String,
    /// Events corrected and the range of the correction (s).
    #[serde(flatten)]
    pub events: EventStreamSummary,
    /// Time zero of the event times, as given, with its scale.
    pub time_zero: String,
    /// Spacing of the interpolation nodes, s.
    pub node_spacing_s: f64,
    /// Reference data used.
    #[serde(flatten)]
    pub reference: ReferenceNames,
}

/// One time of `convert-time`, written on every scale.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ConvertedTime {
    /// The time as given.
    pub input: String,
    /// Scale name (`utc`, `tai`, `tt`, `tdb`, `tcb`, `gps`) → the time written in the output format.
    pub scales: BTreeMap<String, String>,
}

/// Result of `convert-time`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ConvertTimeResult {
    /// Scale of the given times.
    pub from_scale: String,
    /// Format the converted times are written in (`jd`, `mjd`, `reduced-jd`, `iso`).
    pub to_format: String,
    /// Whether TDB includes a site's topocentric term (false: geocentric TDB).
    pub topocentric_tdb: bool,
    /// One entry per time, in the order given.
    pub times: Vec<ConvertedTime>,
    /// Leap-second table used.
    pub leap_seconds: String,
    /// Cautions (UTC beyond the leap-second table…).
    pub notes: Vec<String>,
}

/// Converts each `(text as given, instant)` to every scale of `targets`, written in `to_format`.
pub fn convert_times(
    instants: &[(String, Instant)],
    converter: &ScaleConverter,
    targets: &[TimeScale],
    to_format: TimeFormat,
    topocentric_tdb: bool,
) -> Result<ConvertTimeResult, TimeError> {
    let mut times = Vec::with_capacity(instants.len());
    let mut notes = Vec::new();
    let from_scale = instants.first().map(|(_, t)| t.scale().name().to_string()).unwrap_or_default();
    for (text, t) in instants {
        let mut scales = BTreeMap::new();
        for target in targets {
            let converted = converter.convert(t, *target)?;
            if converted.scale() == TimeScale::Utc
                && converter.leap_seconds().days_beyond_horizon(converted.mjd_day()).is_some()
            {
                notes.push(format!(
                    "warning: {text} is beyond the leap-second table ({}); UTC may be off by 1 s",
                    converter.leap_seconds().source()
                ));
            }
            scales.insert(target.name().to_string(), format_time(&converted, to_format));
        }
        times.push(ConvertedTime { input: text.clone(), scales });
    }
    Ok(ConvertTimeResult {
        from_scale,
        to_format: to_format.name().to_string(),
        topocentric_tdb,
        times,
        leap_seconds: converter.leap_seconds().source().to_string(),
        notes,
    })
}
