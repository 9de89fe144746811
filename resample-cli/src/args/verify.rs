//! Flags of `rerate verify`.

use clap::Args;

use super::rate::parse_rate;
use super::{parse_bits, PhaseArg, ReportArgs};

/// Options of `rerate verify`.
#[derive(Debug, Args)]
pub struct VerifyArgs {
    /// Input sample rate (48000, 48k, 44.1k, 44.1kHz).
    #[arg(long, value_parser = parse_rate)]
    pub in_rate: u32,
    /// Output sample rate.
    #[arg(long, value_parser = parse_rate)]
    pub out_rate: u32,
    /// Minimum stopband attenuation in dB (20 to 200) to design for and check against;
    /// default: what `convert` uses for the output format (--bits / --float).
    #[arg(long)]
    pub stopband_db: Option<f64>,
    /// Check the conversion `convert` would run for integer output of N bits (its default
    /// stopband and arithmetic precision follow the format).
    #[arg(long, value_name = "N", value_parser = parse_bits, conflicts_with = "float")]
    pub bits: Option<u16>,
    /// Check the conversion for 32-bit float output (the default).
    #[arg(long)]
    pub float: bool,
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
    /// Sweep duration in seconds (longer sweeps resolve the stopband edge more finely).
    /// Default 10, or 40 where the rate pair measured leaves the edge probes little room
    /// (whole rates with a small common divisor, as clock corrections often measure: e.g.
    /// 47988 -> 8000 Hz), so that the sweep itself resolves the band next to the edge.
    #[arg(long)]
    pub seconds: Option<f64>,
    /// How to report.
    #[command(flatten)]
    pub report: ReportArgs,
}
