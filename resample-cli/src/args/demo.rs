//! Flags of `rerate demo`.

use std::path::PathBuf;

use clap::Args;

/// Options of `rerate demo`.
#[derive(Debug, Args)]
pub struct DemoArgs {
    /// Folder for the demo files (created if missing). Only the demo's own files
    /// (demo-jingle-*.wav) in it are written, replaced or removed.
    #[arg(short = 'o', long = "output", default_value = "rerate-demo")]
    pub output: PathBuf,
    /// Print the reports as JSON lines.
    #[arg(long)]
    pub json: bool,
}
