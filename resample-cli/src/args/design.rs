//! Flags of `rerate design`.

use std::path::PathBuf;

use clap::Args;

use super::rate::parse_rate;
use super::PhaseArg;

/// Options of `rerate design`.
#[derive(Debug, Args)]
pub struct DesignArgs {
    /// Input sample rate (48000, 48k, 44.1k, 44.1kHz).
    #[arg(long, value_parser = parse_rate)]
    pub in_rate: u32,
    /// Output sample rate.
    #[arg(long, value_parser = parse_rate)]
    pub out_rate: u32,
    /// Minimum stopband attenuation in dB (20 to 200).
    #[arg(long, default_value_t = resample_core::limits::DEFAULT_STOPBAND_DB)]
    pub stopband_db: f64,
    /// Passband edge as a fraction of the lower Nyquist frequency (0.5 to 0.995).
    #[arg(long, default_value_t = resample_core::limits::DEFAULT_PASSBAND)]
    pub passband: f64,
    /// Filter phase: linear (every frequency delayed alike) or minimum (a fraction of the
    /// delay, varying with frequency; same measured rejection).
    #[arg(long, value_enum, default_value_t = PhaseArg::Linear)]
    pub phase: PhaseArg,
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
    /// Print the report as one JSON object.
    #[arg(long)]
    pub json: bool,
    /// Write the prototype taps to FILE, one per line, in full f64 precision. Two stages:
    /// each stage's taps after a header line "# stage K of 2: half-band|polyphase, A Hz ->
    /// B Hz, up L, down M, N taps", in signal order.
    #[arg(long, value_name = "FILE")]
    pub export: Option<PathBuf>,
    /// Overwrite FILE given to --export if it exists.
    #[arg(long)]
    pub force: bool,
}
