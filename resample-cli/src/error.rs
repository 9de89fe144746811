//! The application's errors about files as files (existing outputs, inputs named as outputs,
//! the operating system's refusals, interruptions), apart from the WAV format's own errors
//! ([`crate::audio::wav::WavError`]), and the rule that names the file once in a message.

use std::fmt::Display;
use std::io;
use std::path::Path;

/// A problem with a file or folder that is not about its contents.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum FileError {
    /// The operating system refused or failed.
    #[error("{what}: {source}")]
    Io {
        /// What was being done.
        what: &'static str,
        /// The operating system's error.
        source: io::Error,
    },
    /// The output exists and overwriting was not allowed.
    #[error("{0}: already exists (use --force to overwrite)")]
    Exists(String),
    /// The output path names something other than a regular file (a device, a pipe, a
    /// folder), which is never replaced, not even with `--force`.
    #[error("{path}: is {kind}; rerate replaces only regular files, even with --force")]
    NotRegular {
        /// The output path.
        path: String,
        /// What it is ("a character device", "a pipe", ...).
        kind: &'static str,
    },
    /// The output path is an input file.
    #[error("{0}: is an input file; rerate never writes over an input")]
    IsInput(String),
    /// The work was interrupted (Ctrl-C or a termination signal).
    #[error("interrupted")]
    Interrupted,
}

impl FileError {
    /// An I/O error while doing `what`.
    pub fn io(what: &'static str, source: io::Error) -> Self {
        Self::Io { what, source }
    }
}

/// An error whose message may already name the file it is about.
pub trait NamesFile {
    /// Whether the message already names the file.
    fn names_the_file(&self) -> bool;
}

impl NamesFile for FileError {
    fn names_the_file(&self) -> bool {
        matches!(
            self,
            Self::Exists(_) | Self::IsInput(_) | Self::NotRegular { .. }
        )
    }
}

/// `e` as one line that names `path` once: "PATH: problem", or the message as it is when it
/// already names the file.
pub fn about_file<E>(path: &Path, e: E) -> anyhow::Error
where
    E: NamesFile + Display + std::error::Error + Send + Sync + 'static,
{
    if e.names_the_file() {
        e.into()
    } else {
        anyhow::anyhow!("{}: {e}", path.display())
    }
}
