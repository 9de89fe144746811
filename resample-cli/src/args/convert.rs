//! Flags of `rerate convert`.

use std::path::PathBuf;

use clap::Args;

use super::rate::parse_rate;
use super::{parse_bits, DitherArg, PhaseArg};
use crate::batch::Shard;

/// Options of `rerate convert`.
#[derive(Debug, Args)]
pub struct ConvertArgs {
    /// WAV files or folders to convert.
    #[arg(required = true, value_name = "IN")]
    pub inputs: Vec<PathBuf>,
    /// Output sample rate (48000, 48k, 44.1k, 44.1kHz).
    #[arg(long, value_parser = parse_rate)]
    pub out_rate: u32,
    /// Output file (one input file) or folder (several inputs, or a folder: its structure is
    /// mirrored). Default: NAME-RATE.wav beside each input (e.g. take-48k.wav).
    #[arg(short = 'o', long = "output", value_name = "PATH")]
    pub output: Option<PathBuf>,
    /// Descend into sub-folders of folder inputs.
    #[arg(short = 'r', long)]
    pub recursive: bool,
    /// Output integer word length: 8, 16, 24 or 32 (default: keep the input's format).
    #[arg(long, value_name = "N", value_parser = parse_bits, conflicts_with = "float")]
    pub bits: Option<u16>,
    /// Output 32-bit float.
    #[arg(long)]
    pub float: bool,
    /// Minimum stopband attenuation in dB (default: follows the output format: 8-bit 60,
    /// 16-bit 110, 24-bit and float 160, 32-bit 200).
    #[arg(long, value_name = "DB")]
    pub stopband_db: Option<f64>,
    /// Passband edge as a fraction of the lower Nyquist frequency (0.5 to 0.995).
    #[arg(long, value_name = "FRACTION", default_value_t = resample_core::limits::DEFAULT_PASSBAND)]
    pub passband: f64,
    /// Dither when writing 8-, 16- or 24-bit integers (fixed seed: same input, same bytes);
    /// [default: tpdf]. Float and 32-bit output are not requantized, so not dithered.
    #[arg(long, value_enum)]
    pub dither: Option<DitherArg>,
    /// Filter phase: linear (every frequency delayed alike) or minimum (a fraction of the
    /// delay, varying with frequency; same measured rejection).
    #[arg(long, value_enum, default_value_t = PhaseArg::Linear)]
    pub phase: PhaseArg,
    /// Gain in dB applied before conversion (e.g. -1.5 to make room for inter-sample peaks).
    #[arg(
        long,
        value_name = "DB",
        default_value_t = 0.0,
        allow_negative_numbers = true
    )]
    pub gain: f64,
    /// Make samples over full scale in integer output an error rather than a warning: the
    /// file fails (exit status 1) and its output is not kept. For unattended batches.
    #[arg(long)]
    pub refuse_clipping: bool,
    /// Replace NaN/infinite float samples with 0 and count them, instead of refusing the file.
    #[arg(long)]
    pub sanitize: bool,
    /// Files converted in parallel (default: all cores). Output bytes do not depend on it.
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u32).range(1..=4096))]
    pub jobs: Option<u32>,
    /// Only this share of the sorted batch, K/N with 0 <= K < N (for job arrays).
    #[arg(long, value_name = "K/N")]
    pub shard: Option<Shard>,
    /// Skip files whose output already exists (to resume an interrupted batch).
    #[arg(long, conflicts_with = "force")]
    pub skip_existing: bool,
    /// Overwrite existing outputs (never an input).
    #[arg(long)]
    pub force: bool,
    /// Copy chunks rerate does not know into the output verbatim (default: dropped and named
    /// in the report, since they may hold sample positions that cannot be rescaled).
    #[arg(long, conflicts_with = "strip_metadata")]
    pub keep_unknown_chunks: bool,
    /// Write the format and the audio only: no metadata chunks.
    #[arg(long)]
    pub strip_metadata: bool,
    /// Run one polyphase stage even where two stages (a half-band 2:1 or 1:2 stage beside
    /// the polyphase stage) would be chosen for cost: for A/B comparisons. Two stages are
    /// chosen only for linear phase and ratios beyond 2:1 where they measured at least 1.4x
    /// faster (e.g. 192k -> 44.1k); the report says which ran.
    #[arg(long)]
    pub one_stage: bool,
    /// The input's true clock ran PPM parts per million fast (negative: slow), -1000 to
    /// 1000, up to 6 decimals: its true rate is the header rate x (1 + PPM x 1e-6). Runs the
    /// any-ratio engine; 0 (the default) runs the fixed-ratio engine.
    #[arg(long, value_name = "PPM", value_parser = crate::clock::parse_clock_ppm, allow_negative_numbers = true, default_value = "0")]
    pub clock_ppm: crate::clock::ClockPpm,
    /// One JSON object per file and a summary object, one per line, on stdout.
    #[arg(long)]
    pub json: bool,
}
