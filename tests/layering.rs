//! The layering rule of DEVELOPERS.md: a library module imports only modules of a strictly
//! lower rank, so stage modules never import each other both ways. Reads `src/` as text.

use std::collections::BTreeMap;
use std::path::Path;

/// Rank of every library module (DEVELOPERS.md, "Layering").
const RANKS: &[(&str, u32)] = &[
    ("constants", 0),
    ("time", 1),
    ("fit", 1),
    ("ephemeris", 2),
    ("observer", 2),
    ("table", 2),
    ("arrival", 3),
    ("config", 4),
    ("light_curve", 4),
    ("oc", 4),
    ("periodogram", 5),
    ("predict", 5),
    ("pulsar", 5),
    ("fold", 6),
    ("minima", 6),
    ("transit", 6),
    ("frequencies", 7),
    ("survey", 8),
    ("plot", 9),
    ("report", 10),
];

fn rust_files(dir: &Path, out: &mut Vec<std::path::PathBuf>) {
    for entry in std::fs::read_dir(dir).unwrap() {
        let path = entry.unwrap().path();
        if path.is_dir() {
            rust_files(&path, out);
        } else if path.extension().is_some_and(|e| e == "rs") {
            out.push(path);
        }
    }
}

/// `crate::name` references in the code of `text` (comments skipped).
fn crate_references(text: &str) -> Vec<String> {
    let mut found = Vec::new();
    for line in text.lines() {
        let code = line.split("//").next().unwrap_or("");
        let mut rest = code;
        while let Some(i) = rest.find("crate::") {
            let after = &rest[i + "crate::".len()..];
            let name: String = after.chars().take_while(|c| c.is_ascii_alphanumeric() || *c == '_').collect();
            if name.is_empty() {
                // `crate::{a, b}`: every name in the group.
                if let Some(group) = after.strip_prefix('{') {
                    let inner = group.split('}').next().unwrap_or("");
                    for part in inner.split(',') {
                        let n: String =
                            part.trim().chars().take_while(|c| c.is_ascii_alphanumeric() || *c == '_').collect();
                        if !n.is_empty() {
                            found.push(n);
                        }
                    }
                }
            } else {
                found.push(name);
            }
            rest = after;
        }
    }
    found
}

#[test]
fn every_library_module_has_a_rank() {
    let lib = std::fs::read_to_string("src/lib.rs").unwrap();
    let ranks: BTreeMap<&str, u32> = RANKS.iter().copied().collect();
    for line in lib.lines() {
        if let Some(name) = line.trim().strip_prefix("pub mod ").and_then(|r| r.strip_suffix(';')) {
            assert!(ranks.contains_key(name), "src/lib.rs declares `{name}`, which has no rank in tests/layering.rs");
        }
        assert!(
            !line.contains("mod cli") && !line.contains("mod demo"),
            "the library must not hold the command line or the demo"
        );
    }
}

#[test]
fn imports_only_run_downwards() {
    let ranks: BTreeMap<&str, u32> = RANKS.iter().copied().collect();
    let mut wrong = Vec::new();
    for &(module, rank) in RANKS {
        let dir = Path::new("src").join(module);
        let mut files = Vec::new();
        if dir.is_dir() {
            rust_files(&dir, &mut files);
        } else {
            files.push(Path::new("src").join(format!("{module}.rs")));
        }
        for file in files {
            let Ok(text) = std::fs::read_to_string(&file) else { continue };
            for name in crate_references(&text) {
                if name == module {
                    continue;
                }
                match ranks.get(name.as_str()) {
                    Some(&r) if r < rank => {}
                    Some(&r) => {
                        wrong.push(format!("{} (`{module}`, rank {rank}) imports `{name}` (rank {r})", file.display()))
                    }
                    None => {
                        wrong.push(format!("{} imports `crate::{name}`, which is no library module", file.display()))
                    }
                }
            }
        }
    }
    wrong.sort();
    wrong.dedup();
    assert!(wrong.is_empty(), "wrong-way imports (see DEVELOPERS.md, Layering):\n{}", wrong.join("\n"));
}

#[test]
fn the_scanner_sees_grouped_and_plain_references() {
    let refs = crate_references("use crate::{time::Instant, fit};\nlet x = crate::oc::fit(); // crate::report");
    assert_eq!(refs, vec!["time", "fit", "oc"]);
}

#[test]
fn no_library_function_returns_a_bare_string_error() {
    // Library errors are typed (thiserror enums naming the value and what is accepted);
    // `Result<_, String>` is for nobody (DEVELOPERS.md, Conventions).
    let mut files = Vec::new();
    for &(module, _) in RANKS {
        let dir = Path::new("src").join(module);
        if dir.is_dir() {
            rust_files(&dir, &mut files);
        } else {
            files.push(Path::new("src").join(format!("{module}.rs")));
        }
    }
    let mut found = Vec::new();
    for file in files {
        let Ok(text) = std::fs::read_to_string(&file) else { continue };
        for (i, line) in text.lines().enumerate() {
            let code = line.split("//").next().unwrap_or("");
            if let Some(at) = code.find("-> Result<") {
                let rest = &code[at..];
                if rest.contains(", String>") {
                    found.push(format!("{}:{}: {}", file.display(), i + 1, line.trim()));
                }
            }
        }
    }
    assert!(found.is_empty(), "library functions returning Result<_, String>:\n{}", found.join("\n"));
}
