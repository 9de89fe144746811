//! Audio files: the input seam and the formats behind it.
//!
//! Commands open inputs through [`Input`], which hides the format: its
//! [`info`](Input::info) and blocks of frames as floating point, full scale ±1.0. WAV
//! ([`wav`]) is the first format; another is one new module here and one new variant of
//! [`Input`], chosen in [`Input::open`] by the file's first bytes.

pub mod wav;

use std::io::{Read, Seek};
use std::path::Path;

use resample_core::Sample;

use wav::metadata::Found;
pub use wav::{Encoding, NonFinite, WavInfo};
use wav::{WavError, WavReader};

/// An input file open for streaming reads, whatever its format.
#[derive(Debug)]
#[non_exhaustive]
pub enum Input {
    /// A RIFF/WAVE file.
    Wav(WavReader),
}

impl Input {
    /// Open and check an input file: a regular file, a pipe (read as a stream, front to
    /// back), or `-` for standard input ([`WavReader::open`]).
    pub fn open(path: &Path) -> Result<Self, WavError> {
        WavReader::open(path).map(Self::Wav)
    }

    /// Check an input held by any seekable reader (bytes in memory, an open file), from
    /// its first byte.
    pub fn from_reader<R: Read + Seek + Send + 'static>(r: R) -> Result<Self, WavError> {
        WavReader::from_reader(r).map(Self::Wav)
    }

    /// What the file's header says.
    pub fn info(&self) -> &WavInfo {
        match self {
            Self::Wav(r) => r.info(),
        }
    }

    /// What was wrong with the header and what was done about it.
    pub fn header_warning(&self) -> Option<&str> {
        match self {
            Self::Wav(r) => r.header_warning(),
        }
    }

    /// Whether the frame count is known before reading (not for a stream whose header
    /// never got its sizes: it is read to its end).
    pub fn length_known(&self) -> bool {
        match self {
            Self::Wav(r) => r.length_known(),
        }
    }

    /// The input's channel mask (speaker positions), if its format gives one.
    pub fn channel_mask(&self) -> Option<u32> {
        match self {
            Self::Wav(r) => r.channel_mask(),
        }
    }

    /// The metadata chunks before the audio.
    pub fn chunks_before_data(&self) -> &[Found] {
        match self {
            Self::Wav(r) => r.chunks_before_data(),
        }
    }

    /// Once the audio is read: the metadata chunks after it, and notes on what could not
    /// be read there.
    pub fn chunks_after_data(&mut self) -> Result<(Vec<Found>, Vec<String>), WavError> {
        match self {
            Self::Wav(r) => r.chunks_after_data(),
        }
    }

    /// Frames read so far.
    pub fn frames_read(&self) -> u64 {
        match self {
            Self::Wav(r) => r.frames_read(),
        }
    }

    /// Non-finite samples replaced by 0 so far (with [`NonFinite::Zero`]).
    pub fn sanitized(&self) -> u64 {
        match self {
            Self::Wav(r) => r.sanitized(),
        }
    }

    /// Read up to `buf.len() / channels` frames, interleaved, full scale ±1.0; 0 at the end.
    pub fn read_frames<T: Sample>(
        &mut self,
        buf: &mut [T],
        non_finite: NonFinite,
    ) -> Result<usize, WavError> {
        match self {
            Self::Wav(r) => r.read_frames(buf, non_finite),
        }
    }
}
