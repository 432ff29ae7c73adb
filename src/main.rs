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

use clap::Parser;

fn main() {
    let cli = cli::Cli::parse();
    if let Err(e) = cli::run(cli) {
        eprintln!("error: {e:#}");
        std::process::exit(1);
    }
}
