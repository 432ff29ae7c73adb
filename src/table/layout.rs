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
    let mut names: Option<Vec<String>> = None;
    let mut row = 0usize;
    let mut pending = String::new();
    for line in reader.split(b'\n') {
        let bytes = line.map_err(|e| fail(format!("cannot read: {e}")))?;
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
        if !pending.is_empty() {
            pending.push('\n');
        }
        pending.push_str(text);
        if pending.matches('"').count() % 2 == 1 {
            continue; // a quoted field goes on on the next line
        }
        let record = std::mem::take(&mut pending);
        match &names {
            None => {
                check_header(&record, sep, &file)?;
                names = Some(split_names(&record, sep));
            }
            Some(names) => {
                row += 1;
                let got = count_fields(&record, sep);
                if got != names.len() {
                    return Err(field_count_error(&file, row, got, names));
                }
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
    fn a_semicolon_header_is_refused_naming_the_separator() {
        let e = check_header("time;mag;err", ',', "lc.csv").unwrap_err().to_string();
        assert!(e.contains("lc.csv") && e.contains("';' (semicolon)") && e.contains("',' (comma)"), "{e}");
        assert!(check_header("time", ',', "lc.csv").is_ok());
        assert!(check_header("time,mag;x", ',', "lc.csv").is_ok());
        assert!(check_header("time,mag", '\t', "lc.tsv").is_err());
    }
}
