//! Mistakes in a timing-model file, reported by key: the TOML parser's error (an unknown
//! key, a value of the wrong type, a missing required key, a syntax error) and a value out
//! of its physical range are turned into one line naming the file, the line of the file
//! and the dotted key (`orbit.eccentricity`), with what would be accepted — never left for
//! the fit to stumble over later ("phase connection lost").
//!
//! Lines are 1-based; a key inside a `[table]` is written `table.key`. Common practice (the
//! form of a compiler's diagnostics).

/// Where in a model file a mistake was found, and what it was.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ModelFileMistake {
    /// 1-based line of the file, where known.
    pub line: Option<usize>,
    /// The dotted key (`freq_hz`, `orbit.periastron_time_s`), where known.
    pub key: Option<String>,
    /// What is wrong and what would be accepted.
    pub message: String,
}

impl ModelFileMistake {
    /// The one-line message: `FILE, line L, key 'K': message`.
    pub fn describe(&self, origin: &str) -> String {
        let mut s = origin.to_string();
        if let Some(l) = self.line {
            s.push_str(&format!(", line {l}"));
        }
        if let Some(k) = &self.key {
            s.push_str(&format!(", key '{k}'"));
        }
        format!("{s}: {}", self.message)
    }
}

/// 1-based line number of byte offset `at` in `text`.
fn line_of(text: &str, at: usize) -> usize {
    text.as_bytes()[..at.min(text.len())].iter().filter(|&&b| b == b'\n').count() + 1
}

/// The table a line belongs to: the name of the last `[table]` header at or before it
/// (`None` at the top level).
fn table_at(text: &str, line: usize) -> Option<String> {
    let mut table = None;
    for l in text.lines().take(line) {
        let t = l.trim();
        if t.starts_with('[') {
            let name = t.trim_start_matches('[').split(']').next().unwrap_or("").trim();
            table = Some(name.to_string());
        }
    }
    table
}

fn dotted(table: Option<&str>, key: &str) -> String {
    match table {
        Some(t) if !t.is_empty() => format!("{t}.{key}"),
        _ => key.to_string(),
    }
}

/// The key assigned on a `key = value` line, if it is one.
fn assigned_key(line: &str) -> Option<String> {
    let (k, _) = line.split_once('=')?;
    let k = k.trim().trim_matches('"');
    (!k.is_empty() && !k.starts_with('[') && !k.starts_with('#')).then(|| k.to_string())
}

/// The text between the first pair of backticks of a serde message (`missing field `x``).
fn quoted(message: &str) -> Option<&str> {
    let start = message.find('`')? + 1;
    let len = message[start..].find('`')?;
    Some(&message[start..start + len])
}

/// The parser's message in the words of a model file: "f64" and "i64" as the kind of number.
fn plain(message: &str) -> String {
    message
        .trim()
        .replace("expected f64", "expected a number")
        .replace("expected i64", "expected a whole number (no decimal point)")
        .replace("invalid type:", "wrong type:")
}

/// Locates a TOML parser error in `text` (the model file's text): line, dotted key and a
/// plain message. An unknown key keeps the list of the keys that are accepted.
pub fn mistake_from_toml(text: &str, error: &toml::de::Error) -> ModelFileMistake {
    let message = error.message().trim().to_string();
    let Some(span) = error.span() else {
        return ModelFileMistake { line: None, key: None, message: plain(&message) };
    };
    let line = line_of(text, span.start);
    let table = table_at(text, line);
    let this_line = text.lines().nth(line - 1).unwrap_or("");
    if let Some(rest) = message.strip_prefix("unknown field ") {
        let key = quoted(rest).unwrap_or("").to_string();
        let known = rest.split_once("expected one of ").map_or(String::new(), |(_, k)| k.replace('`', ""));
        let accepted = if known.is_empty() { String::new() } else { format!("; the keys accepted here: {known}") };
        return ModelFileMistake {
            line: Some(line),
            key: Some(dotted(table.as_deref(), &key)),
            message: format!("unknown key (a misspelling?){accepted}"),
        };
    }
    if let Some(rest) = message.strip_prefix("missing field ") {
        let key = quoted(rest).unwrap_or("").to_string();
        // The parser points at the table missing the key: its header, or line 1 for the top.
        let header = this_line.trim_start().starts_with('[');
        let table = if header { table } else { None };
        return ModelFileMistake {
            line: header.then_some(line),
            key: Some(dotted(table.as_deref(), &key)),
            message: format!(
                "missing; this key is required{}",
                if header { " in this table" } else { " at the top of the file" }
            ),
        };
    }
    let key = assigned_key(this_line).map(|k| dotted(table.as_deref(), &k));
    ModelFileMistake { line: Some(line), key, message: plain(&message) }
}

/// 1-based line on which the dotted `key` (`freq_hz`, `orbit.eccentricity`) is assigned in
/// `text`, if it is.
pub fn line_of_key(text: &str, key: &str) -> Option<usize> {
    let (table, name) = match key.rsplit_once('.') {
        Some((t, n)) => (Some(t), n),
        None => (None, key),
    };
    let mut current: Option<String> = None;
    for (i, l) in text.lines().enumerate() {
        let t = l.trim();
        if t.starts_with('[') {
            current = Some(t.trim_start_matches('[').split(']').next().unwrap_or("").trim().to_string());
            continue;
        }
        if current.as_deref() == table && assigned_key(t).as_deref() == Some(name) {
            return Some(i + 1);
        }
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;

    fn mistake(text: &str) -> ModelFileMistake {
        #[derive(Debug, serde::Deserialize)]
        #[serde(deny_unknown_fields)]
        #[allow(dead_code)]
        struct Orbit {
            period_d: f64,
        }
        #[derive(Debug, serde::Deserialize)]
        #[serde(deny_unknown_fields)]
        #[allow(dead_code)]
        struct Doc {
            freq_hz: f64,
            day: i64,
            orbit: Option<Orbit>,
        }
        let e = toml::from_str::<Doc>(text).unwrap_err();
        mistake_from_toml(text, &e)
    }

    #[test]
    fn parser_errors_name_line_and_key() {
        let m = mistake("freq_hz = 1.0\nday = 3\nspin = 2\n");
        assert_eq!((m.line, m.key.as_deref()), (Some(3), Some("spin")), "{m:?}");
        assert!(m.message.contains("unknown key") && m.message.contains("freq_hz, day, orbit"), "{m:?}");
        let m = mistake("freq_hz = \"fast\"\nday = 3\n");
        assert_eq!((m.line, m.key.as_deref()), (Some(1), Some("freq_hz")), "{m:?}");
        assert!(m.message.contains("expected a number"), "{m:?}");
        let m = mistake("freq_hz = 1.0\nday = 3.5\n");
        assert_eq!((m.line, m.key.as_deref()), (Some(2), Some("day")), "{m:?}");
        assert!(m.message.contains("whole number"), "{m:?}");
        let m = mistake("day = 3\n");
        assert_eq!((m.line, m.key.as_deref()), (None, Some("freq_hz")), "{m:?}");
        assert!(m.message.contains("required"), "{m:?}");
        let m = mistake("freq_hz = 1.0\nday = 3\n\n[orbit]\nperiod = 2.0\n");
        assert_eq!((m.line, m.key.as_deref()), (Some(5), Some("orbit.period")), "{m:?}");
        let m = mistake("freq_hz = 1.0\nday = 3\n\n[orbit]\n");
        assert_eq!((m.line, m.key.as_deref()), (Some(4), Some("orbit.period_d")), "{m:?}");
        let m = mistake("freq_hz = 1.0.2\nday = 3\n");
        assert_eq!((m.line, m.key.as_deref()), (Some(1), Some("freq_hz")), "{m:?}");
        assert_eq!(
            m.describe("m.toml").split(':').next().unwrap(),
            "m.toml, line 1, key 'freq_hz'",
            "{}",
            m.describe("m.toml")
        );
    }

    #[test]
    fn keys_are_found_in_their_table() {
        let text = "freq_hz = 1\n# e = 3\n[orbit]\neccentricity = 0.5\n";
        assert_eq!(line_of_key(text, "freq_hz"), Some(1));
        assert_eq!(line_of_key(text, "orbit.eccentricity"), Some(4));
        assert_eq!(line_of_key(text, "eccentricity"), None);
        assert_eq!(line_of_key(text, "orbit.freq_hz"), None);
    }
}
