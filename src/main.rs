//! The `skyclock` program: parses the command line and runs one command. The command line
//! ([`cli`]) and the demonstration ([`demo`]) live here, in the binary; the science is in the
//! `skyclock` library, which knows nothing of argv, terminals or clap.

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
