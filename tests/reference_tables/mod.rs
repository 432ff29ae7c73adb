//! Reading the committed reference CSV files in tests/reference/ (shared by the test files).

use std::collections::HashMap;

/// One row: column name → text.
pub type Row = HashMap<String, String>;

/// Reads `tests/reference/<name>` (simple CSV: no quoted commas).
pub fn read(name: &str) -> Vec<Row> {
    let path = format!("{}/tests/reference/{name}", env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{path}: {e}"));
    let mut lines = text.lines().filter(|l| !l.starts_with('#') && !l.trim().is_empty());
    let header: Vec<String> = lines.next().expect("header").split(',').map(|s| s.trim().to_string()).collect();
    lines
        .map(|l| {
            let cells: Vec<&str> = l.split(',').collect();
            assert_eq!(cells.len(), header.len(), "{name}: {l}");
            header.iter().cloned().zip(cells.iter().map(|c| c.trim().to_string())).collect()
        })
        .collect()
}

/// A cell as `f64`.
pub fn f(row: &Row, column: &str) -> f64 {
    row.get(column)
        .unwrap_or_else(|| panic!("no column {column}"))
        .parse()
        .unwrap_or_else(|_| panic!("column {column}: {:?}", row.get(column)))
}
