//! `rerate`: convert WAV files between sample rates, and measure what converters deliver.
//!
//! Thin on purpose: everything is in the library ([`resample_cli::run`]); exit statuses are
//! listed in `resample_cli::exit`.
#![forbid(unsafe_code)]

fn main() -> std::process::ExitCode {
    resample_cli::run()
}
