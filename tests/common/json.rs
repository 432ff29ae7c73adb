//! The check that a command's `--json` output is exactly the serialisation of its library
//! result type: parse the text, deserialise it into `Summary<T>`, serialise that again and
//! compare the two JSON values. A field the type does not know, or one it renames, fails.

use serde::{Serialize, de::DeserializeOwned};
use skyclock::table::{SCHEMA_VERSION, Summary};

/// Deserialises `text` (one command's `--json` output) into `Summary<T>` and checks that
/// nothing was lost or added on the way back; returns the typed summary.
pub fn assert_summary_round_trip<T: Serialize + DeserializeOwned>(text: &str) -> Summary<T> {
    let original: serde_json::Value =
        serde_json::from_str(text).unwrap_or_else(|e| panic!("--json output is not JSON ({e}):\n{text}"));
    let typed: Summary<T> = serde_json::from_value(original.clone()).unwrap_or_else(|e| {
        panic!("--json output does not deserialise into {}: {e}\n{text}", std::any::type_name::<T>())
    });
    assert_eq!(typed.schema_version, SCHEMA_VERSION);
    let again = serde_json::to_value(&typed).unwrap();
    assert_eq!(again, original, "{} loses or adds fields on a round trip", std::any::type_name::<T>());
    typed
}
