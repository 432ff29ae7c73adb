//! The command line's side of the output guard: every path option of the command that was
//! run is sorted into inputs and outputs by its name (`--output`, `--<thing>-output`,
//! `--summary`, `--figure`, `--<thing>-figure` are outputs; every other path option is an
//! input), and [`skyclock::table::guard::check_outputs`] refuses any clash before the command
//! starts. A new command's path options are covered without further work.
//!
//! Also here: a closed standard output (`skyclock … | head`) ends the program quietly with
//! exit status 0 instead of a panic message; an interrupt (SIGINT, SIGTERM, SIGHUP) removes
//! the unfinished output files of the run and ends it with status 128 + the signal number.

use std::path::PathBuf;
use std::sync::atomic::{AtomicBool, Ordering};

use anyhow::Result;
use skyclock::table::guard::{NamedPath, check_outputs};

/// Whether the option with clap id `id` names a file the command writes.
pub fn is_output_option(id: &str) -> bool {
    id == "output" || id == "summary" || id == "figure" || id.ends_with("_output") || id.ends_with("_figure")
}

/// Options naming a folder the command writes into (checked by the command itself).
fn is_output_folder_option(id: &str) -> bool {
    id.ends_with("_folder")
}

/// The path options given to the subcommand in `matches`, as (inputs, outputs).
pub fn named_paths(matches: &clap::ArgMatches) -> (Vec<NamedPath>, Vec<NamedPath>) {
    let mut inputs = Vec::new();
    let mut outputs = Vec::new();
    let Some((_, sub)) = matches.subcommand() else {
        return (inputs, outputs);
    };
    for id in sub.ids() {
        let id = id.as_str();
        let Ok(Some(values)) = sub.try_get_many::<PathBuf>(id) else {
            continue;
        };
        let option = format!("--{}", id.replace('_', "-"));
        for path in values {
            let named = NamedPath::new(option.clone(), path.clone());
            if is_output_option(id) {
                outputs.push(named);
            } else if !is_output_folder_option(id) {
                inputs.push(named);
            }
        }
    }
    (inputs, outputs)
}

/// Refuses a command line whose outputs (or their sidecars) name an input or each other.
pub fn check_command_line(matches: &clap::ArgMatches) -> Result<()> {
    let (inputs, outputs) = named_paths(matches);
    check_outputs(&inputs, &outputs)?;
    Ok(())
}

static STDOUT_CLOSED: AtomicBool = AtomicBool::new(false);

/// Whether a panic message says standard output could not be written because it was closed.
fn says_closed_stdout(message: &str) -> bool {
    message.contains("failed printing to stdout")
        && (message.contains("Broken pipe") || message.contains("os error 32"))
}

/// Installs a panic hook that stays silent (and remembers it) when the panic is a failed
/// print to a closed standard output; every other panic is reported as usual.
pub fn quiet_on_closed_stdout() {
    let default = std::panic::take_hook();
    std::panic::set_hook(Box::new(move |info| {
        let message = info
            .payload()
            .downcast_ref::<String>()
            .map(String::as_str)
            .or_else(|| info.payload().downcast_ref::<&str>().copied())
            .unwrap_or("");
        if says_closed_stdout(message) {
            STDOUT_CLOSED.store(true, Ordering::SeqCst);
        } else {
            default(info);
        }
    }));
}

/// Whether the last panic was a print to a closed standard output.
pub fn stdout_was_closed() -> bool {
    STDOUT_CLOSED.load(Ordering::SeqCst)
}

/// Whether an error returned by a command is a write to a closed standard output.
pub fn is_closed_stdout(e: &anyhow::Error) -> bool {
    e.chain().any(|c| c.downcast_ref::<std::io::Error>().is_some_and(|io| io.kind() == std::io::ErrorKind::BrokenPipe))
}

/// Ends the program with status 0 after the reader of standard output went away. When
/// `dropped` finished outputs were held back for the all-or-nothing commit and removed,
/// stderr says so, since the command did not finish.
pub fn end_on_closed_stdout(dropped: usize) -> ! {
    if dropped > 0 {
        eprintln!(
            "note: standard output was closed before the command finished; the {dropped} output file(s) of this run were not written"
        );
    }
    std::process::exit(0)
}

/// Starts a thread that waits for SIGINT, SIGTERM or SIGHUP; on the first one it removes
/// every temporary file the run owns ([`skyclock::table::guard::abandon_run`]: unfinished
/// outputs and finished ones still waiting for the all-or-nothing commit), says so on
/// stderr and exits with status 128 + the signal number (130 for Ctrl-C, 143 for SIGTERM).
/// Earlier outputs of the same names are left as they were. SIGKILL cannot be caught; the
/// next run writing the same output removes what a killed run left
/// ([`skyclock::table::guard::remove_stale_temporaries`]).
pub fn remove_temporaries_on_interrupt() {
    use signal_hook::consts::{SIGHUP, SIGINT, SIGTERM};
    // Registration fails only if the signals cannot be handled at all; the run then goes on
    // with the default behaviour (stale temporaries are still removed by the next run).
    let Ok(mut signals) = signal_hook::iterator::Signals::new([SIGINT, SIGTERM, SIGHUP]) else {
        return;
    };
    std::thread::spawn(move || {
        if let Some(signal) = signals.forever().next() {
            let removed = skyclock::table::guard::abandon_run();
            let name = match signal {
                SIGINT => "SIGINT (interrupt)",
                SIGTERM => "SIGTERM",
                _ => "SIGHUP",
            };
            eprintln!(
                "error: stopped by {name}; {removed} unfinished output file(s) of this run removed, earlier outputs left as they were"
            );
            std::process::exit(128 + signal);
        }
    });
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn output_options_are_told_from_inputs_by_name() {
        for id in ["output", "summary", "figure", "peaks_output", "model_output", "orbit_figure"] {
            assert!(is_output_option(id), "{id}");
        }
        for id in ["input", "sites_file", "source_file", "model", "template", "ephemeris_summary", "leap_seconds"] {
            assert!(!is_output_option(id), "{id}");
        }
    }
}
