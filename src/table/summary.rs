//! The JSON summary every stage's result is written as: the typed result of a library entry
//! point, flattened beside a schema version and the provenance of the run. A command's
//! `--json` output and its summary file are exactly this serialisation; `docs/json-output.md`
//! documents each result type.

use serde::{Deserialize, Serialize};

use super::Provenance;

/// Version of the JSON layout of every result type. Raised whenever a field is renamed,
/// removed or changes meaning (adding a field does not raise it).
pub const SCHEMA_VERSION: u32 = 1;

/// A typed result with its schema version and provenance.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Summary<T> {
    /// [`SCHEMA_VERSION`] of the program that wrote it.
    pub schema_version: u32,
    /// Tool, version, command line and reference data of the run.
    pub provenance: Provenance,
    /// Files read, as given.
    pub inputs: Vec<String>,
    /// Files written, as given.
    pub outputs: Vec<String>,
    /// The stage's typed result; its fields sit at the top level of the JSON object.
    #[serde(flatten)]
    pub result: T,
}

impl<T: Serialize> Summary<T> {
    /// A summary of `result` at the current [`SCHEMA_VERSION`].
    pub fn new(result: T, provenance: Provenance, inputs: Vec<String>, outputs: Vec<String>) -> Summary<T> {
        Summary { schema_version: SCHEMA_VERSION, provenance, inputs, outputs, result }
    }

    /// Pretty JSON text. Non-finite numbers are written as `null` (JSON has no NaN).
    pub fn to_json(&self) -> Result<String, serde_json::Error> {
        serde_json::to_string_pretty(self)
    }
}

/// Serde helpers for numbers that may be NaN: written as `null` (JSON has no NaN), read
/// back from `null` as NaN, so a result type round-trips through its JSON. Use with
/// `#[serde(with = "crate::table::summary::nan_as_null")]`.
pub mod nan_as_null {
    use serde::{Deserialize, Deserializer, Serializer};

    /// Writes a finite number as itself and NaN or ±∞ as `null`.
    pub fn serialize<S: Serializer>(value: &f64, s: S) -> Result<S::Ok, S::Error> {
        if value.is_finite() { s.serialize_f64(*value) } else { s.serialize_none() }
    }

    /// Reads a number, or `null` as NaN.
    pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<f64, D::Error> {
        Ok(Option::<f64>::deserialize(d)?.unwrap_or(f64::NAN))
    }
}

/// [`nan_as_null`] for a list of numbers.
pub mod nan_as_null_vec {
    use serde::{Deserialize, Deserializer, Serializer, ser::SerializeSeq};

    /// Writes each number, NaN or ±∞ as `null`.
    pub fn serialize<S: Serializer>(values: &[f64], s: S) -> Result<S::Ok, S::Error> {
        let mut seq = s.serialize_seq(Some(values.len()))?;
        for v in values {
            if v.is_finite() {
                seq.serialize_element(v)?;
            } else {
                seq.serialize_element(&Option::<f64>::None)?;
            }
        }
        seq.end()
    }

    /// Reads numbers, `null` as NaN.
    pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<Vec<f64>, D::Error> {
        Ok(Vec::<Option<f64>>::deserialize(d)?.into_iter().map(|v| v.unwrap_or(f64::NAN)).collect())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
    struct Toy {
        period_d: f64,
        peaks: Vec<u32>,
    }

    #[test]
    fn round_trips_with_the_result_at_the_top_level() {
        let s =
            Summary::new(Toy { period_d: 0.25, peaks: vec![1, 2] }, Provenance::new("x"), vec!["a.csv".into()], vec![]);
        let text = s.to_json().unwrap();
        let value: serde_json::Value = serde_json::from_str(&text).unwrap();
        assert_eq!(value["period_d"], 0.25);
        assert_eq!(value["schema_version"], SCHEMA_VERSION);
        let back: Summary<Toy> = serde_json::from_str(&text).unwrap();
        assert_eq!(back, s);
    }

    #[derive(Debug, Serialize, Deserialize)]
    struct MaybeNumbers {
        #[serde(with = "nan_as_null")]
        one: f64,
        #[serde(with = "nan_as_null_vec")]
        many: Vec<f64>,
    }

    #[test]
    fn not_a_number_travels_as_null_and_comes_back() {
        let text = serde_json::to_string(&MaybeNumbers { one: f64::NAN, many: vec![1.5, f64::INFINITY] }).unwrap();
        assert_eq!(text, r#"{"one":null,"many":[1.5,null]}"#);
        let back: MaybeNumbers = serde_json::from_str(&text).unwrap();
        assert!(back.one.is_nan() && back.many[0] == 1.5 && back.many[1].is_nan());
    }
}
