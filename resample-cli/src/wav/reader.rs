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

/// How the sample bytes are laid out, for the layouts decoded here in bulk (exactly as
/// hound decodes them one sample at a time).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Raw {
    /// 8-bit unsigned, offset 128.
    U8,
    /// 16-bit little-endian two's complement.
    I16,
    /// 24-bit little-endian two's complement in 3 bytes.
    I24,
    /// 24-bit little-endian two's complement in the low 3 bytes of 4.
    I24In4,
    /// 32-bit little-endian two's complement.
    I32,
    /// 32-bit little-endian IEEE float.
    F32,
}

impl Raw {
    fn of(spec: &hound::WavSpec, bytes_per_sample: u16) -> Option<Self> {
        use hound::SampleFormat::{Float, Int};
        match (spec.sample_format, bytes_per_sample, spec.bits_per_sample) {
            (Int, 1, 8) => Some(Self::U8),
            (Int, 2, 16) => Some(Self::I16),
            (Int, 3, 24) => Some(Self::I24),
            (Int, 4, 24) => Some(Self::I24In4),
            (Int, 4, 32) => Some(Self::I32),
            (Float, 4, 32) => Some(Self::F32),
            _ => None,
        }
    }

    fn bytes(self) -> usize {
        match self {
            Self::U8 => 1,
            Self::I16 => 2,
            Self::I24 => 3,
            Self::I24In4 | Self::I32 | Self::F32 => 4,
        }
    }
}

/// Where samples come from.
enum Source {
    /// The audio bytes, read in large slices and decoded here.
    Bulk { stream: Audio, raw: Raw },
    /// Any other layout hound accepted: decoded by hound sample by sample (it reports what
    /// it cannot decode).
    Hound(hound::WavReader<Stream>),
}

/// The audio bytes for bulk reads: the file itself once hound has read the whole clean
/// header (large reads then go straight into the caller's buffer), else the stream as is.
enum Audio {
    File(File),
    Stream(Stream),
}

impl Audio {
    fn new(stream: Stream) -> Self {
        let (header, buffered) = stream.into_inner();
        if header.position() == header.get_ref().len() as u64 && buffered.buffer().is_empty() {
            Self::File(buffered.into_inner())
        } else {
            Self::Stream(header.chain(buffered))
        }
    }
}

impl Read for Audio {
    fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
        match self {
            Self::File(f) => f.read(buf),
            Self::Stream(s) => s.read(buf),
        }
    }
}

/// Bytes of audio read from the file at a time (at most).
const RAW_CHUNK: usize = 64 << 10;

/// A WAV file open for streaming reads.
pub struct WavReader {
    inner: Source,
    info: WavInfo,
    frames_read: u64,
    sanitized: u64,
    bytes: Vec<u8>,
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
        // hound stores each sample in `block_align / channels` bytes; the format chunk is at
        // least 16 bytes long (checked by the chunk walk).
        let block_align = u16::from_le_bytes([layout.fmt[12], layout.fmt[13]]);
        let inner = match Raw::of(&spec, block_align / spec.channels) {
            // hound has read the whole clean header: the stream is at the first audio byte.
            Some(raw) => Source::Bulk {
                stream: Audio::new(inner.into_inner()),
                raw,
            },
            None => Source::Hound(inner),
        };
        Ok(Self {
            inner,
            info,
            frames_read: 0,
            sanitized: 0,
            bytes: Vec::new(),
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
        let ctx = Context {
            first_frame: self.frames_read,
            frames: self.info.frames,
            ch,
            non_finite,
        };
        let inv = 1.0 / self.info.encoding.scale();
        match &mut self.inner {
            Source::Bulk { stream, raw } => {
                let raw = *raw;
                let width = raw.bytes();
                let per_chunk = (RAW_CHUNK / width).max(1);
                let mut done = 0;
                while done < n {
                    let count = per_chunk.min(n - done);
                    self.bytes.resize(count * width, 0);
                    let (got, err) = read_fully(stream, &mut self.bytes);
                    let whole = got / width;
                    let out = &mut buf[done..done + whole];
                    self.sanitized +=
                        decode(raw, &self.bytes[..whole * width], inv, out, &ctx, done)?;
                    if let Some(e) = err {
                        return Err(e);
                    }
                    if whole < count {
                        return Err(ctx.ended(done + whole));
                    }
                    done += count;
                }
            }
            Source::Hound(inner) => {
                let map = |e: hound::Error, i: usize| match e {
                    hound::Error::IoError(ref io) if is_eof(io) => ctx.ended(i),
                    hound::Error::IoError(io) => WavError::io("cannot read", io),
                    other => WavError::Malformed(other.to_string()),
                };
                match self.info.encoding {
                    Encoding::Int(_) => {
                        let mut it = inner.samples::<i32>();
                        for (i, slot) in buf[..n].iter_mut().enumerate() {
                            let code = it
                                .next()
                                .ok_or_else(|| ctx.ended(i))?
                                .map_err(|e| map(e, i))?;
                            *slot = T::from_f64_lossy(f64::from(code) * inv);
                        }
                    }
                    Encoding::Float32 => {
                        let mut it = inner.samples::<f32>();
                        for (i, slot) in buf[..n].iter_mut().enumerate() {
                            let v = it
                                .next()
                                .ok_or_else(|| ctx.ended(i))?
                                .map_err(|e| map(e, i))?;
                            match ctx.float(v, i)? {
                                Some(x) => *slot = x,
                                None => {
                                    *slot = T::zero();
                                    self.sanitized += 1;
                                }
                            }
                        }
                    }
                }
            }
        }
        self.frames_read += want as u64;
        Ok(want)
    }
}

/// Where a block starts, for error messages, and what to do with non-finite samples.
#[derive(Clone, Copy)]
struct Context {
    first_frame: u64,
    frames: u64,
    ch: usize,
    non_finite: NonFinite,
}

impl Context {
    /// The file ended before sample `i` of the block.
    fn ended(&self, i: usize) -> WavError {
        WavError::EndedEarly {
            frame: self.first_frame + (i / self.ch) as u64,
            frames: self.frames,
        }
    }

    /// A float sample `v` (sample `i` of the block) as `T`: `None` to be replaced by 0,
    /// or the refusal.
    #[inline]
    fn float<T: Sample>(&self, v: f32, i: usize) -> Result<Option<T>, WavError> {
        if v.is_finite() {
            Ok(Some(T::from_f64_lossy(f64::from(v))))
        } else if self.non_finite == NonFinite::Zero {
            Ok(None)
        } else {
            Err(WavError::NonFinite {
                kind: if v.is_nan() {
                    "NaN"
                } else if v > 0.0 {
                    "+Inf"
                } else {
                    "-Inf"
                },
                frame: self.first_frame + (i / self.ch) as u64,
                channel: (i % self.ch) as u16,
            })
        }
    }
}

/// Decode the whole samples of `bytes` into `out` (same count), full scale ±1.0 (`inv` is
/// one LSB for integers), as hound 3.5's `Sample::read` decodes each layout. `out` starts
/// at sample `base` of the block (for error messages). Returns the non-finite samples
/// replaced by 0.
fn decode<T: Sample>(
    raw: Raw,
    bytes: &[u8],
    inv: f64,
    out: &mut [T],
    ctx: &Context,
    base: usize,
) -> Result<u64, WavError> {
    let code = |c: i32| T::from_f64_lossy(f64::from(c) * inv);
    match raw {
        Raw::U8 => {
            for (slot, &b) in out.iter_mut().zip(bytes) {
                *slot = code(i32::from(b) - 128);
            }
        }
        Raw::I16 => {
            for (slot, b) in out.iter_mut().zip(bytes.chunks_exact(2)) {
                *slot = code(i32::from(i16::from_le_bytes([b[0], b[1]])));
            }
        }
        Raw::I24 => {
            for (slot, b) in out.iter_mut().zip(bytes.chunks_exact(3)) {
                // Sign-extended from bit 23 by the arithmetic shift.
                *slot = code(i32::from_le_bytes([0, b[0], b[1], b[2]]) >> 8);
            }
        }
        Raw::I24In4 => {
            for (slot, b) in out.iter_mut().zip(bytes.chunks_exact(4)) {
                // The top byte of the container is ignored.
                *slot = code(i32::from_le_bytes([0, b[0], b[1], b[2]]) >> 8);
            }
        }
        Raw::I32 => {
            for (slot, b) in out.iter_mut().zip(bytes.chunks_exact(4)) {
                *slot = code(i32::from_le_bytes([b[0], b[1], b[2], b[3]]));
            }
        }
        Raw::F32 => {
            let mut zeroed = 0;
            for (i, (slot, b)) in out.iter_mut().zip(bytes.chunks_exact(4)).enumerate() {
                let v = f32::from_le_bytes([b[0], b[1], b[2], b[3]]);
                if v.is_finite() {
                    *slot = T::from_f64_lossy(f64::from(v));
                } else {
                    match ctx.float::<T>(v, base + i)? {
                        Some(x) => *slot = x,
                        None => {
                            *slot = T::zero();
                            zeroed += 1;
                        }
                    }
                }
            }
            return Ok(zeroed);
        }
    }
    Ok(0)
}

/// Fill `buf` from `r` as far as the data goes: the bytes read, and the error that stopped
/// it early, if any (the end of the file is not an error here).
fn read_fully<R: Read>(r: &mut R, buf: &mut [u8]) -> (usize, Option<WavError>) {
    let mut got = 0;
    while got < buf.len() {
        match r.read(&mut buf[got..]) {
            Ok(0) => break,
            Ok(k) => got += k,
            Err(e) if e.kind() == io::ErrorKind::Interrupted => {}
            Err(e) => return (got, Some(WavError::io("cannot read", e))),
        }
    }
    (got, None)
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

#[cfg(test)]
mod tests {
    use super::*;

    /// Write `codes` with hound in the given layout.
    fn write(path: &Path, channels: u16, fmt: hound::SampleFormat, bits: u16, bytes: u16) {
        let spec = hound::WavSpec {
            channels,
            sample_rate: 8000,
            bits_per_sample: bits,
            sample_format: fmt,
        };
        let ex = hound::WavSpecEx {
            spec,
            bytes_per_sample: bytes,
        };
        let mut w = hound::WavWriter::new_with_spec_ex(
            std::io::BufWriter::new(File::create(path).unwrap()),
            ex,
        )
        .unwrap();
        let n = 3001 * usize::from(channels);
        let top = 1i64 << (bits - 1);
        for i in 0..n {
            // A spread of codes, both extremes included.
            let c = ((i as i64 * 2_654_435_761) % (2 * top)) - top;
            let c = if i == 0 {
                -top
            } else if i == 1 {
                top - 1
            } else {
                c
            };
            match fmt {
                hound::SampleFormat::Int => w.write_sample(c as i32).unwrap(),
                hound::SampleFormat::Float => w
                    .write_sample((c as f64 / top as f64 * 1.5) as f32)
                    .unwrap(),
            }
        }
        w.finalize().unwrap();
    }

    #[test]
    fn bulk_decoding_matches_hound_sample_by_sample() {
        use hound::SampleFormat::{Float, Int};
        let dir = tempfile::tempdir().unwrap();
        for (fmt, bits, bytes) in [
            (Int, 8, 1),
            (Int, 16, 2),
            (Int, 24, 3),
            (Int, 24, 4),
            (Int, 32, 4),
            (Float, 32, 4),
        ] {
            for channels in [1u16, 2, 6] {
                let path = dir.path().join(format!("{bits}-{bytes}-{channels}.wav"));
                write(&path, channels, fmt, bits, bytes);
                // What hound decodes, one sample at a time.
                let mut h = hound::WavReader::open(&path).unwrap();
                let scale = f64::from(1u32 << (bits - 1));
                let expect: Vec<f64> = match fmt {
                    Int => h
                        .samples::<i32>()
                        .map(|s| f64::from(s.unwrap()) / scale)
                        .collect(),
                    Float => h.samples::<f32>().map(|s| f64::from(s.unwrap())).collect(),
                };
                let mut r = WavReader::open(&path).unwrap();
                assert!(
                    matches!(
                        r.inner,
                        Source::Bulk {
                            stream: Audio::File(_),
                            ..
                        }
                    ),
                    "{bits}/{bytes}"
                );
                // Blocks of an odd size, so block edges fall anywhere.
                let mut got = Vec::new();
                let mut block = vec![0.0_f64; 777 * usize::from(channels)];
                loop {
                    let k = r.read_frames(&mut block, NonFinite::Refuse).unwrap();
                    if k == 0 {
                        break;
                    }
                    got.extend_from_slice(&block[..k * usize::from(channels)]);
                }
                assert_eq!(got.len(), expect.len());
                for (i, (a, b)) in got.iter().zip(&expect).enumerate() {
                    assert_eq!(a.to_bits(), b.to_bits(), "{bits}/{bytes} x{channels} #{i}");
                }
            }
        }
    }
}
