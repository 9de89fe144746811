//! Flags of `rerate grade`.

use std::path::PathBuf;

use clap::Args;

use super::rate::parse_rate;
use super::{ReportArgs, SweepOpts};

/// Options of `rerate grade`.
#[derive(Debug, Args)]
pub struct GradeArgs {
    /// The converter's output of the sweep (WAV: 8/16/24/32-bit integer or 32-bit float,
    /// any number of channels; every channel is measured and the worst one is reported).
    pub converted: PathBuf,
    /// Rate the sweep was made at (the converter's input rate).
    #[arg(long, value_parser = parse_rate)]
    pub source_rate: u32,
    /// The sweep's shape.
    #[command(flatten)]
    pub sweep: SweepOpts,
    /// Passband edge for the ripple, as a fraction of the lower Nyquist frequency.
    #[arg(long, default_value_t = resample_core::limits::DEFAULT_PASSBAND)]
    pub passband: f64,
    /// Pass only if the rejection is at least DB; exit 1 if not.
    #[arg(long, value_name = "DB")]
    pub expect_db: Option<f64>,
    /// How to report.
    #[command(flatten)]
    pub report: ReportArgs,
}
