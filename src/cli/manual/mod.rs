//! Documentation generated from the command-line definition itself: a walk over
//! `clap::Command` into a small description ([`CommandSpec`]) from which shell completion
//! scripts ([`completions`]) and the roff manual page ([`roff`]) are written. Nothing here
//! names a command: whatever is registered in [`crate::cli::Cli`] is picked up.

pub mod completions;
pub mod roff;

use clap::{ArgAction, ValueHint};

/// What kind of value an option (or positional argument) expects, for completion.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum ValueKind {
    /// A flag: no value.
    None,
    /// A file path (value name FILE, or a path-typed value).
    Path,
    /// A folder path.
    Folder,
    /// One of a fixed list of words.
    Choice(Vec<String>),
    /// Free text (a number, a column name …).
    Text,
}

/// One option or positional argument.
#[derive(Debug, Clone)]
pub struct ArgSpec {
    /// Long name without the dashes (None for a positional).
    pub long: Option<String>,
    /// Short letter, if any.
    pub short: Option<char>,
    /// Name of the value (`FILE`, `COLUMN` …) as shown in help.
    pub value_name: Option<String>,
    /// What the value is.
    pub kind: ValueKind,
    /// May be given more than once / takes several values.
    pub repeatable: bool,
    /// Must be given.
    pub required: bool,
    /// Help text (long form where one exists), trimmed.
    pub help: String,
    /// Default values shown in help.
    pub defaults: Vec<String>,
}

impl ArgSpec {
    /// True when the option expects a value.
    pub fn takes_value(&self) -> bool {
        self.kind != ValueKind::None
    }

    /// First line of the help text (for one-line descriptions in completion menus).
    pub fn summary(&self) -> String {
        self.help.lines().next().unwrap_or_default().trim().to_string()
    }
}

/// One command (the program itself or a subcommand) with its options and subcommands.
#[derive(Debug, Clone)]
pub struct CommandSpec {
    /// The command's name (`skyclock`, or a subcommand's name).
    pub name: String,
    /// Names from the program down to this command, e.g. `["skyclock", "fold-curve"]`.
    pub path: Vec<String>,
    /// Version string, where the command has one.
    pub version: Option<String>,
    /// One-line description.
    pub about: String,
    /// Longer description where one exists.
    pub long_about: Option<String>,
    /// Text shown after the options (the worked example).
    pub example: Option<String>,
    /// Usage line as clap renders it, without the `Usage: ` prefix.
    pub usage: String,
    /// Options (with a long or short name), in help order.
    pub options: Vec<ArgSpec>,
    /// Positional arguments, in order.
    pub positionals: Vec<ArgSpec>,
    /// Visible subcommands.
    pub subcommands: Vec<CommandSpec>,
}

impl CommandSpec {
    /// Walks a clap command (built first, so that `--help`, `--version` and the `help`
    /// subcommand are present as the user sees them).
    pub fn from_clap(command: &clap::Command) -> Self {
        let mut command = command.clone();
        command.build();
        Self::walk(&mut command, Vec::new())
    }

    /// The skyclock command line as registered in [`crate::cli::Cli`].
    pub fn skyclock() -> Self {
        Self::from_clap(&<crate::cli::Cli as clap::CommandFactory>::command())
    }

    fn walk(command: &mut clap::Command, parent: Vec<String>) -> Self {
        let mut path = parent;
        path.push(command.get_name().to_string());
        let usage = command.render_usage().to_string();
        let usage = usage.trim().trim_start_matches("Usage:").trim().to_string();
        let mut options = Vec::new();
        let mut positionals = Vec::new();
        for arg in command.get_arguments().filter(|a| !a.is_hide_set()) {
            let spec = arg_spec(arg);
            if arg.is_positional() {
                positionals.push(spec);
            } else {
                options.push(spec);
            }
        }
        let subcommands =
            command.get_subcommands_mut().filter(|c| !c.is_hide_set()).map(|c| Self::walk(c, path.clone())).collect();
        CommandSpec {
            name: command.get_name().to_string(),
            version: command.get_version().map(str::to_string),
            about: command.get_about().map(|s| s.to_string()).unwrap_or_default().trim().to_string(),
            long_about: command.get_long_about().map(|s| s.to_string().trim().to_string()),
            example: command
                .get_after_long_help()
                .or_else(|| command.get_after_help())
                .map(|s| s.to_string().trim_end().to_string()),
            usage,
            options,
            positionals,
            subcommands,
            path,
        }
    }

    /// Every command below this one (depth first), not counting itself.
    pub fn descendants(&self) -> Vec<&CommandSpec> {
        let mut all = Vec::new();
        for c in &self.subcommands {
            all.push(c);
            all.extend(c.descendants());
        }
        all
    }

    /// True for clap's own `help` subcommand and the entries below it (documented by the
    /// program's usage, not tasks of their own).
    pub fn is_help_command(&self) -> bool {
        self.path.get(1).is_some_and(|n| n == "help") && self.example.is_none()
    }

    /// The path joined with spaces, e.g. `skyclock fold-curve`.
    pub fn full_name(&self) -> String {
        self.path.join(" ")
    }
}

fn arg_spec(arg: &clap::Arg) -> ArgSpec {
    let takes_value = arg.get_action().takes_values();
    let value_name = arg
        .get_value_names()
        .and_then(|v| v.first())
        .map(|s| s.to_string())
        .or_else(|| arg.is_positional().then(|| arg.get_id().as_str().to_uppercase()));
    let kind = if !takes_value {
        ValueKind::None
    } else {
        let choices: Vec<String> =
            arg.get_possible_values().iter().filter(|v| !v.is_hide_set()).map(|v| v.get_name().to_string()).collect();
        let named_file = value_name.as_deref().is_some_and(|n| n == "FILE" || n.ends_with("_FILE"));
        if !choices.is_empty() {
            ValueKind::Choice(choices)
        } else if arg.get_value_hint() == ValueHint::DirPath || value_name.as_deref() == Some("FOLDER") {
            ValueKind::Folder
        } else if named_file || matches!(arg.get_value_hint(), ValueHint::FilePath | ValueHint::AnyPath) {
            ValueKind::Path
        } else {
            ValueKind::Text
        }
    };
    let repeatable = matches!(arg.get_action(), ArgAction::Append | ArgAction::Count)
        || arg.get_num_args().is_some_and(|n| n.max_values() > 1);
    let help =
        arg.get_long_help().or_else(|| arg.get_help()).map(|s| s.to_string().trim().to_string()).unwrap_or_default();
    ArgSpec {
        long: arg.get_long().map(str::to_string),
        short: arg.get_short(),
        value_name,
        kind,
        repeatable,
        required: arg.is_required_set(),
        help,
        defaults: arg.get_default_values().iter().map(|v| v.to_string_lossy().to_string()).collect(),
    }
}

/// Prints `text` on stdout, or writes it to `output` atomically (temporary file in the same
/// folder, then rename). The running program itself counts as an input: writing over it is
/// refused.
pub fn print_or_write(text: &str, output: Option<&std::path::Path>) -> anyhow::Result<()> {
    use anyhow::{Context, bail};
    let Some(path) = output else {
        use std::io::Write;
        let mut stdout = std::io::stdout().lock();
        return match stdout.write_all(text.as_bytes()).and_then(|_| stdout.flush()) {
            // A reader that stops early (`| head`) is not a failure.
            Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => Ok(()),
            other => other.context("writing to standard output"),
        };
    };
    if path.is_dir() {
        bail!(
            "--output {} is a folder; give a file name inside it, e.g. {}",
            path.display(),
            path.join("skyclock.out").display()
        );
    }
    if let Some(parent) = path.parent().filter(|p| !p.as_os_str().is_empty())
        && !parent.is_dir()
    {
        bail!("cannot write {}: the folder {} does not exist (create it first)", path.display(), parent.display());
    }
    if let Ok(program) = std::env::current_exe() {
        skyclock::table::refuse_overwriting_inputs(path, &[program.as_path()]).map_err(|_| {
            anyhow::anyhow!(
                "refusing to write over the skyclock program itself ({}); choose another --output",
                path.display()
            )
        })?;
    }
    skyclock::table::write::write_atomically(path, |f| std::io::Write::write_all(f, text.as_bytes()))
        .with_context(|| format!("writing {} (check that the folder is writable)", path.display()))
}

#[cfg(test)]
mod tests {
    use super::*;
    use clap::{Arg, Command};

    /// A small invented command line, independent of skyclock's own commands.
    pub(crate) fn toy() -> CommandSpec {
        let cmd = Command::new("toy")
            .about("Toy program for the generator tests")
            .subcommand(
                Command::new("fold-star")
                    .about("Fold the light curve of Star Alpha")
                    .after_help("Example:\n  toy fold-star --input alpha.csv --method mean")
                    .arg(Arg::new("input").long("input").value_name("FILE").required(true).help("Input table"))
                    .arg(Arg::new("method").long("method").value_parser(["mean", "median"]).help("Binning"))
                    .arg(Arg::new("bins").long("bins").value_name("N").help("Number of bins"))
                    .arg(Arg::new("quiet").long("quiet").action(ArgAction::SetTrue).help("Say less"))
                    .arg(Arg::new("secret").long("secret").hide(true))
                    .arg(Arg::new("times").num_args(1..).help("Times to mark")),
            )
            .subcommand(
                Command::new("outputs")
                    .about("Write things")
                    .arg(Arg::new("folder").long("folder").value_hint(ValueHint::DirPath)),
            );
        CommandSpec::from_clap(&cmd)
    }

    #[test]
    fn walk_finds_subcommands_options_and_kinds() {
        let t = toy();
        let names: Vec<&str> = t.subcommands.iter().map(|c| c.name.as_str()).collect();
        assert!(names.contains(&"fold-star") && names.contains(&"outputs") && names.contains(&"help"), "{names:?}");
        let fold = &t.subcommands[0];
        assert_eq!(fold.path, vec!["toy", "fold-star"]);
        let get =
            |n: &str| fold.options.iter().find(|o| o.long.as_deref() == Some(n)).unwrap_or_else(|| panic!("no --{n}"));
        assert_eq!(get("input").kind, ValueKind::Path);
        assert!(get("input").required);
        assert_eq!(get("method").kind, ValueKind::Choice(vec!["mean".into(), "median".into()]));
        assert_eq!(get("bins").kind, ValueKind::Text);
        assert_eq!(get("quiet").kind, ValueKind::None);
        assert_eq!(get("help").kind, ValueKind::None);
        assert!(fold.options.iter().all(|o| o.long.as_deref() != Some("secret")), "hidden options are left out");
        assert_eq!(fold.positionals.len(), 1);
        assert!(fold.positionals[0].repeatable);
        assert_eq!(fold.positionals[0].value_name.as_deref(), Some("TIMES"));
        assert!(fold.example.as_deref().unwrap().starts_with("Example:"));
        assert!(fold.usage.starts_with("toy fold-star"), "{}", fold.usage);
        let outputs = &t.subcommands[1];
        assert_eq!(
            outputs.options.iter().find(|o| o.long.as_deref() == Some("folder")).unwrap().kind,
            ValueKind::Folder
        );
        assert!(t.subcommands.iter().find(|c| c.name == "help").unwrap().is_help_command());
        assert!(!fold.is_help_command());
    }

    #[test]
    fn skyclock_walk_sees_every_registered_command() {
        let spec = CommandSpec::skyclock();
        let from_clap: Vec<String> = <crate::cli::Cli as clap::CommandFactory>::command()
            .get_subcommands()
            .map(|c| c.get_name().to_string())
            .collect();
        assert!(from_clap.len() >= 10);
        for name in &from_clap {
            assert!(spec.subcommands.iter().any(|c| &c.name == name), "{name} missing from the walk");
        }
    }
}
