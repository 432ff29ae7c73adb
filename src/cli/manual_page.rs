//! `skyclock manual-page`: the roff manual page (section 1), generated from the
//! command-line definition, with every command's options and worked example.

use std::path::PathBuf;

use anyhow::Result;
use clap::Args as ClapArgs;

use super::manual::roff::manual_page;
use super::manual::{CommandSpec, print_or_write};

const EXAMPLE: &str = "Example:
  skyclock manual-page --output skyclock.1 && man ./skyclock.1
  skyclock manual-page | man -l -
  mkdir -p ~/.local/share/man/man1 && skyclock manual-page --output ~/.local/share/man/man1/skyclock.1

  The page lists every command with its options and the same worked examples as --help
  (invented stars such as Vega Nova, invented sites such as Mount Example).";

/// Arguments of `skyclock manual-page`.
#[derive(Debug, ClapArgs)]
#[command(after_help = EXAMPLE)]
pub struct Args {
    /// Write the page to this file (atomically) instead of standard output.
    #[arg(long, value_name = "FILE")]
    pub output: Option<PathBuf>,
}

/// Runs the command.
pub fn run(a: Args) -> Result<()> {
    let page = manual_page(&CommandSpec::skyclock(), env!("CARGO_PKG_VERSION"));
    print_or_write(&page, a.output.as_deref())?;
    if let Some(p) = &a.output {
        eprintln!("wrote {}", p.display());
    }
    Ok(())
}
