//! The layout of a delimited text table, checked before its cells are read, so that every
//! reader of CSV/TSV text (the whole-table reader, the streaming survey and event-list
//! readers) accepts and refuses the same files with the same messages:
//!
//! - a UTF-8 byte-order mark before the header and CRLF line ends are accepted;
//! - a header separated by `;` (or by `,` in a `.tsv` file) is refused with a message that
//!   names the separator the file type uses;
//! - a data row with more or fewer fields than the header names columns is refused with its
//!   row (1-based data row, not counting blank and `#` comment lines) and the column.
//!
//! Fields may be quoted with `"` (a doubled `""` inside a quoted field is a quote). Common
//! practice: RFC 4180 (CSV), with `#` comment lines as the readers here allow.

use std::io::BufRead;
use std::path::Path;

use super::error::TableError;

/// The UTF-8 byte-order mark some spreadsheet programs write before the header.
pub const BYTE_ORDER_MARK: char = '\u{feff}';

/// `line` without a leading byte-order mark and without a trailing `\r` or `\n`.
pub fn clean_line(line: &str) -> &str {
    line.strip_prefix(BYTE_ORDER_MARK).unwrap_or(line).trim_end_matches(['\n', '\r'])
}

/// Number of fields of one line with separator `sep` (quote-aware).
pub fn count_fields(line: &str, sep: char) -> usize {
    if !line.contains('"') {
        return line.split(sep).count();
    }
    let mut n = 1;
    let mut quoted = false;
    for c in line.chars() {
        if c == '"' {
            quoted = !quoted;
        } else if c == sep && !quoted {
            n += 1;
        }
    }
    n
}

/// A quoting mistake in one record, found by [`split_record`].
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct QuoteMistake {
    /// 0-based index of the field where it happens.
    pub field: usize,
    /// What is wrong, and how to write it instead.
    pub message: &'static str,
}

/// The fields of one record (quotes removed, `""` inside a quoted field read as `"`), with
/// RFC 4180 quoting: a `"` opens a quoted field only as the field's first character, and a
/// closing `"` must be followed by the separator or the end of the record. Anything else is
/// a [`QuoteMistake`] (the CSV parser would read such a field differently from this check,
/// so it is refused here, with its row and column, before the parser sees it).
pub fn split_record(record: &str, sep: char) -> Result<Vec<String>, QuoteMistake> {
    #[derive(PartialEq)]
    enum State {
        FieldStart,
        Unquoted,
        Quoted,
        AfterQuote,
    }
    let mut fields = Vec::new();
    let mut field = String::new();
    let mut state = State::FieldStart;
    let mistake = |field: usize, message: &'static str| QuoteMistake { field, message };
    for c in record.chars() {
        state = match (state, c) {
            (State::Quoted, '"') => State::AfterQuote,
            (State::Quoted, c) => {
                field.push(c);
                State::Quoted
            }
            (State::AfterQuote, '"') => {
                field.push('"');
                State::Quoted
            }
            (State::FieldStart, '"') => State::Quoted,
            (_, c) if c == sep => {
                fields.push(std::mem::take(&mut field));
                State::FieldStart
            }
            (State::AfterQuote, _) => {
                return Err(mistake(
                    fields.len(),
                    "text after the closing quote of a quoted field; a quoted field ends at the separator",
                ));
            }
            (_, '"') => {
                return Err(mistake(
                    fields.len(),
                    "a '\"' inside an unquoted field; quote the whole field (\"...\", with \"\" for a quote inside it) or remove the quote",
                ));
            }
            (_, c) => {
                field.push(c);
                State::Unquoted
            }
        };
    }
    if state == State::Quoted {
        return Err(mistake(fields.len(), "a quoted field is never closed (a '\"' is missing)"));
    }
    fields.push(field);
    Ok(fields)
}

fn separator_name(sep: char) -> &'static str {
    match sep {
        ',' => "',' (comma)",
        '\t' => "a tab",
        ';' => "';' (semicolon)",
        _ => "another character",
    }
}

/// Refuses a header written with another separator than the file type's (`sep`): a `.csv`
/// header holding `;` or tabs but no comma, a `.tsv` header holding `,` or `;` but no tab.
pub fn check_header(header: &str, sep: char, file: &str) -> Result<(), TableError> {
    let header = clean_line(header);
    if header.contains(sep) {
        return Ok(());
    }
    let found = [';', '\t', ','].into_iter().find(|&c| c != sep && header.contains(c));
    match found {
        None => Ok(()),
        Some(other) => Err(TableError::File {
            file: file.to_string(),
            message: format!(
                "the header '{}' is separated by {}, but this file type is separated by {}; {}",
                header.chars().take(80).collect::<String>(),
                separator_name(other),
                separator_name(sep),
                if sep == ',' {
                    "write the table with commas (a .csv), or with tabs and a .tsv name"
                } else {
                    "write the table with tabs (a .tsv), or with commas and a .csv name"
                }
            ),
        }),
    }
}

/// The error for data row `row` holding `got` fields under a header of `names`.
pub fn field_count_error(file: &str, row: usize, got: usize, names: &[String]) -> TableError {
    let column = if got > names.len() {
        format!("{} (after the last column)", names.last().map(String::as_str).unwrap_or(""))
    } else {
        names.get(got).cloned().unwrap_or_default()
    };
    TableError::Cell {
        file: file.to_string(),
        row,
        column,
        message: format!(
            "the row has {got} field(s) but the header names {} columns; check the separators and quoting of this row",
            names.len()
        ),
    }
}

/// Checks a whole delimited text file: its header ([`check_header`]) and the number of
/// fields of every data row. Blank lines and lines starting with `#` are skipped, as the
/// readers skip them; a quoted field may span lines.
pub fn check_delimited_file(path: &Path, sep: char) -> Result<(), TableError> {
    let file = path.display().to_string();
    let fail = |message: String| TableError::File { file: file.clone(), message };
    let reader = std::io::BufReader::with_capacity(
        1 << 20,
        std::fs::File::open(path).map_err(|e| fail(format!("cannot open: {e}")))?,
    );
    let mut reader = reader;
    let mut names: Option<Vec<String>> = None;
    let mut row = 0usize;
    let mut pending = String::new();
    let mut bytes = Vec::new();
    loop {
        bytes.clear();
        if reader.read_until(b'\n', &mut bytes).map_err(|e| fail(format!("cannot read: {e}")))? == 0 {
            break;
        }
        if bytes.last() == Some(&b'\n') {
            bytes.pop();
        }
        let Ok(text) = std::str::from_utf8(&bytes) else {
            return Err(match names {
                None => fail("the header is not UTF-8 text; save the table as UTF-8".into()),
                Some(_) => TableError::Cell {
                    file: file.clone(),
                    row: row + 1,
                    column: String::new(),
                    message: "the row is not UTF-8 text; save the table as UTF-8".into(),
                },
            });
        };
        let text = clean_line(text);
        if pending.is_empty() && (text.trim().is_empty() || text.starts_with('#')) {
            continue;
        }
        // The common case, a data row on one line without quotes: only its number of
        // fields can be wrong (the same check as `check_record` makes of it).
        if pending.is_empty()
            && let Some(names) = &names
            && !text.contains('"')
        {
            row += 1;
            let fields = text.matches(sep).count() + 1;
            if fields != names.len() {
                return Err(field_count_error(&file, row, fields, names));
            }
            continue;
        }
        if !pending.is_empty() {
            pending.push('\n');
        }
        pending.push_str(text);
        if pending.matches('"').count() % 2 == 1 {
            continue; // a quoted field goes on on the next line
        }
        let record = std::mem::take(&mut pending);
        check_record(&record, sep, &file, &mut names, &mut row)?;
    }
    if !pending.is_empty() {
        // The file ends inside a quoted field: checked as a record, it is refused.
        check_record(&pending, sep, &file, &mut names, &mut row)?;
    }
    Ok(())
}

/// Checks one record: the header (its separator and quoting) when `names` is still unset,
/// else one data row (its quoting and its number of fields), counted in `row`.
fn check_record(
    record: &str,
    sep: char,
    file: &str,
    names: &mut Option<Vec<String>>,
    row: &mut usize,
) -> Result<(), TableError> {
    match names {
        None => {
            check_header(record, sep, file)?;
            let fields = split_record(record, sep).map_err(|m| TableError::File {
                file: file.to_string(),
                message: format!("the header, column {}: {}", m.field + 1, m.message),
            })?;
            *names = Some(fields.iter().map(|f| f.trim().to_string()).collect());
        }
        Some(names) => {
            *row += 1;
            let fields = split_record(record, sep).map_err(|m| TableError::Cell {
                file: file.to_string(),
                row: *row,
                column: names.get(m.field).cloned().unwrap_or_else(|| format!("field {}", m.field + 1)),
                message: m.message.to_string(),
            })?;
            if fields.len() != names.len() {
                return Err(field_count_error(file, *row, fields.len(), names));
            }
        }
    }
    Ok(())
}

/// The column names of a header line (trimmed, quotes removed).
pub fn split_names(header: &str, sep: char) -> Vec<String> {
    clean_line(header).split(sep).map(|s| s.trim().trim_matches('"').to_string()).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn byte_order_mark_and_crlf_are_removed() {
        assert_eq!(clean_line("\u{feff}time,mag\r\n"), "time,mag");
        assert_eq!(count_fields("a,\"b,c\",d", ','), 3);
    }

    #[test]
    fn quoting_follows_rfc_4180() {
        // Reference: RFC 4180, section 2 (rules 5-7).
        assert_eq!(split_record("a,\"b,c\",d", ',').unwrap(), ["a", "b,c", "d"]);
        assert_eq!(split_record("\"say \"\"hi\"\"\",,\"\"", ',').unwrap(), ["say \"hi\"", "", ""]);
        assert_eq!(split_record("\"two\nlines\"\tx", '\t').unwrap(), ["two\nlines", "x"]);
        assert_eq!(split_record("-3\",1", ',').unwrap_err().field, 0);
        assert_eq!(split_record("a,\"b\"c", ',').unwrap_err().field, 1);
        assert_eq!(split_record("a,\"b", ',').unwrap_err().field, 1);
    }

    /// Fuzz finding (table_text, base64 `77u/LWknLTMiLCIxDQoyLDg2Igoi`): a BOM, a header
    /// with a quote inside an unquoted field, CRLF, and a row whose quote was counted as
    /// opening a field that ran on to a lone `"` at the end of the file. The layout check
    /// passed it, and the CSV parser then panicked on the lone quote. Now refused, naming
    /// the file, the header and the column.
    #[test]
    fn a_stray_quote_is_refused_before_the_parser_sees_it() {
        let dir = std::env::temp_dir().join(format!("skyclock-layout-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let case = |name: &str, bytes: &[u8]| {
            let p = dir.join(name);
            std::fs::write(&p, bytes).unwrap();
            check_delimited_file(&p, ',').map_err(|e| e.to_string())
        };
        let e = case("fuzz.csv", b"\xef\xbb\xbf-i'-3\",\"1\r\n2,86\"\n\"").unwrap_err();
        assert!(e.contains("fuzz.csv") && e.contains("the header, column 1") && e.contains("unquoted field"), "{e}");
        let e = case("row.csv", b"time,mag\r\n1,2\r\n2,86\"\n\"").unwrap_err();
        assert!(e.contains("row.csv") && e.contains("row 2") && e.contains("mag"), "{e}");
        let e = case("open.csv", b"time,mag\n1,\"2\n3,4\n").unwrap_err();
        assert!(e.contains("open.csv") && e.contains("row 1") && e.contains("never closed"), "{e}");
        assert!(case("good.csv", b"\xef\xbb\xbf\"time\",\"mag, V\"\r\n1,\"2\r\n\"\r\n").is_ok());
    }

    #[test]
    fn a_semicolon_header_is_refused_naming_the_separator() {
        let e = check_header("time;mag;err", ',', "lc.csv").unwrap_err().to_string();
        assert!(e.contains("lc.csv") && e.contains("';' (semicolon)") && e.contains("',' (comma)"), "{e}");
        assert!(check_header("time", ',', "lc.csv").is_ok());
        assert!(check_header("time,mag;x", ',', "lc.csv").is_ok());
        assert!(check_header("time,mag", '\t', "lc.tsv").is_err());
    }
}
