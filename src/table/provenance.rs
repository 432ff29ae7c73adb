//! Provenance carried by every output: tool and version, the command, the ephemeris, the
//! leap-second table, Earth orientation, and anything else a stage wants to record.

use std::collections::BTreeMap;

/// What produced an output.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Provenance {
    /// Always "skyclock".
    pub tool: String,
    /// Crate version.
    pub version: String,
    /// The command line that produced the output.
    pub command: String,
    /// Further entries: "ephemeris", "leap_seconds", "earth_orientation", inputs, options.
    pub entries: BTreeMap<String, String>,
}

impl Provenance {
    /// Provenance for `command` with this build's version.
    pub fn new(command: &str) -> Provenance {
        Provenance {
            tool: "skyclock".to_string(),
            version: env!("CARGO_PKG_VERSION").to_string(),
            command: command.to_string(),
            entries: BTreeMap::new(),
        }
    }

    /// Adds or replaces an entry.
    pub fn with(mut self, key: &str, value: impl Into<String>) -> Provenance {
        self.entries.insert(key.to_string(), value.into());
        self
    }

    /// Pretty JSON text.
    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).unwrap_or_else(|_| "{}".to_string())
    }
}
