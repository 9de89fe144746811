//! `rerate sweep`: write the test sweep to a WAV file, to run through any other converter
//! and then `rerate grade` its output.

use std::io::Write;
use std::path::{Path, PathBuf};

use anyhow::{bail, Context, Result};
use clap::Args;
use resample_cli::wav::{Dither, Encoding, WavError, WavWriter, WriterOptions};
use resample_core::measure::{self, Sweep};

use crate::cmd::convert::DitherArg;
use crate::rate::parse_rate;

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
    #[command(flatten)]
    pub sweep: SweepOpts,
    /// Store 32-bit float samples (the default).
    #[arg(long, conflicts_with = "bits")]
    pub float: bool,
    /// Store integer samples of this many bits (16, 24 or 32). 16 bits limit what can be
    /// measured to about 98 dB.
    #[arg(long, value_name = "N")]
    pub bits: Option<u16>,
    /// Dither when writing 16- or 24-bit integers (fixed seed: same options, same bytes).
    /// Off by default: plain rounding leaves a lower floor for `grade` to measure against.
    #[arg(long, value_enum, default_value_t = DitherArg::None)]
    pub dither: DitherArg,
    /// Overwrite FILE if it exists.
    #[arg(long)]
    pub force: bool,
}

/// Run `rerate sweep`.
pub fn run(args: &SweepArgs) -> Result<()> {
    let encoding = match args.bits {
        None => Encoding::Float32,
        Some(b @ (16 | 24 | 32)) => Encoding::Int(b),
        Some(b) => bail!("--bits {b}: choose 16, 24 or 32 (or --float)"),
    };
    let sweep = args.sweep.sweep(args.rate)?;
    let x = sweep.samples()?;
    let name = args.output.display();
    // Dither: unlike `convert` (TPDF by default), a sweep is written with plain rounding
    // unless `--dither tpdf` is asked for. The sweep is a stimulus: its requantization
    // error passes through the converter under test and sets the floor `grade` can see.
    // `grade` reports the strongest unwanted component, and TPDF dither triples the error
    // power (1/4 instead of 1/12 LSB^2), so it lowers that ceiling. Measured here with
    // this build (44.1k sweep, 2 s, `convert --out-rate 48k --float`, then `grade`):
    // 16-bit at -1 dBFS 98.1 dB with TPDF vs 102.4 dB rounded; 16-bit at -40 dBFS
    // 58.4 vs 60.4 dB; 24-bit at -1 dBFS 145.6 vs 150.0 dB. The rounding error of a
    // full-level sweep is spread like noise rather than collected into harmonics, so the
    // undithered file measures better at every level tried. Float (the default) needs
    // neither.
    let opts = WriterOptions {
        dither: match args.dither {
            DitherArg::Tpdf => Dither::Tpdf,
            DitherArg::None => Dither::None,
        },
        force: args.force,
        expected_frames: Some(x.len() as u64),
        ..WriterOptions::new(args.rate, 1, encoding)
    };
    let named = |e| wav_error(&args.output, e);
    let mut writer = WavWriter::create(&args.output, &opts).map_err(named)?;
    writer.write_frames(&x).map_err(named)?;
    let dithered = writer.dithers();
    // Until `finish`, the samples live in a temporary file beside FILE, removed on error.
    writer.finish().map_err(named)?;
    // Printed with `?`, not `println!`: a closed pipe is an error, not a panic.
    let mut out = std::io::stdout().lock();
    let kind = if dithered {
        format!("{encoding}, TPDF dither")
    } else {
        encoding.to_string()
    };
    writeln!(
        out,
        "wrote {name}: {:.0} Hz to {:.0} Hz in {} s at {} dBFS peak, {} Hz, {}, {:.2} s in all",
        sweep.f1(),
        sweep.end_frequency(),
        sweep.duration(),
        sweep.level(),
        args.rate,
        kind,
        x.len() as f64 / f64::from(args.rate)
    )?;
    writeln!(
        out,
        "grade a converter's output of it with: rerate grade OUT.wav --source-rate {} --seconds {} --level {}{}",
        args.rate,
        sweep.duration(),
        sweep.level(),
        sweep
            .edge_rate()
            .map_or_else(String::new, |b| format!(" --for-rate {b}"))
    )?;
    writeln!(out, "{CAUTION}")?;
    Ok(())
}

/// A WAV error as one line that names the file once.
pub fn wav_error(path: &Path, e: WavError) -> anyhow::Error {
    match e {
        // These already name the file.
        WavError::Exists(_) | WavError::IsInput(_) => e.into(),
        other => anyhow::anyhow!("{}: {other}", path.display()),
    }
}
