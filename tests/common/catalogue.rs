//! The bad-input catalogue, table-driven: one clean input table per command, the same
//! mutations of it for every command (empty, header only, a missing column, text in a
//! number, NaN and infinities, unsorted and duplicated rows, one and two rows, times
//! outside the accepted span, unknown labels, a byte-order mark, CRLF line ends,
//! semicolons, ragged rows), and per command one line per case saying what must happen:
//! a refusal (non-zero exit, the table's name and every fragment in stderr, no panic), the
//! clean run's output byte for byte (BOM, CRLF), or an accepted run whose output or
//! messages hold the documented result. In every case each input is byte-identical
//! afterwards and no file appears but the command's outputs after a success, none after a
//! refusal (no partial file). Use with `#[path = "common/catalogue.rs"] mod catalogue;`
//! next to `#[path = "common/cli.rs"] mod cli;`. What a correct refusal looks like is common
//! practice for a command-line tool; the tables are invented or from the invented demo
//! data sets in `datasets/`.
#![allow(dead_code)]

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use super::cli;

/// What a case must give.
#[derive(Debug, Clone, Copy)]
pub enum Expect {
    /// A non-zero exit; stderr names the table and holds every fragment.
    Refused(&'static [&'static str]),
    /// Exit 0 and the main output byte-identical to the clean table's.
    SameAsClean,
    /// Exit 0; stdout, stderr or the main output hold every fragment.
    Accepted(&'static [&'static str]),
}

/// One command's catalogue: its clean table and the command line that reads it.
pub struct Catalogue {
    /// Short name of the command family (folder names).
    pub name: &'static str,
    /// File name of the table (as the command line names it).
    pub table: &'static str,
    /// The clean table's text.
    pub clean: String,
    /// The time column.
    pub time_column: &'static str,
    /// A numeric column other than the time (None for a one-column event list).
    pub value_column: Option<&'static str>,
    /// A time outside the accepted span or far before the data, written in the table's
    /// convention (e.g. a JD of 1800 for a UTC column).
    pub out_of_span: &'static str,
    /// Further input files (name, text) the command reads.
    pub other_files: Vec<(&'static str, String)>,
    /// The command line (program name left out), naming `table` and writing `output`.
    pub args: Vec<String>,
    /// The main output file.
    pub output: &'static str,
}

/// Every file in `dir` with its bytes.
pub fn snapshot(dir: &Path) -> BTreeMap<PathBuf, Vec<u8>> {
    std::fs::read_dir(dir)
        .unwrap()
        .filter_map(|e| e.ok())
        .filter(|e| e.file_type().map(|t| t.is_file()).unwrap_or(false))
        .map(|e| (e.path(), std::fs::read(e.path()).unwrap()))
        .collect()
}

/// A fresh working folder holding `files` (name, text) and nothing else.
pub fn folder(case: &str, files: &[(&str, String)]) -> PathBuf {
    let d = cli::workdir("catalogue", case);
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    for (name, text) in files {
        std::fs::write(d.join(name), text).unwrap();
    }
    d
}

fn lines(text: &str) -> Vec<String> {
    text.split('\n').map(str::to_string).collect()
}

/// `text` with data row `row` (1-based), column `column`, replaced by `value`.
pub fn set_cell(text: &str, row: usize, column: &str, value: &str) -> String {
    let mut l = lines(text);
    let j = l[0].split(',').position(|c| c == column).unwrap_or_else(|| panic!("no column {column}"));
    let mut fields: Vec<String> = l[row].split(',').map(str::to_string).collect();
    fields[j] = value.to_string();
    l[row] = fields.join(",");
    l.join("\n")
}

/// The mutated table of `case` (None when the case does not apply to this table).
pub fn mutated(c: &Catalogue, case: &str) -> Option<String> {
    let text = &c.clean;
    let l = lines(text);
    let t = c.time_column;
    Some(match case {
        "empty" => String::new(),
        "header_only" => format!("{}\n", l[0]),
        "missing_column" => {
            let header: Vec<&str> = l[0].split(',').map(|h| if h == t { "tyme" } else { h }).collect();
            let mut m = l.clone();
            m[0] = header.join(",");
            m.join("\n")
        }
        "text_time" => set_cell(text, 5, t, "soon"),
        "text_value" => set_cell(text, 6, c.value_column?, "bright"),
        "nan_time" => set_cell(text, 7, t, "nan"),
        "inf_value" => set_cell(text, 8, c.value_column?, "inf"),
        "inf_time" => set_cell(text, 8, t, "-inf"),
        "far_future" => set_cell(text, 9, t, "1e9"),
        "out_of_span" => set_cell(text, 9, t, c.out_of_span),
        "unsorted" => {
            let mut m = l.clone();
            m.swap(10, 11);
            m.join("\n")
        }
        "duplicate" => {
            let mut m = l.clone();
            m[12] = m[11].clone();
            m.join("\n")
        }
        "one_row" => format!("{}\n{}\n", l[0], l[1]),
        "two_rows" => format!("{}\n{}\n{}\n", l[0], l[1], l[2]),
        "bom" => format!("\u{feff}{text}"),
        "crlf" => text.replace('\n', "\r\n"),
        "semicolons" => text.replace(',', ";"),
        "ragged_long" => {
            let mut m = l.clone();
            m[13].push_str(",7");
            m.join("\n")
        }
        "ragged_short" => {
            let mut m = l.clone();
            let (head, _) = m[14].rsplit_once(',')?;
            m[14] = head.to_string();
            m.join("\n")
        }
        "unknown_clock_label" => set_cell(text, 4, "clock", "jd_martian"),
        "unknown_site" => set_cell(text, 3, "site", "Nowhere Hill"),
        other => panic!("unknown catalogue case {other}"),
    })
}

fn run_in(dir: &Path, args: &[String]) -> (bool, String, String) {
    let out = cli::skyclock().current_dir(dir).args(args).output().expect("run skyclock");
    (
        out.status.success(),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// Runs every case of `cases` for the command of `c`, checking what each must give.
/// Failures are collected and reported together, one line each.
pub fn run_catalogue(c: &Catalogue, cases: &[(&str, Expect)]) {
    let mut files = c.other_files.clone();
    files.push((c.table, c.clean.clone()));
    let d = folder(&format!("{}_clean", c.name), &files);
    let (ok, _, err) = run_in(&d, &c.args);
    assert!(ok, "{}: the clean table must be accepted:\n{err}", c.name);
    let clean_output = std::fs::read(d.join(c.output)).expect("clean output");
    let mut failures = Vec::new();
    for (case, expect) in cases {
        let Some(text) = mutated(c, case) else {
            failures.push(format!("{case}: does not apply to this table (remove the line)"));
            continue;
        };
        let mut files = c.other_files.clone();
        files.push((c.table, text));
        let d = folder(&format!("{}_{case}", c.name), &files);
        let before = snapshot(&d);
        let (ok, stdout, stderr) = run_in(&d, &c.args);
        let after = snapshot(&d);
        let mut fail = |m: String| failures.push(format!("{case}: {m}\n    stderr: {}", stderr.trim()));
        if stderr.contains("panicked") {
            fail("panic".into());
            continue;
        }
        for (path, bytes) in &before {
            if after.get(path) != Some(bytes) {
                fail(format!("input {} changed or vanished", path.display()));
            }
        }
        let added: Vec<String> = after
            .keys()
            .filter(|p| !before.contains_key(*p))
            .map(|p| p.file_name().unwrap().to_string_lossy().into_owned())
            .collect();
        match expect {
            Expect::Refused(fragments) => {
                if ok {
                    fail("expected a refusal, got exit 0".into());
                }
                if !added.is_empty() {
                    fail(format!("a refused run left files: {added:?}"));
                }
                for f in fragments.iter().chain(std::iter::once(&c.table)) {
                    if !stderr.contains(f) {
                        fail(format!("stderr lacks '{f}'"));
                    }
                }
            }
            Expect::SameAsClean | Expect::Accepted(_) => {
                if !ok {
                    fail("expected exit 0".into());
                    continue;
                }
                if let Some(stray) =
                    added.iter().find(|a| !a.starts_with(c.output.trim_end_matches(".csv")) || a.contains(".partial"))
                {
                    fail(format!("unexpected file {stray}"));
                }
                let output = std::fs::read(d.join(c.output)).unwrap_or_default();
                if matches!(expect, Expect::SameAsClean) && output != clean_output {
                    fail("the output differs from the clean table's".into());
                }
                if let Expect::Accepted(fragments) = expect {
                    let all = format!("{stdout}\n{stderr}\n{}", String::from_utf8_lossy(&output));
                    for f in *fragments {
                        if !all.contains(f) {
                            fail(format!(
                                "neither the messages nor the output hold '{f}':\n    stdout: {}",
                                stdout.trim()
                            ));
                        }
                    }
                }
            }
        }
    }
    assert!(failures.is_empty(), "{}: {} case(s) failed:\n{}", c.name, failures.len(), failures.join("\n"));
}

/// The first `rows` data rows of a demo data set (header kept).
pub fn dataset_head(name: &str, rows: usize) -> String {
    let text = std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("datasets").join(name)).unwrap();
    let mut out: Vec<&str> = text.lines().take(rows + 1).collect();
    out.push("");
    out.join("\n")
}

/// The header and the data rows of a demo data set that satisfy `keep`.
pub fn dataset_rows(name: &str, keep: impl Fn(&str) -> bool, rows: usize) -> String {
    let text = std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("datasets").join(name)).unwrap();
    let mut it = text.lines();
    let mut out = vec![it.next().unwrap()];
    out.extend(it.filter(|l| keep(l)).take(rows));
    out.push("");
    out.join("\n")
}

/// A demo data set's whole text.
pub fn dataset(name: &str) -> String {
    std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("datasets").join(name)).unwrap()
}

/// `args` as owned strings.
pub fn owned(args: &[&str]) -> Vec<String> {
    args.iter().map(|s| s.to_string()).collect()
}
