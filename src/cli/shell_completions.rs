//! `skyclock shell-completions`: a completion script for bash, zsh or fish, generated from
//! the command-line definition (so it always matches the commands of this build).

use std::path::PathBuf;

use anyhow::Result;
use clap::Args as ClapArgs;

use super::manual::completions::{Shell, completion_script};
use super::manual::{CommandSpec, print_or_write};

const EXAMPLE: &str = "Example:
  source <(skyclock shell-completions bash)            # this bash session
  skyclock shell-completions bash --output ~/.local/share/bash-completion/completions/skyclock
  skyclock shell-completions zsh --output ~/.zfunc/_skyclock   # with fpath+=(~/.zfunc)
  skyclock shell-completions fish --output ~/.config/fish/completions/skyclock.fish

  Then `skyclock fold-curve --in<TAB>` completes to --input and offers file names, e.g.
  vega_nova_photometry.csv for the invented star Vega Nova observed at Mount Example.";

/// Arguments of `skyclock shell-completions`.
#[derive(Debug, ClapArgs)]
#[command(after_help = EXAMPLE)]
pub struct Args {
    /// The shell to write a completion script for.
    #[arg(value_enum)]
    pub shell: Shell,
    /// Write the script to this file (atomically) instead of standard output.
    #[arg(long, value_name = "FILE")]
    pub output: Option<PathBuf>,
}

/// Runs the command.
pub fn run(a: Args) -> Result<()> {
    let script = completion_script(&CommandSpec::skyclock(), a.shell);
    print_or_write(&script, a.output.as_deref())?;
    if let Some(p) = &a.output {
        eprintln!("wrote {}", p.display());
    }
    Ok(())
}
