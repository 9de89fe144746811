//! Streaming WAV reader: checks what the header claims against the file before trusting it
//! (nothing is ever allocated by the header's word), then hands out blocks of frames as
//! floating point, full scale ±1.0, refusing or zeroing non-finite float samples.

use std::io::{self, Read, Seek};
use std::path::Path;

use resample_core::Sample;

use super::chunks::{read_metadata, scan, SampleLayout};
use super::encoding::Encoding;
use super::error::WavError;
use super::metadata::{id_text, Found};
use super::source::Source;

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
    /// The sample encoding, as the output keeps it: 32-bit float, or integer PCM of the
    /// smallest word length rerate writes (8, 16, 24 or 32) that holds every valid bit.
    pub encoding: Encoding,
    /// Valid bits per sample (32 for float): fewer than the container's bits for
    /// WAVE_FORMAT_EXTENSIBLE files such as 24 valid bits in 32-bit containers, or plain PCM
    /// of an odd word length such as 12 bits in 16.
    pub valid_bits: u16,
    /// Bits per sample as stored (the container: 8, 16, 24 or 32).
    pub container_bits: u16,
    /// Frames of audio (the file holds at least this many bytes of them). For a stream
    /// whose header does not give its length ([`WavReader::header_warning`]), 0 until the
    /// end is read, then the frames read.
    pub frames: u64,
}

impl WavInfo {
    /// Duration in seconds.
    pub fn seconds(&self) -> f64 {
        self.frames as f64 / f64::from(self.sample_rate)
    }
}

/// How the sample bytes are laid out, as decoded here in bulk.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Raw {
    /// 8-bit container, unsigned with offset 128.
    U8,
    /// 16-bit little-endian two's complement container.
    I16,
    /// 24-bit little-endian two's complement container (3 bytes).
    I24,
    /// 32-bit little-endian two's complement container.
    I32,
    /// 32-bit little-endian IEEE float.
    F32,
}

impl Raw {
    fn of(layout: SampleLayout) -> Self {
        match layout {
            SampleLayout::Int {
                container_bytes: 1, ..
            } => Self::U8,
            SampleLayout::Int {
                container_bytes: 2, ..
            } => Self::I16,
            SampleLayout::Int {
                container_bytes: 3, ..
            } => Self::I24,
            SampleLayout::Int { .. } => Self::I32,
            SampleLayout::Float32 => Self::F32,
        }
    }

    fn bytes(self) -> usize {
        match self {
            Self::U8 => 1,
            Self::I16 => 2,
            Self::I24 => 3,
            Self::I32 | Self::F32 => 4,
        }
    }
}

/// How integer samples are decoded: the container read as a two's complement integer
/// (left-justified valid bits, so the container's own full scale is the file's full
/// scale), and the low bits below the valid ones, which must be zero.
#[derive(Debug, Clone, Copy, PartialEq)]
struct IntDecode {
    /// One LSB of the container, full scale ±1.0: `2^-(container bits - 1)`.
    inv: f64,
    /// The container's bits below the valid ones (0 when every bit is valid).
    pad_mask: i32,
    /// How many bits that is.
    pad_bits: u16,
    /// Valid bits per sample.
    valid_bits: u16,
}

/// The data size some writers put in the header when they stream a WAV file whose length
/// they do not know yet (to a pipe) and never come back to fix (common practice, no source).
const STREAMING_MARKER: u32 = u32::MAX;

/// Bytes of audio read from the file at a time (at most).
const RAW_CHUNK: usize = 64 << 10;

/// A WAV file open for streaming reads.
pub struct WavReader {
    file: Source,
    raw: Raw,
    int: IntDecode,
    info: WavInfo,
    frames_read: u64,
    sanitized: u64,
    bytes: Vec<u8>,
    /// The stream's length is not known: read to its end.
    open_ended: bool,
    /// What is wrong with the header and what was done about it.
    warning: Option<String>,
    /// The metadata chunks before the audio.
    before: Vec<Found>,
    /// The channel mask of WAVE_FORMAT_EXTENSIBLE.
    channel_mask: Option<u32>,
    /// Where the audio starts and how many bytes the header says it has (the bytes found,
    /// for a repaired header).
    data_offset: u64,
    data_len: u64,
    /// Metadata bytes read so far.
    metadata_bytes: u64,
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
    /// the audio its header declares. A pipe (a FIFO, `<(...)`) or a character device is
    /// read as a stream, front to back; `-` is standard input, also a stream. Other special
    /// files (folders, block devices, sockets) are refused, naming what they are.
    pub fn open(path: &Path) -> Result<Self, WavError> {
        Self::check(Source::open(path)?)
    }

    /// Read a WAV file from any seekable source, from its first byte (bytes in memory
    /// through [`std::io::Cursor`], an open file): the same checks as [`WavReader::open`].
    pub fn from_reader<R: Read + Seek + Send + 'static>(r: R) -> Result<Self, WavError> {
        Self::check(Source::Seekable(Box::new(r)))
    }

    /// Read a WAV file from a stream, front to back, without seeking (a pipe, standard
    /// input): the header is read as it comes, and a stream that ends before the audio its
    /// header declares is found when its end is reached. Memory stays bounded.
    pub fn from_stream<R: Read + Send + 'static>(r: R) -> Result<Self, WavError> {
        Self::check(Source::Stream(Box::new(r)))
    }

    fn check(mut file: Source) -> Result<Self, WavError> {
        let size = file
            .len_from_start()
            .map_err(|e| WavError::io("cannot read", e))?;
        if size == Some(0) {
            return Err(WavError::Empty);
        }
        let mut magic = [0u8; 12];
        let got = read_up_to(&mut file, &mut magic)?;
        if got == 0 {
            return Err(WavError::Empty);
        }
        let rf64 = match (&magic[0..4.min(got)], got) {
            (b"RIFF", 12) if &magic[8..12] == b"WAVE" => false,
            (b"RF64" | b"BW64", 12) if &magic[8..12] == b"WAVE" => true,
            (b"RIFF" | b"RF64" | b"BW64", 12) => {
                return Err(WavError::NotWav("a RIFF file, but not WAVE".into()))
            }
            (b"RIFX", _) => return Err(WavError::Unsupported("big-endian RIFX container".into())),
            (b"RIFF" | b"RF64" | b"BW64", _) => return Err(WavError::HeaderTruncated),
            _ if got < 4 => return Err(WavError::NotWav("shorter than a RIFF header".into())),
            _ => return Err(WavError::NotWav("no RIFF tag at the start".into())),
        };
        let layout = scan(&mut file, size, rf64)?;
        // Unknown for a stream: it ends where it ends, found while reading.
        let available = size.map_or(u64::MAX, |size| size - layout.data_offset);
        let format = layout.format()?;
        if format.sample_rate == 0 {
            return Err(WavError::ZeroRate);
        }
        if format.sample_rate > resample_core::MAX_RATE {
            return Err(WavError::OutOfRange(format!(
                "the header declares a sample rate of {} Hz, above the {} Hz rerate accepts",
                format.sample_rate,
                resample_core::MAX_RATE
            )));
        }
        if usize::from(format.channels) > resample_core::MAX_CHANNELS {
            return Err(WavError::OutOfRange(format!(
                "the header declares {} channels, more than the {} rerate accepts",
                format.channels,
                resample_core::MAX_CHANNELS
            )));
        }
        let riff_size = u32::from_le_bytes([magic[4], magic[5], magic[6], magic[7]]);
        let mut declared = layout.data_len;
        let align = u64::from(format.block_align);
        // A header whose sizes were never completed (a recorder that stopped unexpectedly, a
        // writer that streamed): a data size of 0xFFFFFFFF with fewer bytes following, or
        // of 0 with audio following and a RIFF size that does not cover it (0, 0xFFFFFFFF,
        // or the header alone). The audio runs to the end of the file.
        let riff_unset = riff_size == 0
            || riff_size == u32::MAX
            || u64::from(riff_size) + 8 <= layout.data_offset;
        let unset = !rf64
            && ((declared == u64::from(STREAMING_MARKER)
                && (size.is_none() || declared > available))
                || (declared == 0 && available > 0 && riff_unset));
        let mut open_ended = false;
        let mut warning = None;
        if unset {
            match size {
                Some(_) => {
                    let whole = available / align * align;
                    warning = Some(format!(
                        "the header's data size is {declared} (RIFF size {riff_size}), not \
                         completed by its writer: converted the {} whole frames that follow \
                         (to the end of the file{})",
                        whole / align,
                        match available - whole {
                            0 => String::new(),
                            n => format!("; {n} bytes of a partial last frame ignored"),
                        }
                    ));
                    declared = whole;
                }
                None => {
                    open_ended = true;
                    declared = 0;
                    warning = Some(format!(
                        "the header's data size is {} (RIFF size {riff_size}), not completed \
                         by its writer: the stream is read to its end",
                        layout.data_len
                    ));
                }
            }
        }
        if declared % align != 0 {
            return Err(WavError::Malformed(format!(
                "the data chunk's length ({declared} bytes) is not a multiple of sample size \
                 x channels ({} bytes per frame)",
                format.block_align
            )));
        }
        if declared > available {
            return Err(WavError::Truncated {
                declared,
                available,
            });
        }
        let (encoding, valid_bits, int) = match format.sample {
            SampleLayout::Int {
                container_bytes,
                valid_bits,
            } => {
                let container_bits = container_bytes * 8;
                let pad_bits = container_bits - valid_bits;
                // The output keeps the word length: the smallest one rerate writes that
                // holds every valid bit (20 valid bits are written as 24-bit).
                let word = [8, 16, 24, 32]
                    .into_iter()
                    .find(|&b| b >= valid_bits)
                    .unwrap_or(32);
                let int = IntDecode {
                    inv: 1.0 / f64::from(1u32 << (container_bits - 1)),
                    pad_mask: ((1u64 << pad_bits) - 1) as i32,
                    pad_bits,
                    valid_bits,
                };
                (Encoding::Int(word), valid_bits, int)
            }
            SampleLayout::Float32 => {
                let int = IntDecode {
                    inv: 1.0,
                    pad_mask: 0,
                    pad_bits: 0,
                    valid_bits: 32,
                };
                (Encoding::Float32, 32, int)
            }
        };
        let info = WavInfo {
            sample_rate: format.sample_rate,
            channels: format.channels,
            encoding,
            valid_bits,
            container_bits: format.block_align / format.channels * 8,
            frames: declared / u64::from(format.block_align),
        };
        file.seek_to(layout.data_offset)
            .map_err(|e| WavError::io("cannot read", e))?;
        Ok(Self {
            file,
            raw: Raw::of(format.sample),
            int,
            info,
            frames_read: 0,
            sanitized: 0,
            bytes: Vec::new(),
            open_ended,
            warning,
            channel_mask: layout.channel_mask(),
            before: layout.chunks,
            data_offset: layout.data_offset,
            data_len: declared,
            metadata_bytes: layout.metadata_bytes,
        })
    }

    /// What was wrong with the header, and what was done about it (a data size its writer
    /// never completed: the audio is read to the end of the file).
    pub fn header_warning(&self) -> Option<&str> {
        self.warning.as_deref()
    }

    /// Whether [`WavInfo::frames`] is known before the audio is read (not for a stream
    /// whose header never got its sizes: it is read to its end).
    pub fn length_known(&self) -> bool {
        !self.open_ended
    }

    /// The channel mask of a WAVE_FORMAT_EXTENSIBLE file (`None` for a plain format chunk).
    pub fn channel_mask(&self) -> Option<u32> {
        self.channel_mask
    }

    /// The metadata chunks before the audio, in their order.
    pub fn chunks_before_data(&self) -> &[Found] {
        &self.before
    }

    /// Once every frame has been read: the chunks after the audio, in their order, and
    /// notes on what could not be read there (a file that ends inside a chunk, stray
    /// bytes). A file whose audio runs to its end has none. Bounded like the chunks before
    /// the audio; a known chunk over the limit is an error.
    pub fn chunks_after_data(&mut self) -> Result<(Vec<Found>, Vec<String>), WavError> {
        let mut found = Vec::new();
        let mut notes = Vec::new();
        if self.open_ended || self.warning.is_some() || self.frames_read < self.info.frames {
            return Ok((found, notes));
        }
        let io = |e| WavError::io("cannot read", e);
        let end = self.data_offset + self.data_len + self.data_len % 2;
        if matches!(self.file, Source::Seekable(_)) {
            self.file.seek_to(end).map_err(io)?;
        } else {
            let here = self.data_offset + self.frames_read * self.bytes_per_frame();
            let rest = end.saturating_sub(here);
            if self.file.skip(rest).map_err(io)? < rest {
                return Ok((found, notes));
            }
        }
        for _ in 0..MAX_CHUNKS_AFTER {
            let mut head = [0u8; 8];
            let got = read_up_to(&mut self.file, &mut head)?;
            if got == 0 {
                break;
            }
            if got < 8 {
                notes.push(format!("{got} stray bytes after the last chunk (ignored)"));
                break;
            }
            let tag = [head[0], head[1], head[2], head[3]];
            let len = u32::from_le_bytes([head[4], head[5], head[6], head[7]]);
            match read_metadata(&mut self.file, tag, len, &mut self.metadata_bytes)? {
                Ok(f) => found.extend(f),
                Err(got) => {
                    notes.push(format!(
                        "{} (declares {len} bytes, only {got} follow: not copied)",
                        id_text(&tag)
                    ));
                    break;
                }
            }
            if len % 2 == 1 {
                self.file.skip(1).map_err(io)?;
            }
        }
        Ok((found, notes))
    }

    fn bytes_per_frame(&self) -> u64 {
        (self.raw.bytes() * usize::from(self.info.channels)) as u64
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
        if self.open_ended {
            return self.read_open_ended(buf, non_finite);
        }
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
        let raw = self.raw;
        let width = raw.bytes();
        let per_chunk = (RAW_CHUNK / width).max(1);
        let mut done = 0;
        while done < n {
            let count = per_chunk.min(n - done);
            self.bytes.resize(count * width, 0);
            let (got, err) = read_fully(&mut self.file, &mut self.bytes);
            let whole = got / width;
            let out = &mut buf[done..done + whole];
            self.sanitized += decode(
                raw,
                &self.bytes[..whole * width],
                &self.int,
                out,
                &ctx,
                done,
            )?;
            if let Some(e) = err {
                return Err(e);
            }
            if whole < count {
                return Err(ctx.ended(done + whole));
            }
            done += count;
        }
        self.frames_read += want as u64;
        Ok(want)
    }
}

impl WavReader {
    /// [`WavReader::read_frames`] for a stream of unknown length: whole frames up to its
    /// end (a partial last frame is dropped, and said in the warning); at the end, the
    /// frame count becomes the frames read.
    fn read_open_ended<T: Sample>(
        &mut self,
        buf: &mut [T],
        non_finite: NonFinite,
    ) -> Result<usize, WavError> {
        let ch = usize::from(self.info.channels);
        let width = self.raw.bytes();
        let frame_bytes = width * ch;
        let want = (buf.len() / ch).min(RAW_CHUNK / frame_bytes).max(1);
        if buf.len() < ch {
            return Ok(0);
        }
        self.bytes.resize(want * frame_bytes, 0);
        let (got, err) = read_fully(&mut self.file, &mut self.bytes);
        if let Some(e) = err {
            return Err(e);
        }
        let frames = got / frame_bytes;
        let ctx = Context {
            first_frame: self.frames_read,
            frames: u64::MAX,
            ch,
            non_finite,
        };
        let n = frames * ch;
        self.sanitized += decode(
            self.raw,
            &self.bytes[..n * width],
            &self.int,
            &mut buf[..n],
            &ctx,
            0,
        )?;
        self.frames_read += frames as u64;
        if got < self.bytes.len() {
            // The end of the stream.
            self.open_ended = false;
            self.info.frames = self.frames_read;
            if let (Some(w), 1..) = (self.warning.as_mut(), got % frame_bytes) {
                w.push_str(&format!(
                    "; {} bytes of a partial last frame ignored",
                    got % frame_bytes
                ));
            }
        }
        Ok(frames)
    }
}

/// Most chunks read after the audio.
const MAX_CHUNKS_AFTER: usize = 10_000;

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

    /// Sample `i` of the block has padding bits set below its valid bits.
    fn unjustified(&self, i: usize, int: &IntDecode) -> WavError {
        WavError::BadSamples(format!(
            "the sample at frame {}, channel {} has some of its {} low padding bits set: \
             {} valid bits in {}-bit containers are stored left-justified with the padding \
             bits zero (Microsoft, \"Multiple channel audio data and WAVE files\"); this \
             file looks right-justified, and is refused rather than misread",
            self.first_frame + (i / self.ch) as u64,
            i % self.ch,
            int.pad_bits,
            int.valid_bits,
            int.valid_bits + int.pad_bits,
        ))
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

/// Decode the whole samples of `bytes` into `out` (same count), full scale ±1.0. Integer
/// containers are read as two's complement numbers of the container's width (8-bit ones
/// unsigned with offset 128) and scaled by one container LSB (`int.inv`): the valid bits are
/// left-justified (Microsoft, "Multiple channel audio data and WAVE files": "the valid bits
/// are ... left-justified ... the unused low bits are zero"), so the container's full scale
/// is the sample's, whatever the number of valid bits. Padding bits that are not zero mean
/// a file written right-justified against the specification: it is refused, not misread.
/// `out` starts at sample `base` of the block (for error messages). Returns the
/// non-finite samples replaced by 0.
fn decode<T: Sample>(
    raw: Raw,
    bytes: &[u8],
    int: &IntDecode,
    out: &mut [T],
    ctx: &Context,
    base: usize,
) -> Result<u64, WavError> {
    let inv = int.inv;
    let code = |c: i32| T::from_f64_lossy(f64::from(c) * inv);
    // OR of every container's padding bits: one check per block, not per sample.
    let mut pad = 0i32;
    match raw {
        Raw::U8 => {
            for (slot, &b) in out.iter_mut().zip(bytes) {
                let c = i32::from(b) - 128;
                pad |= c;
                *slot = code(c);
            }
        }
        Raw::I16 => {
            for (slot, b) in out.iter_mut().zip(bytes.chunks_exact(2)) {
                let c = i32::from(i16::from_le_bytes([b[0], b[1]]));
                pad |= c;
                *slot = code(c);
            }
        }
        Raw::I24 => {
            for (slot, b) in out.iter_mut().zip(bytes.chunks_exact(3)) {
                // Sign-extended from bit 23 by the arithmetic shift.
                let c = i32::from_le_bytes([0, b[0], b[1], b[2]]) >> 8;
                pad |= c;
                *slot = code(c);
            }
        }
        Raw::I32 => {
            for (slot, b) in out.iter_mut().zip(bytes.chunks_exact(4)) {
                let c = i32::from_le_bytes([b[0], b[1], b[2], b[3]]);
                pad |= c;
                *slot = code(c);
            }
        }
        Raw::F32 => {
            // Runs of samples converted with no branch inside (so that the loop
            // vectorizes); a run that holds a non-finite sample is gone over again one
            // sample at a time, which gives what the one-at-a-time loop gives everywhere.
            const RUN: usize = 64;
            let mut zeroed = 0;
            let runs = out.chunks_mut(RUN).zip(bytes.chunks(4 * RUN));
            for (r, (slots, raw)) in runs.enumerate() {
                let mut finite = true;
                for (slot, b) in slots.iter_mut().zip(raw.as_chunks::<4>().0) {
                    let v = f32::from_le_bytes(*b);
                    finite &= v.is_finite();
                    *slot = T::from_f64_lossy(f64::from(v));
                }
                if finite {
                    continue;
                }
                for (i, (slot, b)) in slots.iter_mut().zip(raw.chunks_exact(4)).enumerate() {
                    let v = f32::from_le_bytes([b[0], b[1], b[2], b[3]]);
                    if !v.is_finite() {
                        match ctx.float::<T>(v, base + r * RUN + i)? {
                            Some(x) => *slot = x,
                            None => {
                                *slot = T::zero();
                                zeroed += 1;
                            }
                        }
                    }
                }
            }
            return Ok(zeroed);
        }
    }
    if pad & int.pad_mask != 0 {
        // Find the first offender, for the message.
        let width = raw.bytes();
        let first = bytes
            .chunks_exact(width)
            .position(|b| {
                let mut le = [0u8; 4];
                le[..width].copy_from_slice(b);
                let c = i32::from_le_bytes(le);
                let c = if raw == Raw::U8 { c - 128 } else { c };
                c & int.pad_mask != 0
            })
            .unwrap_or(0);
        return Err(ctx.unjustified(base + first, int));
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

fn read_up_to(file: &mut Source, buf: &mut [u8]) -> Result<usize, WavError> {
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
            std::io::BufWriter::new(std::fs::File::create(path).unwrap()),
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

    #[test]
    fn right_justified_valid_bits_are_refused_not_misread() {
        // hound writes 24 valid bits in 32-bit containers right-justified (sign-extended
        // into the top byte), against the specification's left justification: such a file
        // must be refused, naming the first offending sample, never decoded 48 dB low.
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("rj.wav");
        write(&path, 2, hound::SampleFormat::Int, 24, 4);
        let mut r = WavReader::open(&path).unwrap();
        assert_eq!(r.info().valid_bits, 24);
        assert_eq!(r.info().container_bits, 32);
        let mut block = vec![0.0_f32; 1000];
        let e = loop {
            match r.read_frames(&mut block, NonFinite::Refuse) {
                Ok(0) => panic!("read to the end"),
                Ok(_) => {}
                Err(e) => break e.to_string(),
            }
        };
        // Sample 0 is -2^23 (low byte zero); sample 1 is 2^23 - 1 (low byte 0xFF).
        assert!(e.contains("frame 0, channel 1"), "{e}");
        assert!(e.contains("8 low padding bits"), "{e}");
    }
}
