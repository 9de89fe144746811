//! The command line: the clap structures of every command (one file each), the values
//! several commands share (rates, word lengths, dither, the sweep's shape, report options),
//! and the one validation step that turns a bad value into a usage error (exit status 2)
//! before any work starts.

pub mod convert;
pub mod demo;
pub mod design;
pub mod grade;
pub mod rate;
pub mod sweep;
pub mod tradeoff;
pub mod verify;

use std::path::PathBuf;

use clap::{Args, Parser, Subcommand, ValueEnum};
use resample_core::limits::{MAX_PASSBAND, MAX_STOPBAND_DB, MIN_PASSBAND, MIN_STOPBAND_DB};

use crate::audio::wav::Dither;
use crate::exit::UsageError;

pub use sweep::SweepOpts;

/// Sample-rate conversion you can measure.
#[derive(Debug, Parser)]
#[command(name = "rerate", version, about, long_about = None)]
pub struct Cli {
    /// What to do.
    #[command(subcommand)]
    pub command: Command,
}

/// The commands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Print (or export) the filter a conversion would use.
    Design(design::DesignArgs),
    /// Convert WAV files (one file, several, or folders) to another sample rate.
    Convert(convert::ConvertArgs),
    /// The built-in demo: a generated jingle converted to 48 kHz and 16 kHz.
    Demo(demo::DemoArgs),
    /// Sweep-through test of our own converter: exit 0 when it meets the request, 1 if not.
    Verify(verify::VerifyArgs),
    /// Write the test sweep (WAV) to run through any other converter.
    #[command(after_help = sweep::CAUTION)]
    Sweep(sweep::SweepArgs),
    /// Measure another converter's output of the sweep.
    Grade(grade::GradeArgs),
    /// Table (and plot) of filter length against measured quality and speed.
    Tradeoff(tradeoff::TradeoffArgs),
}

/// `--phase`: the filter's phase response.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum PhaseArg {
    /// Linear phase: every frequency delayed alike, by half the filter (the default).
    Linear,
    /// Minimum phase: the same magnitude response with a fraction of the delay, which then
    /// varies with frequency.
    Minimum,
}

impl PhaseArg {
    /// The core's phase for this choice.
    pub fn phase(self) -> resample_core::Phase {
        match self {
            Self::Linear => resample_core::Phase::Linear,
            Self::Minimum => resample_core::Phase::Minimum,
        }
    }
}

/// Dither choices.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum DitherArg {
    /// Triangular-PDF dither, 2 LSB peak to peak.
    Tpdf,
    /// Plain rounding.
    None,
}

impl DitherArg {
    /// The writer's dither for this choice.
    pub fn dither(self) -> Dither {
        match self {
            Self::Tpdf => Dither::Tpdf,
            Self::None => Dither::None,
        }
    }
}

/// `--bits N`: an integer word length rerate writes (8, 16, 24 or 32), parsed the same way
/// by every command that takes it.
pub fn parse_bits(text: &str) -> Result<u16, String> {
    match text.trim() {
        "8" => Ok(8),
        "16" => Ok(16),
        "24" => Ok(24),
        "32" => Ok(32),
        _ => Err(format!(
            "'{text}' is not a word length rerate writes (8, 16, 24 or 32)"
        )),
    }
}

/// `--plot-view`: which picture `--plot` draws.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum PlotViewArg {
    /// The strongest unwanted component per input frequency against the request (margin
    /// shaded), and the measured response down to the stopband floor (the default).
    Margin,
    /// The output in time and frequency, levels on a colour scale, and the passband.
    Spectrogram,
}

impl PlotViewArg {
    /// The picture for this choice.
    pub fn view(self) -> crate::report::plot::View {
        match self {
            Self::Margin => crate::report::plot::View::Margin,
            Self::Spectrogram => crate::report::plot::View::Spectrogram,
        }
    }
}

/// `--plot FILE`: a path ending in `.png` or `.svg` (either case), so that a picture of
/// an unknown kind is a usage error before any work.
pub fn parse_plot_path(text: &str) -> Result<PathBuf, String> {
    let path = PathBuf::from(text);
    let ext = path
        .extension()
        .map(|e| e.to_string_lossy().to_ascii_lowercase());
    match ext.as_deref() {
        Some("png" | "svg") => Ok(path),
        _ => Err(format!("'{text}': the plot file must end in .png or .svg")),
    }
}

/// Report options shared by `verify` and `grade`.
#[derive(Debug, Args)]
pub struct ReportArgs {
    /// Print one JSON object instead of text.
    #[arg(long)]
    pub json: bool,
    /// Draw a picture of the measurement to FILE (.png or .svg); see --plot-view.
    #[arg(long, value_name = "FILE", value_parser = parse_plot_path)]
    pub plot: Option<PathBuf>,
    /// Which picture --plot draws: margin (unwanted level per input frequency against the
    /// request, and the response down to the stopband floor) or spectrogram (the output in
    /// time and frequency).
    #[arg(long, value_enum, default_value_t = PlotViewArg::Margin, requires = "plot")]
    pub plot_view: PlotViewArg,
    /// Overwrite FILE given to --plot if it exists.
    #[arg(long)]
    pub force: bool,
}

/// Check a stopband attenuation and a passband edge against what the core accepts, so that
/// a bad value is a usage error (exit status 2) in every command, before any work.
pub fn check_filter(stopband_db: Option<f64>, passband: f64) -> Result<(), UsageError> {
    if let Some(db) = stopband_db {
        if !(MIN_STOPBAND_DB..=MAX_STOPBAND_DB).contains(&db) {
            return Err(UsageError(format!(
                "--stopband-db {db} is out of range ({MIN_STOPBAND_DB} to {MAX_STOPBAND_DB} dB)"
            )));
        }
    }
    if !(MIN_PASSBAND..=MAX_PASSBAND).contains(&passband) {
        return Err(UsageError(format!(
            "--passband {passband} is out of range ({MIN_PASSBAND} to {MAX_PASSBAND} of the \
             lower Nyquist frequency)"
        )));
    }
    Ok(())
}

/// The stage choice of `--one-stage` (set) or the automatic choice (not set).
pub fn stage_choice(one_stage: bool) -> resample_core::StageChoice {
    if one_stage {
        resample_core::StageChoice::Single
    } else {
        resample_core::StageChoice::Auto
    }
}
