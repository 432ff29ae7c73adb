//! Shell completions, manual page and worked examples, checked as a user meets them: run
//! the program, then hand its output to the real shells and to groff. Which commands exist
//! is read from the command-line definition, never listed here.
//!
//! Outside checks and their sources:
//! - `bash -n`, `zsh -n`, `fish --no-execute`: each shell's own parser (GNU Bash Reference
//!   Manual, "The Set Builtin", -n; zsh manual, "Options", NO_EXEC; fish documentation,
//!   `fish --no-execute`). zsh and fish checks skip with a "SKIPPED:" line when the shell is
//!   missing, and fail instead under `CI=true` (`.ci/run` installs them).
//! - Completion behaviour: bash's programmable completion (GNU Bash Reference Manual,
//!   "Programmable Completion": COMP_WORDS, COMP_CWORD, COMPREPLY) driven directly.
//! - Manual page: `groff -man -Tutf8 -ww` (groff(1): -ww enables all warnings) must stay
//!   silent; section names NAME, SYNOPSIS, DESCRIPTION, EXIT STATUS, FILES, ENVIRONMENT
//!   from man-pages(7). Skips with a plain message when groff is missing.
//! - Exit status 2 for usage errors: clap's documented behaviour (clap `Error::exit`),
//!   which the page's EXIT STATUS states.

#[path = "common/prerequisite.rs"]
mod prerequisite;

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};

// The command line lives in the binary, not in the library: its definition is compiled into
// this test from the same sources so that the walker of the clap definition can be used here.
#[allow(dead_code, unused_imports)]
#[path = "../src/cli/mod.rs"]
mod cli;
#[allow(dead_code, unused_imports)]
#[path = "../src/demo/mod.rs"]
mod demo;

use cli::manual::{CommandSpec, ValueKind};

fn dir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("skyclock_cli_manual_{name}_{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).expect("temp dir");
    d
}

fn run(args: &[&str]) -> (i32, String, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_skyclock")).args(args).output().expect("run skyclock");
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

fn ok(args: &[&str]) -> String {
    let (code, out, err) = run(args);
    assert_eq!(code, 0, "skyclock {args:?} failed:\n{err}");
    out
}

/// True when `program` can be started.
fn available(program: &str, version_flag: &str) -> bool {
    Command::new(program).arg(version_flag).stdout(Stdio::null()).stderr(Stdio::null()).status().is_ok()
}

/// The program's commands (not clap's `help`), from the definition.
fn commands() -> Vec<CommandSpec> {
    let spec = CommandSpec::skyclock();
    assert!(spec.subcommands.len() >= 10, "too few commands found: {}", spec.subcommands.len());
    spec.subcommands.into_iter().filter(|c| !c.is_help_command()).collect()
}

#[test]
fn every_command_help_shows_a_worked_example() {
    let mut missing = Vec::new();
    for c in commands() {
        let help = ok(&[&c.name, "--help"]);
        // Source: common practice (issue 6: "--help on every command shows a worked example").
        let example = help.find("Example").map(|i| &help[i..]);
        match example {
            // The example must run this very command.
            Some(text)
                if text.contains(&format!("skyclock {} ", c.name))
                    || text.contains(&format!("skyclock {}\n", c.name)) => {}
            _ => missing.push(c.name.clone()),
        }
    }
    assert!(missing.is_empty(), "commands whose --help has no worked example: {missing:?}");
}

#[test]
fn completion_scripts_name_every_command_and_long_option() {
    for shell in ["bash", "zsh", "fish"] {
        let script = ok(&["shell-completions", shell]);
        let version = format!("skyclock {}", env!("CARGO_PKG_VERSION"));
        assert!(
            script.lines().take(3).any(|l| l.starts_with('#') && l.contains(&version)),
            "{shell} script does not say which build wrote it"
        );
        for c in commands() {
            assert!(script.contains(&c.name), "{shell} script lacks the command {}", c.name);
            for o in &c.options {
                if let Some(long) = &o.long {
                    // bash lists options as --name; zsh as '--name…'; fish as `-l name`.
                    let present = match shell {
                        "fish" => script.contains(&format!("-l {long} ")),
                        _ => script.contains(&format!("--{long}")),
                    };
                    assert!(present, "{shell} script lacks --{long} of {}", c.name);
                }
            }
        }
    }
}

#[test]
fn bash_script_parses_and_completes() {
    if !available("bash", "--version") {
        prerequisite::missing("bash", "apt-get install bash");
        return;
    }
    let d = dir("bash");
    let script = d.join("skyclock.bash");
    ok(&["shell-completions", "bash", "--output", script.to_str().unwrap()]);
    let status = Command::new("bash").arg("-n").arg(&script).status().expect("bash -n");
    assert!(status.success(), "bash -n rejects the completion script");

    // Drive the completion function as bash would: set COMP_WORDS/COMP_CWORD, read COMPREPLY.
    let complete = |words: &[&str]| -> Vec<String> {
        let quoted: Vec<String> = words.iter().map(|w| format!("'{w}'")).collect();
        let program = format!(
            "source '{}'\nCOMP_WORDS=({})\nCOMP_CWORD={}\n_skyclock_complete\nprintf '%s\\n' \"${{COMPREPLY[@]}}\"\n",
            script.display(),
            quoted.join(" "),
            words.len() - 1
        );
        let out = Command::new("bash").arg("-c").arg(program).current_dir(&d).output().expect("bash");
        assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
        String::from_utf8_lossy(&out.stdout).lines().filter(|l| !l.is_empty()).map(str::to_string).collect()
    };
    let all = commands();
    // Every command is offered after the program name.
    let offered = complete(&["skyclock", ""]);
    for c in &all {
        assert!(offered.contains(&c.name), "{} not offered: {offered:?}", c.name);
    }
    // A prefix narrows to the commands that start with it.
    let first = &all[0].name;
    let prefix = &first[..3.min(first.len())];
    let narrowed = complete(&["skyclock", prefix]);
    assert!(narrowed.contains(first) && narrowed.iter().all(|n| n.starts_with(prefix)), "{narrowed:?}");
    // Options of a command, and a fixed-choice value from the definition.
    for c in &all {
        let longs: Vec<String> = c.options.iter().filter_map(|o| o.long.as_ref().map(|l| format!("--{l}"))).collect();
        let offered = complete(&["skyclock", &c.name, "--"]);
        for l in &longs {
            assert!(offered.contains(l), "{l} of {} not offered: {offered:?}", c.name);
        }
    }
    let (command, option, words) = all
        .iter()
        .flat_map(|c| c.options.iter().map(move |o| (c, o)))
        .find_map(|(c, o)| match &o.kind {
            ValueKind::Choice(w) => Some((c.name.clone(), format!("--{}", o.long.clone().unwrap()), w.clone())),
            _ => None,
        })
        .expect("some option has fixed choices");
    let offered = complete(&["skyclock", &command, &option, ""]);
    assert_eq!(offered, words, "choices of {command} {option}");
    // The same after `--option=`, which bash splits into `--option`, `=`, value.
    let offered = complete(&["skyclock", &command, &option, "=", ""]);
    assert_eq!(offered, words, "choices of {command} {option}=");
    // Fixed words of a positional argument (the shell of shell-completions, for one).
    for c in &all {
        for p in &c.positionals {
            if let ValueKind::Choice(words) = &p.kind {
                assert_eq!(&complete(&["skyclock", &c.name, ""]), words, "positional choices of {}", c.name);
            }
        }
    }
    // A FILE option completes file names.
    std::fs::write(d.join("vega_nova_minima.csv"), "time\n").unwrap();
    let (command, option) = all
        .iter()
        .flat_map(|c| c.options.iter().map(move |o| (c, o)))
        .find_map(|(c, o)| {
            (o.value_name.as_deref() == Some("FILE"))
                .then(|| (c.name.clone(), format!("--{}", o.long.clone().unwrap())))
        })
        .expect("some option takes a FILE");
    let offered = complete(&["skyclock", &command, &option, "vega_"]);
    assert_eq!(offered, vec!["vega_nova_minima.csv".to_string()], "{command} {option}");
}

#[test]
fn zsh_and_fish_scripts_parse_where_those_shells_exist() {
    let d = dir("zshfish");
    for (shell, flag, file) in [("zsh", "-n", "_skyclock"), ("fish", "--no-execute", "skyclock.fish")] {
        let path = d.join(file);
        ok(&["shell-completions", shell, "--output", path.to_str().unwrap()]);
        assert!(std::fs::metadata(&path).unwrap().len() > 100);
        if !available(shell, "--version") {
            prerequisite::missing(
                &format!("{shell} (so `{shell} {flag}` was not run on the {shell} script)"),
                &format!("apt-get install {shell}"),
            );
            continue;
        }
        let out = Command::new(shell).arg(flag).arg(&path).output().expect(shell);
        assert!(out.status.success(), "{shell} {flag} rejects the script: {}", String::from_utf8_lossy(&out.stderr));
        match shell {
            // fish answers `complete -C LINE` with the candidates for LINE (fish documentation,
            // "complete": -C/--do-complete).
            "fish" => {
                for c in commands() {
                    let line = format!("source '{}'; complete -C 'skyclock {} --'", path.display(), c.name);
                    let out = Command::new("fish").arg("-c").arg(&line).output().expect("fish");
                    let text = String::from_utf8_lossy(&out.stdout);
                    let offered: Vec<&str> = text.lines().map(|l| l.split('\t').next().unwrap_or_default()).collect();
                    for o in c.options.iter().filter_map(|o| o.long.as_ref()) {
                        assert!(
                            offered.contains(&format!("--{o}").as_str()),
                            "fish does not offer --{o} for {}: {offered:?}",
                            c.name
                        );
                    }
                }
                let out = Command::new("fish")
                    .arg("-c")
                    .arg(format!("source '{}'; complete -C 'skyclock '", path.display()))
                    .output()
                    .expect("fish");
                let text = String::from_utf8_lossy(&out.stdout);
                for c in commands() {
                    assert!(
                        text.lines().any(|l| l.split('\t').next() == Some(c.name.as_str())),
                        "fish does not offer {}",
                        c.name
                    );
                }
            }
            // Loaded into zsh's completion system, one function per command is defined and
            // registered for skyclock (zsh manual, "Completion System": compinit, compdef).
            _ => {
                let line = format!(
                    "autoload -U compinit; compinit -u -d '{}/zcompdump'; source '{}'; print -r -- ${{_comps[skyclock]}}; for f in {}; do whence -w $f; done",
                    d.display(),
                    path.display(),
                    commands()
                        .iter()
                        .map(|c| format!("_skyclock__{}", c.name.replace('-', "_")))
                        .collect::<Vec<_>>()
                        .join(" ")
                );
                let out = Command::new("zsh").arg("-f").arg("-c").arg(&line).output().expect("zsh");
                let text = String::from_utf8_lossy(&out.stdout);
                assert!(
                    text.lines().next() == Some("_skyclock"),
                    "compdef did not register _skyclock: {text}\n{}",
                    String::from_utf8_lossy(&out.stderr)
                );
                for c in commands() {
                    let f = format!("_skyclock__{}: function", c.name.replace('-', "_"));
                    assert!(text.contains(&f), "{f} missing: {text}");
                }
            }
        }
    }
}

#[test]
fn manual_page_lists_every_command_and_formats_without_warnings() {
    let page = ok(&["manual-page"]);
    for section in [
        ".SH NAME",
        ".SH SYNOPSIS",
        ".SH DESCRIPTION",
        ".SH COMMANDS",
        ".SH EXIT STATUS",
        ".SH FILES",
        ".SH ENVIRONMENT",
    ] {
        assert!(page.contains(section), "{section} missing");
    }
    assert!(page.starts_with(".\\\"") && page.contains(".TH SKYCLOCK 1 "));
    for c in commands() {
        let heading = format!(".SS \"skyclock {}\"", c.name.replace('-', "\\-"));
        assert!(page.contains(&heading), "no section for {}", c.name);
        for o in &c.options {
            if let Some(l) = &o.long {
                assert!(
                    page.contains(&format!("\\fB\\-\\-{}\\fR", l.replace('-', "\\-"))),
                    "--{l} of {} not documented",
                    c.name
                );
            }
        }
    }
    // Every text line that starts with a request character is a real request.
    for line in page.lines() {
        if let Some(rest) = line.strip_prefix('.') {
            let request: String =
                rest.chars().take_while(|c| c.is_ascii_alphabetic() || *c == '\\' || *c == '"').collect();
            assert!(
                ["TH", "SH", "SS", "TP", "PP", "B", "I", "RI", "br", "nf", "fi", "RS", "RE", "sp", "nh", "ad", "\\\""]
                    .contains(&request.as_str()),
                "unexpected request line: {line}"
            );
        }
        assert!(!line.starts_with('\''), "a line starts with a quote: {line}");
    }
    if !available("groff", "--version") {
        prerequisite::missing("groff (so the page was not formatted)", "apt-get install groff");
        return;
    }
    let mut child = Command::new("groff")
        .args(["-man", "-Tutf8", "-ww"])
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("groff");
    std::io::Write::write_all(child.stdin.as_mut().unwrap(), page.as_bytes()).unwrap();
    let out = child.wait_with_output().unwrap();
    let warnings = String::from_utf8_lossy(&out.stderr);
    assert!(out.status.success() && warnings.trim().is_empty(), "groff warnings:\n{warnings}");
    // grotty marks bold and italic by overstriking (character, backspace, character).
    let text = strip_overstrike(&String::from_utf8_lossy(&out.stdout));
    // The formatted page shows names with ordinary hyphens and the worked examples.
    assert!(text.contains("EXIT STATUS") && text.contains("Example:"), "formatted page lacks sections");
    assert!(text.contains("skyclock manual-page") || text.contains("skyclock manual‐page"));
}

/// Removes overstrike sequences (`X\u{8}X`, `_\u{8}X`) from grotty output (grotty(1)).
fn strip_overstrike(text: &str) -> String {
    let mut out: Vec<char> = Vec::new();
    for c in text.chars() {
        if c == '\u{8}' {
            out.pop();
        } else {
            out.push(c);
        }
    }
    out.into_iter().collect()
}

#[test]
fn output_is_written_atomically_and_bad_paths_fail_clearly() {
    let d = dir("output");
    let page = d.join("skyclock.1");
    ok(&["manual-page", "--output", page.to_str().unwrap()]);
    assert_eq!(std::fs::read_to_string(&page).unwrap(), ok(&["manual-page"]), "file and stdout differ");
    // Overwriting an earlier output replaces it whole; no temporary file is left behind.
    std::fs::write(&page, "old contents").unwrap();
    ok(&["manual-page", "--output", page.to_str().unwrap()]);
    assert!(std::fs::read_to_string(&page).unwrap().starts_with(".\\\""));
    let names: Vec<String> =
        std::fs::read_dir(&d).unwrap().map(|e| e.unwrap().file_name().to_string_lossy().into_owned()).collect();
    assert_eq!(names, vec!["skyclock.1".to_string()], "leftover files: {names:?}");

    // A folder that does not exist.
    let missing = d.join("no_such_folder").join("skyclock.bash");
    let (code, _, err) = run(&["shell-completions", "bash", "--output", missing.to_str().unwrap()]);
    assert_eq!(code, 1);
    assert!(err.contains("does not exist") && err.contains("no_such_folder"), "{err}");
    assert!(!missing.exists());
    // A folder given as the output file.
    let (code, _, err) = run(&["manual-page", "--output", d.to_str().unwrap()]);
    assert_eq!(code, 1);
    assert!(err.contains("is a folder"), "{err}");
    // The program itself is an input of the walk: never written over.
    let program = Path::new(env!("CARGO_BIN_EXE_skyclock"));
    let before = std::fs::metadata(program).unwrap().len();
    let (code, _, err) = run(&["manual-page", "--output", program.to_str().unwrap()]);
    assert_eq!(code, 1);
    assert!(err.contains("program itself"), "{err}");
    assert_eq!(std::fs::metadata(program).unwrap().len(), before);
}

#[test]
fn unknown_shell_is_a_usage_error_naming_the_choices() {
    let (code, _, err) = run(&["shell-completions", "tcsh"]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("bash") && err.contains("zsh") && err.contains("fish"), "{err}");
}
