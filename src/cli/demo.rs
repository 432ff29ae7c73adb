//! `skyclock demo`: the whole chain on the invented scenario in `datasets/`.

use std::path::PathBuf;

use anyhow::Result;
use clap::Args as ClapArgs;

const EXAMPLE: &str = "Example:
  skyclock demo --output-folder demo-output

  Reads the invented scenario in datasets/ (the eclipsing binary KX Inventa timed from
  invented observatories in mixed clocks), runs the chain and writes its tables and
  figures into demo-output/, printing what was recovered beside the truth.
  Predictions cover the first 30-day window from today (or --from DATE) with observable
  minima, so the demo gives the same verdict on any date.";

/// Arguments of `skyclock demo`.
#[derive(Debug, ClapArgs)]
#[command(after_help = EXAMPLE)]
pub struct Args {
    /// Folder for the demo's outputs.
    #[arg(long, default_value = "demo-output")]
    pub output_folder: PathBuf,
    /// Start of the prediction window, UTC date (YYYY-MM-DD; default: today). The demo
    /// lists the minima of the first 30-day window from then that holds observable ones.
    #[arg(long, value_name = "DATE")]
    pub from: Option<String>,
}

/// Runs the command.
pub fn run(a: Args) -> Result<()> {
    crate::demo::run_demo(&a.output_folder, a.from.as_deref())
}
