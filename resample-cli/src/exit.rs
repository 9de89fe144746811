//! How a run of rerate ends: one exit status type used by every command, and the error that
//! marks a command-line mistake.
//!
//! | status | meaning |
//! | --- | --- |
//! | 0 | success |
//! | 1 | a measured check failed (`verify`, `grade --expect-db`), or some files of a batch failed |
//! | 2 | bad usage: an unknown flag, or a flag's value out of range (nothing was done) |
//! | 3 | the work could not be done: bad input, an I/O error, an impossible design |
//! | 130 | interrupted (Ctrl-C or a termination signal); unfinished outputs were removed |
//!
//! A standard output or error closed early never changes a conversion's status (printing
//! stops, the work goes on); a command that only prints exits with 3 when its standard
//! output closes before the report ends.

use std::process::ExitCode;

/// The exit status of a run.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Status {
    /// Everything asked was done (and every check passed).
    Success,
    /// A measured check failed, or some files of a batch failed.
    CheckFailed,
    /// A command-line mistake; nothing was done.
    Usage,
    /// The work could not be done.
    Failed,
    /// Stopped by a signal.
    Interrupted,
}

impl Status {
    /// The process exit code (128 + SIGINT for an interruption: common practice, no source).
    pub fn code(self) -> u8 {
        match self {
            Self::Success => 0,
            Self::CheckFailed => 1,
            Self::Usage => 2,
            Self::Failed => 3,
            Self::Interrupted => 130,
        }
    }
}

impl From<Status> for ExitCode {
    fn from(s: Status) -> Self {
        ExitCode::from(s.code())
    }
}

/// A command-line mistake found after parsing (a value out of range): ends the run with
/// [`Status::Usage`].
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{0}")]
pub struct UsageError(pub String);

/// The status an error ends a run with: [`Status::Usage`] for a [`UsageError`] anywhere in
/// its chain, else [`Status::Failed`].
pub fn status_of(e: &anyhow::Error) -> Status {
    if e.chain().any(|c| c.is::<UsageError>()) {
        Status::Usage
    } else {
        Status::Failed
    }
}
