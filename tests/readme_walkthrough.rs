//! The README's walk-through commands run as written. Every indented command block of the
//! "## Walk-through" sections that starts with `target/release/skyclock` is split into
//! words the way a POSIX shell would (quotes, backslash line continuations), run with the
//! binary under test in a scratch folder holding links to `datasets/` and `tests/`, and
//! must exit 0. Where the README shows what a command prints, the first printed line
//! shown must appear in the output (paths aside). The one user file the walk-through
//! assumes, `events.csv`, is written first (invented photon times).

use std::path::Path;
use std::process::Command;

/// Shell-like word splitting: single and double quotes, backslash-newline continuation.
fn words(command: &str) -> Vec<String> {
    let text = command.replace("\\\n", " ");
    let mut out = Vec::new();
    let mut cur = String::new();
    let mut quote: Option<char> = None;
    let mut any = false;
    for c in text.chars() {
        match quote {
            Some(q) if c == q => quote = None,
            Some(_) => cur.push(c),
            None if c == '"' || c == '\'' => {
                quote = Some(c);
                any = true;
            }
            None if c.is_whitespace() => {
                if any || !cur.is_empty() {
                    out.push(std::mem::take(&mut cur));
                    any = false;
                }
            }
            None => cur.push(c),
        }
    }
    if any || !cur.is_empty() {
        out.push(cur);
    }
    out
}

/// (command text, first line of the "prints" block that follows, if any).
fn walkthrough_commands(readme: &str) -> Vec<(String, Option<String>)> {
    let mut out = Vec::new();
    let mut in_walkthrough = false;
    let lines: Vec<&str> = readme.lines().collect();
    let mut i = 0;
    while i < lines.len() {
        let line = lines[i];
        if line.starts_with("## ") {
            in_walkthrough = line.starts_with("## Walk-through");
        }
        if in_walkthrough && line.starts_with("    target/release/skyclock") {
            let mut cmd = line.trim_start().to_string();
            while cmd.ends_with('\\') && i + 1 < lines.len() {
                i += 1;
                cmd.push('\n');
                cmd.push_str(lines[i].trim_start());
            }
            // A "prints" paragraph right after the block: its first indented line.
            let mut shown = None;
            let mut j = i + 1;
            while j < lines.len() && lines[j].trim().is_empty() {
                j += 1;
            }
            if j < lines.len() && (lines[j].trim() == "prints" || lines[j].trim() == "print") {
                j += 1;
                while j < lines.len() && lines[j].trim().is_empty() {
                    j += 1;
                }
                if j < lines.len() && lines[j].starts_with("    ") {
                    shown = Some(lines[j].trim().to_string());
                }
            }
            out.push((cmd, shown));
        }
        i += 1;
    }
    out
}

#[test]
fn every_walkthrough_command_runs_as_written() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let readme = std::fs::read_to_string(root.join("README.md")).expect("README.md");
    let commands = walkthrough_commands(&readme);
    assert!(commands.len() >= 10, "found only {} walk-through commands", commands.len());
    let dir = std::env::temp_dir().join(format!("skyclock_readme_{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    #[cfg(unix)]
    {
        std::os::unix::fs::symlink(root.join("datasets"), dir.join("datasets")).unwrap();
        std::os::unix::fs::symlink(root.join("tests"), dir.join("tests")).unwrap();
    }
    // The user's own photon list that the event example assumes (seconds after a zero time).
    let mut events = String::from("seconds\n");
    for k in 0..500 {
        events.push_str(&format!("{:.6}\n", k as f64 * 17.3 + 0.25));
    }
    std::fs::write(dir.join("events.csv"), events).unwrap();
    for (cmd, shown) in &commands {
        let w = words(cmd);
        assert_eq!(w[0], "target/release/skyclock");
        let out = Command::new(env!("CARGO_BIN_EXE_skyclock")).args(&w[1..]).current_dir(&dir).output().expect("run");
        let stdout = String::from_utf8_lossy(&out.stdout);
        assert!(out.status.success(), "README command failed:\n{cmd}\n{}", String::from_utf8_lossy(&out.stderr));
        if let Some(first) = shown {
            let norm = |s: &str| s.split_whitespace().collect::<Vec<_>>().join(" ");
            assert!(norm(&stdout).contains(&norm(first)), "README shows\n  {first}\nbut the command printed\n{stdout}");
        }
    }
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn the_word_splitter_handles_quotes_and_continuations() {
    assert_eq!(
        words("a --site \"Ridge Hollow\" \\\n  --x='1 2' b"),
        vec!["a", "--site", "Ridge Hollow", "--x=1 2", "b"]
    );
}
