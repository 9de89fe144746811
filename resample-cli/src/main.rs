//! `rerate`: convert WAV files between sample rates, and measure what converters deliver.
//!
//! Thin on purpose: parse flags, call `resample_core`, print. Exit codes: 0 success,
//! 1 a measured check failed (or some files of a batch failed), 2 bad usage,
//! 3 the work could not be done (bad input, I/O error, impossible design).

#![forbid(unsafe_code)]

mod cmd;
mod output;
mod plot;
mod rate;

use std::process::ExitCode;

use clap::{Parser, Subcommand};

/// Exit code: a check failed, or some files of a batch failed.
pub const EXIT_CHECK_FAILED: u8 = 1;
/// Exit code: the work could not be done.
pub const EXIT_ERROR: u8 = 3;

/// Sample-rate conversion you can measure.
#[derive(Debug, Parser)]
#[command(name = "rerate", version, about, long_about = None)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Debug, Subcommand)]
enum Command {
    /// Print (or export) the filter a conversion would use.
    Design(cmd::design::DesignArgs),
    /// Convert WAV files (one file, several, or folders) to another sample rate.
    Convert(cmd::convert::ConvertArgs),
    /// The built-in demo: a generated jingle converted to 48 kHz and 16 kHz.
    Demo(cmd::demo::DemoArgs),
    /// Sweep-through test of our own converter: exit 0 when it meets the request, 1 if not.
    Verify(cmd::verify::VerifyArgs),
    /// Write the test sweep (WAV) to run through any other converter.
    #[command(after_help = cmd::sweep::CAUTION)]
    Sweep(cmd::sweep::SweepArgs),
    /// Measure another converter's output of the sweep.
    Grade(cmd::grade::GradeArgs),
    /// Table (and plot) of filter length against measured quality and speed.
    Tradeoff(cmd::tradeoff::TradeoffArgs),
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    let result = match &cli.command {
        Command::Design(a) => cmd::design::run(a).map(|()| ExitCode::SUCCESS),
        Command::Convert(a) => cmd::convert::run(a),
        Command::Demo(a) => cmd::demo::run(a),
        Command::Verify(a) => cmd::verify::run(a),
        Command::Sweep(a) => cmd::sweep::run(a).map(|()| ExitCode::SUCCESS),
        Command::Grade(a) => cmd::grade::run(a),
        Command::Tradeoff(a) => cmd::tradeoff::run(a).map(|()| ExitCode::SUCCESS),
    };
    match result {
        Ok(code) => code,
        Err(e) => {
            eprintln!("rerate: {e:#}");
            ExitCode::from(EXIT_ERROR)
        }
    }
}
