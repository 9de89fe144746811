//! What can be wrong with a WAV file or with writing one: each a one-line message that
//! names the problem (the caller adds the file name).

use std::io;

/// A problem reading or writing a WAV file.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum WavError {
    /// The file could not be opened, read or written.
    #[error("{what}: {source}")]
    Io {
        /// What was being done.
        what: &'static str,
        /// The operating system's error.
        source: io::Error,
    },
    /// The file has no bytes at all.
    #[error("empty file (0 bytes)")]
    Empty,
    /// Not something rerate reads audio from (a folder, a block device, a socket).
    #[error("{0}; rerate reads regular files, pipes and standard input (-)")]
    NotReadable(String),
    /// The file does not start like a RIFF/WAVE file.
    #[error("not a WAV file ({0})")]
    NotWav(String),
    /// The header ends before the audio data begins.
    #[error("truncated header: the file ends before the audio data begins")]
    HeaderTruncated,
    /// The header is present but inconsistent.
    #[error("malformed WAV header: {0}")]
    Malformed(String),
    /// The header declares more audio than the file holds.
    #[error(
        "truncated: the header declares {declared} bytes of audio but only {available} \
         follow (the file was cut short, or its header is corrupt)"
    )]
    Truncated {
        /// Bytes of audio the data chunk declares.
        declared: u64,
        /// Bytes present after the data chunk header.
        available: u64,
    },
    /// The audio ended before the declared length while reading.
    #[error("truncated: the audio data ends at frame {frame} of {frames}")]
    EndedEarly {
        /// Frames read before the end.
        frame: u64,
        /// Frames declared.
        frames: u64,
    },
    /// A sample encoding rerate does not read or write.
    #[error("unsupported encoding: {0} (supported: 8/16/24/32-bit integer PCM, 32-bit float)")]
    Unsupported(String),
    /// The sample data breaks a rule of its declared layout (e.g. padding bits set below
    /// the valid bits of a left-justified container).
    #[error("{0}")]
    BadSamples(String),
    /// The header says the sample rate is zero.
    #[error("the header declares a sample rate of 0 Hz")]
    ZeroRate,
    /// The header declares a rate or channel count outside what the converter accepts.
    #[error("{0}")]
    OutOfRange(String),
    /// A metadata chunk (or all of them together) larger than rerate reads.
    #[error(
        "the '{id}' metadata declares {len} bytes, more than the {limit} rerate reads \
         (a corrupt header?)"
    )]
    MetadataTooLarge {
        /// The chunk's id ("all metadata" for the total).
        id: String,
        /// Bytes declared.
        len: u64,
        /// The limit, bytes.
        limit: u64,
    },
    /// A float sample is NaN or infinite.
    #[error(
        "{kind} sample at frame {frame}, channel {channel} (use --sanitize to replace \
         non-finite samples with 0 and count them)"
    )]
    NonFinite {
        /// "NaN", "+Inf" or "-Inf".
        kind: &'static str,
        /// Frame index, from 0.
        frame: u64,
        /// Channel index, from 0.
        channel: u16,
    },
    /// The writer was given a buffer that is not whole frames.
    #[error("buffer of {len} samples is not a whole number of {channels}-channel frames")]
    PartialFrame {
        /// Samples given.
        len: usize,
        /// Channels per frame.
        channels: u16,
    },
    /// A problem with the file as a file (existing output, interruption, ...).
    #[error(transparent)]
    File(#[from] crate::error::FileError),
}

impl WavError {
    /// An I/O error while doing `what`.
    pub fn io(what: &'static str, source: io::Error) -> Self {
        Self::Io { what, source }
    }
}

impl crate::error::NamesFile for WavError {
    fn names_the_file(&self) -> bool {
        matches!(self, Self::File(f) if f.names_the_file())
    }
}
