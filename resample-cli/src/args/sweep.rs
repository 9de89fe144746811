//! Flags of `rerate sweep`, and the sweep's shape shared with `grade`.

use std::path::PathBuf;

use anyhow::{Context, Result};
use clap::Args;
use resample_core::measure::{self, Sweep};

use super::rate::parse_rate;
use super::{parse_bits, DitherArg};

/// The caution printed by `sweep` and shown in its help.
pub const CAUTION: &str = "CAUTION: a sweep up to the top of the audio band at a high level can \
damage hearing and loudspeakers (tweeters especially). Do not listen to it at a high volume: \
turn the playback level well down before playing it, or do not play it at all; it is made to be \
measured.";

/// The sweep's shape, shared by `sweep` and `grade` (they must match).
#[derive(Debug, Args, Clone)]
pub struct SweepOpts {
    /// Sweep duration in seconds, from 20 Hz to 0.999 of the Nyquist frequency (fades and
    /// silence come on top).
    #[arg(long, default_value_t = measure::DEFAULT_SECONDS)]
    pub seconds: f64,
    /// Peak level of the sweep in dBFS (-60 to 0).
    #[arg(long, default_value_t = measure::DEFAULT_LEVEL_DBFS, allow_negative_numbers = true)]
    pub level: f64,
    /// Append one second of steady probe tones across the band edge of a conversion to
    /// RATE (the lower Nyquist frequency), which `grade` reads to resolve the stopband
    /// there to the hertz; give the same RATE to `grade`.
    #[arg(long, value_name = "RATE", value_parser = parse_rate)]
    pub for_rate: Option<u32>,
}

impl SweepOpts {
    /// The sweep at `rate`, checked.
    pub fn sweep(&self, rate: u32) -> Result<Sweep> {
        let mut s = Sweep::new(rate)
            .seconds(self.seconds)
            .level_dbfs(self.level);
        if let Some(b) = self.for_rate {
            s = s.edge_probes(b);
        }
        s.check().context("cannot make the sweep")?;
        Ok(s)
    }
}

/// Options of `rerate sweep`.
#[derive(Debug, Args)]
#[command(after_help = CAUTION)]
pub struct SweepArgs {
    /// Sample rate of the sweep (48000, 48k, 44.1k, 44.1kHz).
    #[arg(long, value_parser = parse_rate)]
    pub rate: u32,
    /// The WAV file to write.
    #[arg(short = 'o', long = "output", value_name = "FILE")]
    pub output: PathBuf,
    /// The sweep's shape.
    #[command(flatten)]
    pub sweep: SweepOpts,
    /// Store 32-bit float samples (the default).
    #[arg(long, conflicts_with = "bits")]
    pub float: bool,
    /// Store integer samples of this many bits (16, 24 or 32). 16 bits limit what can be
    /// measured to about 98 dB.
    #[arg(long, value_name = "N", value_parser = parse_bits)]
    pub bits: Option<u16>,
    /// Dither when writing 16- or 24-bit integers (fixed seed: same options, same bytes).
    /// Off by default: plain rounding leaves a lower floor for `grade` to measure against.
    #[arg(long, value_enum, default_value_t = DitherArg::None)]
    pub dither: DitherArg,
    /// Overwrite FILE if it exists.
    #[arg(long)]
    pub force: bool,
}
