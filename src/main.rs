//! The `skyclock` program: parses the command line and runs one command.

use clap::Parser;

fn main() {
    let cli = skyclock::cli::Cli::parse();
    if let Err(e) = skyclock::cli::run(cli) {
        eprintln!("error: {e:#}");
        std::process::exit(1);
    }
}
