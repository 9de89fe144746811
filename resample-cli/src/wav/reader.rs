//! Streaming WAV reader: checks what the header claims against the file before trusting it
//! (nothing is ever allocated by the header's word), then hands out blocks of frames as
//! floating point, full scale ±1.0, refusing or zeroing non-finite float samples.

use std::fs::File;
use std::io::{self, BufReader, Read, Seek, SeekFrom};
use std::path::Path;

use resample_core::Sample;

use super::chunks::{scan, Layout};
use super::encoding::Encoding;
use super::error::WavError;

/// Read buffer size.
const READ_BUFFER: usize = 256 << 10;

/// What to do with NaN or infinite float samples.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum NonFinite {
    /// Stop with [`WavError::NonFinite`] naming the frame and channel.
    #[default]
    Refuse,
    /// Replace them with 0 and count them ([`WavReader::sanitized`]).
    Zero,
}

/// What the header of a checked WAV file says.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct WavInfo {
    /// Sample rate, Hz (never 0).
    pub sample_rate: u32,
    /// Channels (never 0).
    pub channels: u16,
    /// Sample encoding.
    pub encoding: Encoding,
    /// Frames of audio (the file holds at least this many bytes of them).
    pub frames: u64,
}

impl WavInfo {
    /// Duration in seconds.
    pub fn seconds(&self) -> f64 {
        self.frames as f64 / f64::from(self.sample_rate)
    }
}

/// The bytes hound reads: a clean header, then the file from its first audio byte.
type Stream = io::Chain<io::Cursor<Vec<u8>>, BufReader<File>>;

/// A WAV file open for streaming reads.
pub struct WavReader {
    inner: hound::WavReader<Stream>,
    info: WavInfo,
    frames_read: u64,
    sanitized: u64,
}

impl std::fmt::Debug for WavReader {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("WavReader")
            .field("info", &self.info)
            .field("frames_read", &self.frames_read)
            .finish_non_exhaustive()
    }
}

impl WavReader {
    /// Open and check a WAV file: header, encoding, rate, channels, and that the file holds
    /// the audio its header declares.
    pub fn open(path: &Path) -> Result<Self, WavError> {
        let mut file = File::open(path).map_err(|e| WavError::io("cannot open", e))?;
        let size = file
            .metadata()
            .map_err(|e| WavError::io("cannot read", e))?
            .len();
        if size == 0 {
            return Err(WavError::Empty);
        }
        let mut magic = [0u8; 12];
        let got = read_up_to(&mut file, &mut magic)?;
        match (&magic[0..4.min(got)], got) {
            (b"RIFF", 12) if &magic[8..12] == b"WAVE" => {}
            (b"RIFF", 12) => return Err(WavError::NotWav("a RIFF file, but not WAVE".into())),
            (b"RF64" | b"BW64", _) => {
                return Err(WavError::Unsupported(
                    "RF64/BW64 container (files over 4 GiB)".into(),
                ))
            }
            (b"RIFX", _) => return Err(WavError::Unsupported("big-endian RIFX container".into())),
            (b"RIFF", _) => return Err(WavError::HeaderTruncated),
            _ if got < 4 => return Err(WavError::NotWav("shorter than a RIFF header".into())),
            _ => return Err(WavError::NotWav("no RIFF tag at the start".into())),
        }
        let layout = scan(&mut file, size)?;
        let available = size - layout.data_offset;
        // hound parses the format chunk and decodes samples; it is given a clean header
        // followed by the audio bytes.
        file.seek(SeekFrom::Start(layout.data_offset))
            .map_err(|e| WavError::io("cannot read", e))?;
        let stream: Stream = io::Cursor::new(layout.clean_header())
            .chain(BufReader::with_capacity(READ_BUFFER, file));
        let inner = hound::WavReader::new(stream).map_err(|e| map_open_error(e, &layout))?;
        let spec = inner.spec();
        let encoding =
            Encoding::from_spec(&spec).ok_or_else(|| WavError::Unsupported(layout.describe()))?;
        if spec.sample_rate == 0 {
            return Err(WavError::ZeroRate);
        }
        if spec.sample_rate > resample_core::MAX_RATE {
            return Err(WavError::OutOfRange(format!(
                "the header declares a sample rate of {} Hz, above the {} Hz rerate accepts",
                spec.sample_rate,
                resample_core::MAX_RATE
            )));
        }
        if usize::from(spec.channels) > resample_core::MAX_CHANNELS {
            return Err(WavError::OutOfRange(format!(
                "the header declares {} channels, more than the {} rerate accepts",
                spec.channels,
                resample_core::MAX_CHANNELS
            )));
        }
        let declared = u64::from(layout.data_len);
        if declared > available {
            return Err(WavError::Truncated {
                declared,
                available,
            });
        }
        let info = WavInfo {
            sample_rate: spec.sample_rate,
            channels: spec.channels,
            encoding,
            frames: u64::from(inner.duration()),
        };
        Ok(Self {
            inner,
            info,
            frames_read: 0,
            sanitized: 0,
        })
    }

    /// What the header says.
    pub fn info(&self) -> &WavInfo {
        &self.info
    }

    /// Frames read so far.
    pub fn frames_read(&self) -> u64 {
        self.frames_read
    }

    /// Non-finite samples replaced by 0 so far (with [`NonFinite::Zero`]).
    pub fn sanitized(&self) -> u64 {
        self.sanitized
    }

    /// Read up to `buf.len() / channels` frames, interleaved, full scale ±1.0. Returns the
    /// frames read; 0 at the end of the audio.
    pub fn read_frames<T: Sample>(
        &mut self,
        buf: &mut [T],
        non_finite: NonFinite,
    ) -> Result<usize, WavError> {
        let ch = usize::from(self.info.channels);
        let want = ((buf.len() / ch) as u64).min(self.info.frames - self.frames_read) as usize;
        if want == 0 {
            return Ok(0);
        }
        let n = want * ch;
        let first_frame = self.frames_read;
        let frames = self.info.frames;
        let ended = |i: usize| WavError::EndedEarly {
            frame: first_frame + (i / ch) as u64,
            frames,
        };
        let map = |e: hound::Error, i: usize| match e {
            hound::Error::IoError(ref io) if is_eof(io) => ended(i),
            hound::Error::IoError(io) => WavError::io("cannot read", io),
            other => WavError::Malformed(other.to_string()),
        };
        match self.info.encoding {
            Encoding::Int(_) => {
                let inv = 1.0 / self.info.encoding.scale();
                let mut it = self.inner.samples::<i32>();
                for (i, slot) in buf[..n].iter_mut().enumerate() {
                    let code = it.next().ok_or_else(|| ended(i))?.map_err(|e| map(e, i))?;
                    *slot = T::from_f64_lossy(f64::from(code) * inv);
                }
            }
            Encoding::Float32 => {
                let mut it = self.inner.samples::<f32>();
                for (i, slot) in buf[..n].iter_mut().enumerate() {
                    let v = it.next().ok_or_else(|| ended(i))?.map_err(|e| map(e, i))?;
                    if v.is_finite() {
                        *slot = T::from_f64_lossy(f64::from(v));
                    } else if non_finite == NonFinite::Zero {
                        *slot = T::zero();
                        self.sanitized += 1;
                    } else {
                        return Err(WavError::NonFinite {
                            kind: if v.is_nan() {
                                "NaN"
                            } else if v > 0.0 {
                                "+Inf"
                            } else {
                                "-Inf"
                            },
                            frame: first_frame + (i / ch) as u64,
                            channel: (i % ch) as u16,
                        });
                    }
                }
            }
        }
        self.frames_read += want as u64;
        Ok(want)
    }
}

fn read_up_to(file: &mut File, buf: &mut [u8]) -> Result<usize, WavError> {
    let mut got = 0;
    while got < buf.len() {
        match file.read(&mut buf[got..]) {
            Ok(0) => break,
            Ok(k) => got += k,
            Err(e) if e.kind() == io::ErrorKind::Interrupted => {}
            Err(e) => return Err(WavError::io("cannot read", e)),
        }
    }
    Ok(got)
}

fn is_eof(e: &io::Error) -> bool {
    // hound reports a short read as `Other` with its own text.
    e.kind() == io::ErrorKind::UnexpectedEof || e.kind() == io::ErrorKind::Other
}

fn map_open_error(e: hound::Error, layout: &Layout) -> WavError {
    match e {
        hound::Error::IoError(ref io) if is_eof(io) => WavError::HeaderTruncated,
        hound::Error::IoError(io) => WavError::io("cannot read", io),
        hound::Error::FormatError("file contains zero channels") => {
            WavError::Malformed("the header declares 0 channels".into())
        }
        hound::Error::FormatError(m)
            if m.contains("bits per sample is not") || m.contains("multiple of 8") =>
        {
            WavError::Unsupported(layout.describe())
        }
        hound::Error::FormatError(m) => WavError::Malformed(m.to_string()),
        hound::Error::Unsupported => WavError::Unsupported(layout.describe()),
        other => WavError::Malformed(other.to_string()),
    }
}
