//! `skyclock demo`: the whole chain on the invented scenario in `datasets/`.

use std::path::PathBuf;

use anyhow::Result;
use clap::Args as ClapArgs;

/// Arguments of `skyclock demo`.
#[derive(Debug, ClapArgs)]
pub struct Args {
    /// Folder for the demo's outputs.
    #[arg(long, default_value = "demo-output")]
    pub output_folder: PathBuf,
}

/// Runs the command.
pub fn run(a: Args) -> Result<()> {
    crate::demo::run_demo(&a.output_folder)
}
