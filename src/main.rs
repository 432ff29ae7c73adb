//! The `skyclock` program: parses the command line and runs one command. The command line
//! ([`cli`]) and the demonstration ([`demo`]) live here, in the binary; the science is in the
//! `skyclock` library, which knows nothing of argv, terminals or clap.

// Two clippy style lints are switched off on purpose, for the whole crate:
// - `neg_cmp_op_on_partial_ord`: `!(x > 0.0)` is how a NaN is refused together with the
//   values out of range; `x <= 0.0` would let NaN through.
// - `needless_range_loop`: numerical loops index several parallel arrays (times, values,
//   weights, design rows) by one counter, as the formulas they follow do.
// - `nonminimal_bool`: a refusal is written as the negation of what is accepted,
//   `!(x.is_finite() && x > 0.0)`, so it reads like the documented range.
// - `result_large_err`: errors carry the file, row, column and offending text; they are
//   returned once per run, never in an inner loop.
#![allow(
    clippy::neg_cmp_op_on_partial_ord,
    clippy::needless_range_loop,
    clippy::nonminimal_bool,
    clippy::result_large_err
)]

mod cli;
mod demo;

use clap::{CommandFactory, FromArgMatches};

fn main() {
    let matches = cli::Cli::command().get_matches();
    let parsed = match cli::Cli::from_arg_matches(&matches) {
        Ok(c) => c,
        Err(e) => e.exit(),
    };
    if let Err(e) = cli::guard::check_command_line(&matches) {
        eprintln!("error: {e:#}");
        std::process::exit(1);
    }
    // All outputs of a command appear together, or none: finished files wait for the end of
    // the run. The demo reads back what it writes, so its files are put in place one by one.
    let deferred = !matches!(parsed.command, cli::Command::Demo(_));
    if deferred {
        skyclock::table::guard::begin_deferred_commit();
    }
    cli::guard::quiet_on_closed_stdout();
    cli::guard::remove_temporaries_on_interrupt();
    let outcome = std::panic::catch_unwind(|| cli::run(parsed));
    match outcome {
        Ok(Ok(())) => {
            if let Err(e) = skyclock::table::guard::commit_deferred() {
                eprintln!("error: {e:#}");
                std::process::exit(1);
            }
        }
        Ok(Err(e)) => {
            let dropped = skyclock::table::guard::discard_deferred();
            if cli::guard::is_closed_stdout(&e) {
                cli::guard::end_on_closed_stdout(dropped);
            }
            eprintln!("error: {e:#}");
            std::process::exit(1);
        }
        Err(_) => {
            let dropped = skyclock::table::guard::discard_deferred();
            if cli::guard::stdout_was_closed() {
                cli::guard::end_on_closed_stdout(dropped);
            }
            std::process::exit(101);
        }
    }
}
