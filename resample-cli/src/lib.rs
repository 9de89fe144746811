//! `rerate`, the command-line tool of the rerate project, as a library: the binary only
//! calls [`run`].
//!
//! Layers, from the outside in: [`args`] (flags, one validation step) → `cmd` (one
//! orchestrator per command; no command imports another) → [`convert`] and [`batch`] (one
//! file, many files) → [`audio`] (the input seam, WAV its first format) and [`io`] (staged
//! files, the folder walk, signals) → `resample_core`. [`report`] formats what the
//! commands print and draw; [`quality`] holds the defaults that follow the output format;
//! [`exit`] the exit statuses; [`error`] the application's errors.
#![deny(missing_docs)]
#![forbid(unsafe_code)]

pub mod args;
pub mod audio;
pub mod batch;
pub mod clock;
mod cmd;
pub mod convert;
pub mod demo;
pub mod error;
pub mod exit;
pub mod io;
pub mod quality;
pub mod report;

use std::process::ExitCode;

use clap::Parser;

use args::{Cli, Command};

/// Parse the command line, run the command, print any error as one line on stderr, and
/// return the exit status (see [`exit`]).
pub fn run() -> ExitCode {
    let cli = Cli::parse();
    let result = match &cli.command {
        Command::Design(a) => cmd::design::run(a),
        Command::Convert(a) => cmd::convert::run(a),
        Command::Demo(a) => cmd::demo::run(a),
        Command::Verify(a) => cmd::verify::run(a),
        Command::Sweep(a) => cmd::sweep::run(a),
        Command::Grade(a) => cmd::grade::run(a),
        Command::Tradeoff(a) => cmd::tradeoff::run(a),
    };
    match result {
        Ok(status) => status.into(),
        // A command whose work is its printed report stops when standard output closes.
        Err(e) if report::print::is_broken_pipe(&e) => {
            report::print::err_line("rerate: standard output was closed before the report ended");
            exit::Status::Failed.into()
        }
        Err(e) => {
            report::print::err_line(&format!("rerate: {e:#}"));
            exit::status_of(&e).into()
        }
    }
}
