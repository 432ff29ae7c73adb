//! Any bytes as a CSV table (the reader every table command uses, then every column as
//! text and as numbers) and as a light curve: refused or read, never a panic.
#![no_main]

use libfuzzer_sys::fuzz_target;
use skyclock::table::{optional_float_column, read_table, text_column};

fuzz_target!(|data: &[u8]| {
    let path = std::env::temp_dir().join(format!("skyclock-fuzz-table-{}.csv", std::process::id()));
    if std::fs::write(&path, data).is_err() {
        return;
    }
    let file = path.display().to_string();
    if let Ok(df) = read_table(&path, &["time"]) {
        let names: Vec<String> = df.get_column_names().iter().map(|s| s.to_string()).collect();
        for name in &names {
            let _ = text_column(&df, &file, name);
            let _ = optional_float_column(&df, &file, name);
        }
    }
});
