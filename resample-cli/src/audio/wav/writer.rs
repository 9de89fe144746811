//! Streaming WAV writer: requantizes floating-point frames (full scale ±1.0) to the output
//! encoding with TPDF dither, counts overs and clips, and writes through a temporary file
//! that becomes the final file only on [`WavWriter::finish`].

use std::fs::File;
use std::io::{self, BufWriter, Seek, SeekFrom, Write};
use std::path::Path;

use resample_core::Sample;

use super::dither::Dither;
use super::encoding::Encoding;
use super::error::WavError;
use super::metadata::Chunk;
use super::quantize::{LevelStats, Quantizer};
use super::rf64::{junk_chunk, size_fields};
use super::writeback::WriteBack;
use crate::io::staged::StagedFile;

/// Write buffer size.
const WRITE_BUFFER: usize = 256 << 10;

/// How to write a WAV file.
#[derive(Debug, Clone, PartialEq)]
pub struct WriterOptions {
    /// Sample rate, Hz.
    pub sample_rate: u32,
    /// Channels.
    pub channels: u16,
    /// Output encoding.
    pub encoding: Encoding,
    /// Dither for integer output (applies to 24 bits or fewer).
    pub dither: Dither,
    /// Replace an existing file.
    pub force: bool,
    /// Write WAVE_FORMAT_EXTENSIBLE with this channel mask (the input's); `None` leaves
    /// the format chunk as usual (extensible, with the first speaker bits, for more than
    /// two channels or more than 16 bits).
    pub channel_mask: Option<u32>,
    /// Chunks written between the format chunk and the audio (metadata).
    pub chunks: Vec<Chunk>,
}

impl WriterOptions {
    /// Options with TPDF dither, no overwrite, unknown length.
    pub fn new(sample_rate: u32, channels: u16, encoding: Encoding) -> Self {
        Self {
            sample_rate,
            channels,
            encoding,
            dither: Dither::Tpdf,
            force: false,
            channel_mask: None,
            chunks: Vec::new(),
        }
    }
}

/// Samples encoded per step (the bytes gather until there are [`WRITE_BUFFER`] of them).
const ENCODE_CHUNK: usize = 16 << 10;

/// A WAV file being written.
///
/// The header is the one `hound` writes for the spec (made in memory), with the 'JUNK'
/// reservation for RF64 after "WAVE", the metadata chunks of [`WriterOptions::chunks`]
/// before the data chunk, and a WAVE_FORMAT_EXTENSIBLE format chunk of our own when
/// [`WriterOptions::channel_mask`] is given; the sample bytes are encoded here in chunks,
/// exactly as hound encodes them one at a time. Chunks set by
/// [`WavWriter::set_chunks_after_data`] follow the audio. [`WavWriter::finish`]
/// completes the two size fields and, unlike hound, ends an odd-sized data chunk with the pad
/// byte RIFF requires (counted in the RIFF size, not in the data chunk's).
pub struct WavWriter {
    out: Option<BufWriter<Target>>,
    /// The file being written; `None` when writing to memory.
    staged: Option<StagedFile>,
    quant: Quantizer,
    channels: u16,
    frames: u64,
    /// Length of the header; the data chunk's size field is its last 4 bytes.
    header_len: u32,
    /// Bytes of audio written.
    data_bytes: u64,
    /// Encoded audio not yet handed to the file (less than [`WRITE_BUFFER`] bytes between
    /// calls).
    bytes: Vec<u8>,
    /// Write back to the disk every this many bytes (0: only on finish; then `writeback`
    /// is `None`).
    sync_every: u64,
    /// `data_bytes` at the last write-back.
    synced: u64,
    /// The thread doing the write-backs, when `sync_every` is set.
    writeback: Option<WriteBack>,
    /// Chunks written after the audio.
    after: Vec<Chunk>,
}

impl std::fmt::Debug for WavWriter {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("WavWriter")
            .field("staged", &self.staged)
            .field("frames", &self.frames)
            .finish_non_exhaustive()
    }
}

/// Where the bytes go: a staged file, or memory (for fuzzing the whole path and for tests).
#[derive(Debug)]
enum Target {
    File(File),
    Memory(io::Cursor<Vec<u8>>),
}

impl Write for Target {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        match self {
            Self::File(f) => f.write(buf),
            Self::Memory(m) => m.write(buf),
        }
    }

    fn flush(&mut self) -> io::Result<()> {
        match self {
            Self::File(f) => f.flush(),
            Self::Memory(_) => Ok(()),
        }
    }
}

impl Seek for Target {
    fn seek(&mut self, pos: SeekFrom) -> io::Result<u64> {
        match self {
            Self::File(f) => f.seek(pos),
            Self::Memory(m) => m.seek(pos),
        }
    }
}

fn map_write(e: hound::Error) -> WavError {
    match e {
        hound::Error::IoError(io) => WavError::io("cannot write", io),
        other => WavError::Malformed(other.to_string()),
    }
}

/// The pad byte (0 or 1) RIFF puts after a chunk of `len` bytes.
fn pad_len(len: u64) -> u64 {
    len % 2
}

/// A chunk's bytes: id, size, body and the pad byte of an odd size (RIFF, IBM/Microsoft
/// 1991).
fn chunk_bytes(c: &Chunk, out: &mut Vec<u8>) {
    out.extend_from_slice(&c.id);
    out.extend_from_slice(&(c.body.len() as u32).to_le_bytes());
    out.extend_from_slice(&c.body);
    if c.body.len() % 2 == 1 {
        out.push(0);
    }
}

/// A WAVE_FORMAT_EXTENSIBLE format chunk body for `spec` with the channel mask `mask`:
/// WAVEFORMATEX (tag 0xFFFE, channels, rate, bytes per second, block align, container
/// bits), cbSize 22, valid bits (all of the container's), the mask, and the SubFormat GUID
/// of PCM or IEEE float ({0000000X-0000-0010-8000-00AA00389B71}) (Microsoft, "Multiple
/// channel audio data and WAVE files").
fn extensible_fmt(spec: hound::WavSpec, mask: u32) -> Vec<u8> {
    let align = spec.channels * (spec.bits_per_sample / 8);
    let code: u16 = match spec.sample_format {
        hound::SampleFormat::Float => 3,
        hound::SampleFormat::Int => 1,
    };
    let mut f = Vec::with_capacity(40);
    f.extend_from_slice(&0xFFFEu16.to_le_bytes());
    f.extend_from_slice(&spec.channels.to_le_bytes());
    f.extend_from_slice(&spec.sample_rate.to_le_bytes());
    f.extend_from_slice(&(spec.sample_rate.wrapping_mul(u32::from(align))).to_le_bytes());
    f.extend_from_slice(&align.to_le_bytes());
    f.extend_from_slice(&spec.bits_per_sample.to_le_bytes());
    f.extend_from_slice(&22u16.to_le_bytes());
    f.extend_from_slice(&spec.bits_per_sample.to_le_bytes());
    f.extend_from_slice(&mask.to_le_bytes());
    f.extend_from_slice(&code.to_le_bytes());
    f.extend_from_slice(&[
        0x00, 0x00, 0x00, 0x00, 0x10, 0x00, 0x80, 0x00, 0x00, 0xAA, 0x00, 0x38, 0x9B, 0x71,
    ]);
    f
}

/// The header hound writes for `spec` (RIFF, format chunk, data chunk header), sizes 0,
/// with a 'JUNK' chunk reserved after "WAVE" for the 'ds64' chunk of a file that will pass
/// 4 GiB (see [`super::rf64`]); with `mask`, the format chunk is WAVE_FORMAT_EXTENSIBLE with
/// that channel mask; `chunks` go between the format chunk and the data chunk.
fn header(spec: hound::WavSpec, mask: Option<u32>, chunks: &[Chunk]) -> Result<Vec<u8>, WavError> {
    let mut buf = io::Cursor::new(Vec::new());
    hound::WavWriter::new(&mut buf, spec)
        .and_then(|w| w.finalize())
        .map_err(map_write)?;
    let plain = buf.into_inner();
    let data_head = plain.len() - 8;
    let mut h = Vec::with_capacity(plain.len() + 36);
    h.extend_from_slice(&plain[..12]);
    h.extend_from_slice(&junk_chunk());
    match mask {
        Some(mask) => chunk_bytes(
            &Chunk {
                id: *b"fmt ",
                body: extensible_fmt(spec, mask),
            },
            &mut h,
        ),
        None => h.extend_from_slice(&plain[12..data_head]),
    }
    for c in chunks {
        chunk_bytes(c, &mut h);
    }
    h.extend_from_slice(&plain[data_head..]);
    if u32::try_from(h.len()).is_err() {
        return Err(WavError::MetadataTooLarge {
            id: "all metadata".into(),
            len: h.len() as u64,
            limit: u64::from(u32::MAX),
        });
    }
    Ok(h)
}

/// Requantize `samples` with `quant` and append their bytes to `bytes`, as
/// [`WavWriter::write_frames`] would (for bytes made away from the writer, handed to it by
/// [`WavWriter::write_encoded`]).
pub(crate) fn encode_samples<T: Sample>(quant: &mut Quantizer, samples: &[T], bytes: &mut Vec<u8>) {
    encode(quant, samples, bytes);
}

/// Requantize `samples` and append their bytes to `bytes` as hound 3.5 writes them
/// (`Sample::write_padded`: little-endian; 8-bit unsigned with offset 128).
fn encode<T: Sample>(quant: &mut Quantizer, samples: &[T], bytes: &mut Vec<u8>) {
    match quant.encoding() {
        Encoding::Float32 => {
            // Straight into `bytes`: the room is cleared first, a piece at a time while it
            // is in the cache, then written over (no second copy of every byte).
            const STEP: usize = 1024;
            bytes.reserve(4 * samples.len());
            for xs in samples.chunks(STEP) {
                let at = bytes.len();
                bytes.resize(at + 4 * xs.len(), 0);
                quant.floats_to_le_bytes(xs, &mut bytes[at..]);
            }
        }
        Encoding::Int(bits) => {
            for &s in samples {
                let c = quant.to_code(s.to_f64_exact());
                match bits {
                    8 => bytes.push((c + 128) as u8),
                    16 => bytes.extend_from_slice(&(c as i16).to_le_bytes()),
                    24 => bytes.extend_from_slice(&c.to_le_bytes()[..3]),
                    _ => bytes.extend_from_slice(&c.to_le_bytes()),
                }
            }
        }
    }
}

impl WavWriter {
    /// Start writing `path` (through a temporary file beside it).
    pub fn create(path: &Path, opts: &WriterOptions) -> Result<Self, WavError> {
        Self::start(Some(path), opts)
    }

    /// Start writing a WAV file in memory, with the same bytes [`WavWriter::create`] would
    /// write; [`WavWriter::finish_in_memory`] hands them over.
    pub fn in_memory(opts: &WriterOptions) -> Result<Self, WavError> {
        Self::start(None, opts)
    }

    fn start(path: Option<&Path>, opts: &WriterOptions) -> Result<Self, WavError> {
        if opts.channels == 0 {
            return Err(WavError::Malformed("0 channels".into()));
        }
        let spec = opts.encoding.spec(opts.sample_rate, opts.channels);
        let header = header(spec, opts.channel_mask, &opts.chunks)?;
        let (staged, target) = match path {
            Some(path) => {
                let (staged, file) = StagedFile::create(path, opts.force)?;
                (Some(staged), Target::File(file))
            }
            None => (None, Target::Memory(io::Cursor::new(Vec::new()))),
        };
        let mut out = BufWriter::with_capacity(WRITE_BUFFER, target);
        out.write_all(&header)
            .map_err(|e| WavError::io("cannot write", e))?;
        Ok(Self {
            out: Some(out),
            staged,
            quant: Quantizer::new(opts.encoding, opts.dither),
            channels: opts.channels,
            frames: 0,
            header_len: header.len() as u32,
            data_bytes: 0,
            bytes: Vec::new(),
            sync_every: 0,
            synced: 0,
            writeback: None,
            after: Vec::new(),
        })
    }

    /// Chunks to write after the audio (metadata that came after the input's audio).
    pub fn set_chunks_after_data(&mut self, chunks: Vec<Chunk>) {
        self.after = chunks;
    }

    /// Whether dither is being added.
    pub fn dithers(&self) -> bool {
        self.quant.dithers()
    }

    /// Have the data written back to the disk every `bytes` bytes as it comes, rather than
    /// all at once by [`WavWriter::finish`] (which still makes the whole file durable), so
    /// that little is left to wait for at the end. The write-backs run on a thread of their
    /// own: writing never waits on the disk in between.
    pub fn sync_every(&mut self, bytes: u64) -> Result<(), WavError> {
        self.sync_every = bytes;
        if bytes == 0 {
            // Back to writing everything back on finish (the thread stops here).
            self.writeback = None;
        } else if self.writeback.is_none() {
            if let Some(Target::File(file)) = self.out.as_ref().map(BufWriter::get_ref) {
                self.writeback =
                    Some(WriteBack::start(file).map_err(|e| WavError::io("cannot write", e))?);
            }
        }
        Ok(())
    }

    /// Frames written so far.
    pub fn frames(&self) -> u64 {
        self.frames
    }

    /// Write interleaved frames.
    pub fn write_frames<T: Sample>(&mut self, samples: &[T]) -> Result<(), WavError> {
        let ch = usize::from(self.channels);
        if samples.len() % ch != 0 {
            return Err(WavError::PartialFrame {
                len: samples.len(),
                channels: self.channels,
            });
        }
        let Some(out) = self.out.as_mut() else {
            return Err(WavError::Malformed("writer already finished".into()));
        };
        let width = usize::from(self.quant.encoding().bytes());
        // No size limit: a file that passes 4 GiB becomes RF64 on finish.
        let total = self.data_bytes + (samples.len() * width) as u64;
        // Encoded bytes gather in `bytes` and go to the file in pieces of at least the write
        // buffer's size, which pass the buffer by (no second copy of every byte).
        for chunk in samples.chunks(ENCODE_CHUNK) {
            encode(&mut self.quant, chunk, &mut self.bytes);
            if self.bytes.len() >= WRITE_BUFFER {
                out.write_all(&self.bytes)
                    .map_err(|e| WavError::io("cannot write", e))?;
                self.bytes.clear();
            }
        }
        self.data_bytes = total;
        self.frames += (samples.len() / ch) as u64;
        self.write_back_if_due()
    }

    /// A quantizer that makes the bytes this writer would make, for encoding on other
    /// threads ([`WavWriter::write_encoded`]): `None` when the writer dithers (the dither
    /// is one sequence through the whole file, so only the writer can add it).
    pub fn parallel_encoder(&self) -> Option<Quantizer> {
        (!self.quant.dithers()).then(|| Quantizer::new(self.quant.encoding(), Dither::None))
    }

    /// Write audio already encoded by a quantizer of [`WavWriter::parallel_encoder`]:
    /// `bytes` hold `samples` whole frames' samples, and `stats` are that quantizer's
    /// figures for them ([`Quantizer::take_stats`]). The file and the figures come out as
    /// if the samples had gone through [`WavWriter::write_frames`].
    pub fn write_encoded(
        &mut self,
        bytes: &[u8],
        samples: usize,
        stats: &LevelStats,
    ) -> Result<(), WavError> {
        let ch = usize::from(self.channels);
        let width = usize::from(self.quant.encoding().bytes());
        if samples % ch != 0 {
            return Err(WavError::PartialFrame {
                len: samples,
                channels: self.channels,
            });
        }
        if bytes.len() != samples * width || self.quant.dithers() {
            return Err(WavError::Malformed(
                "encoded audio of another length or for a dithering writer".into(),
            ));
        }
        let Some(out) = self.out.as_mut() else {
            return Err(WavError::Malformed("writer already finished".into()));
        };
        let total = self.data_bytes + bytes.len() as u64;
        if self.bytes.is_empty() && bytes.len() >= WRITE_BUFFER {
            out.write_all(bytes)
                .map_err(|e| WavError::io("cannot write", e))?;
        } else {
            self.bytes.extend_from_slice(bytes);
            if self.bytes.len() >= WRITE_BUFFER {
                out.write_all(&self.bytes)
                    .map_err(|e| WavError::io("cannot write", e))?;
                self.bytes.clear();
            }
        }
        self.quant.absorb(stats);
        self.data_bytes = total;
        self.frames += (samples / ch) as u64;
        self.write_back_if_due()
    }

    /// Have the disk catch up if [`WavWriter::sync_every`] bytes came since it last did.
    fn write_back_if_due(&mut self) -> Result<(), WavError> {
        let (Some(out), Some(wb)) = (self.out.as_mut(), self.writeback.as_mut()) else {
            return Ok(());
        };
        if self.data_bytes - self.synced >= self.sync_every {
            self.synced = self.data_bytes;
            out.write_all(&self.bytes)
                .and_then(|()| out.flush())
                .and_then(|()| wb.request())
                .map_err(|e| WavError::io("cannot write", e))?;
            self.bytes.clear();
        }
        Ok(())
    }

    /// Level figures so far.
    pub fn stats(&self) -> LevelStats {
        self.quant.stats()
    }

    /// Complete the header, make the file durable and move it to its final name.
    pub fn finish(mut self) -> Result<LevelStats, WavError> {
        self.complete()?;
        let stats = self.quant.stats();
        if let Some(staged) = self.staged.take() {
            staged.commit()?;
        }
        Ok(stats)
    }

    /// [`WavWriter::finish`] for a writer made by [`WavWriter::in_memory`]: the level
    /// figures and the file's bytes (empty for a writer of a file).
    pub fn finish_in_memory(mut self) -> Result<(LevelStats, Vec<u8>), WavError> {
        let bytes = self.complete()?;
        let stats = self.quant.stats();
        if let Some(staged) = self.staged.take() {
            staged.commit()?;
        }
        Ok((stats, bytes))
    }

    /// Complete the header and write everything back; the bytes when writing to memory.
    fn complete(&mut self) -> Result<Vec<u8>, WavError> {
        let mut bytes = Vec::new();
        if let Some(mut out) = self.out.take() {
            // RIFF pads a chunk of odd size with one zero byte, which its size field does not
            // count (IBM/Microsoft, "Multimedia Programming Interface and Data Specifications
            // 1.0", 1991); the RIFF chunk's size (everything after its first 8 bytes) counts
            // it. Sizes past 32 bits make the file RF64 (EBU Tech 3306).
            let pad = pad_len(self.data_bytes) as usize;
            let mut trailer = Vec::new();
            for c in &self.after {
                chunk_bytes(c, &mut trailer);
            }
            let patches = size_fields(
                u64::from(self.header_len),
                self.data_bytes,
                self.frames,
                trailer.len() as u64,
            );
            let pending = std::mem::take(&mut self.bytes);
            let fill = |out: &mut BufWriter<Target>| -> io::Result<()> {
                // The audio still gathered, then the writer stands just after the last
                // audio byte.
                out.write_all(&pending)?;
                out.write_all(&[0u8][..pad])?;
                out.write_all(&trailer)?;
                for (at, bytes) in &patches {
                    out.seek(SeekFrom::Start(*at))?;
                    out.write_all(bytes)?;
                }
                out.flush()
            };
            fill(&mut out).map_err(|e| WavError::io("cannot write", e))?;
            if let Target::Memory(m) = out
                .into_inner()
                .map_err(|e| e.into_error())
                .map_err(|e| WavError::io("cannot write", e))?
            {
                bytes = m.into_inner();
            }
        }
        if let Some(wb) = self.writeback.take() {
            wb.finish().map_err(|e| WavError::io("cannot write", e))?;
        }
        Ok(bytes)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::audio::wav::{NonFinite, WavReader};

    #[test]
    fn bytes_match_hound_sample_by_sample() {
        // The same samples through hound's own per-sample writer, with a quantizer of the same
        // settings: the files must be identical, header and size fields included, except that
        // an odd-sized data chunk gets its pad byte (hound writes none), which the RIFF size
        // counts.
        let dir = tempfile::tempdir().unwrap();
        let mut padded = 0;
        for enc in [
            Encoding::Int(8),
            Encoding::Int(16),
            Encoding::Int(24),
            Encoding::Int(32),
            Encoding::Float32,
        ] {
            for (channels, frames) in [(1u16, 40_000), (1, 40_001), (2, 40_001), (6, 40_000)] {
                for dither in [Dither::Tpdf, Dither::None] {
                    let x: Vec<f64> = (0..frames * usize::from(channels))
                        .map(|i| 1.2 * ((i as f64) * 0.001_37).sin())
                        .collect();
                    let ours = dir.path().join("ours.wav");
                    let mut opts = WriterOptions::new(44_100, channels, enc);
                    opts.dither = dither;
                    opts.force = true;
                    let mut w = WavWriter::create(&ours, &opts).unwrap();
                    // Uneven pieces, so chunk edges fall anywhere.
                    for piece in x.chunks(777 * usize::from(channels)) {
                        w.write_frames(piece).unwrap();
                    }
                    w.finish().unwrap();
                    let theirs = dir.path().join("theirs.wav");
                    let mut h =
                        hound::WavWriter::create(&theirs, enc.spec(44_100, channels)).unwrap();
                    let mut q = Quantizer::new(enc, dither);
                    for &v in &x {
                        match enc {
                            Encoding::Float32 => h.write_sample(q.to_float(v)).unwrap(),
                            Encoding::Int(_) => h.write_sample(q.to_code(v)).unwrap(),
                        }
                    }
                    h.finalize().unwrap();
                    let (a, mut b) = (
                        std::fs::read(&ours).unwrap(),
                        std::fs::read(&theirs).unwrap(),
                    );
                    // Ours reserves a 'JUNK' chunk of 28 zero bytes after "WAVE" (room for an
                    // RF64 'ds64' chunk), counted in the RIFF size; hound's has none.
                    let mut junk = b"JUNK\x1c\0\0\0".to_vec();
                    junk.extend_from_slice(&[0u8; 28]);
                    b.splice(12..12, junk);
                    let riff = u32::from_le_bytes(b[4..8].try_into().unwrap()) + 36;
                    b[4..8].copy_from_slice(&riff.to_le_bytes());
                    if (x.len() * usize::from(enc.bytes())) % 2 == 1 {
                        b.push(0);
                        let riff = u32::from_le_bytes(b[4..8].try_into().unwrap()) + 1;
                        b[4..8].copy_from_slice(&riff.to_le_bytes());
                        padded += 1;
                    }
                    assert!(a == b, "{enc} x{channels} {frames} {dither:?}");
                }
            }
        }
        // 8- and 24-bit mono of an odd length, each with and without dither.
        assert_eq!(padded, 4);
    }

    #[test]
    fn audio_encoded_elsewhere_makes_the_same_file() {
        // Pieces encoded by the writer's parallel encoder and handed over, in sizes on both
        // sides of the write buffer, give the bytes and figures of write_frames.
        let dir = tempfile::tempdir().unwrap();
        for enc in [Encoding::Float32, Encoding::Int(16), Encoding::Int(32)] {
            let x: Vec<f64> = (0..300_002)
                .map(|i| 1.2 * ((i as f64) * 0.000_37).sin())
                .collect();
            let mut opts = WriterOptions::new(48_000, 2, enc);
            opts.dither = Dither::None;
            opts.force = true;
            let plain = dir.path().join("plain.wav");
            let mut w = WavWriter::create(&plain, &opts).unwrap();
            w.sync_every(1 << 20).unwrap();
            for piece in x.chunks(9_000 * 2) {
                w.write_frames(piece).unwrap();
            }
            let want = w.finish().unwrap();
            let handed = dir.path().join("handed.wav");
            let mut w = WavWriter::create(&handed, &opts).unwrap();
            w.sync_every(1 << 20).unwrap();
            let mut q = w.parallel_encoder().expect("no dither: encodes anywhere");
            let mut bytes = Vec::new();
            for piece in x.chunks(9_000 * 2) {
                bytes.clear();
                encode_samples(&mut q, piece, &mut bytes);
                w.write_encoded(&bytes, piece.len(), &q.take_stats())
                    .unwrap();
            }
            let got = w.finish().unwrap();
            assert_eq!(want, got, "{enc}");
            assert!(
                std::fs::read(&plain).unwrap() == std::fs::read(&handed).unwrap(),
                "{enc}"
            );
            // One large piece (past the write buffer: straight to the file).
            opts.force = true;
            let mut w = WavWriter::create(&handed, &opts).unwrap();
            let mut q = w.parallel_encoder().unwrap();
            bytes.clear();
            encode_samples(&mut q, &x, &mut bytes);
            w.write_encoded(&bytes, x.len(), &q.take_stats()).unwrap();
            assert_eq!(w.finish().unwrap(), want, "{enc}: one piece");
            assert!(
                std::fs::read(&plain).unwrap() == std::fs::read(&handed).unwrap(),
                "{enc}: one piece"
            );
        }
        // A dithering writer has no parallel encoder.
        let opts = WriterOptions::new(48_000, 2, Encoding::Int(16));
        let w = WavWriter::create(&dir.path().join("d.wav"), &opts).unwrap();
        assert!(w.parallel_encoder().is_none());
    }

    #[test]
    fn our_extensible_format_chunk_is_hounds_with_the_mask_we_give() {
        // Where hound writes WAVE_FORMAT_EXTENSIBLE (more than two channels or more than 16
        // bits), it sets the first N speaker bits; given that same mask, our own format
        // chunk must be byte for byte the one hound writes.
        for enc in [Encoding::Int(24), Encoding::Int(32), Encoding::Float32] {
            for channels in [1u16, 2, 3, 4, 6, 8] {
                let spec = enc.spec(48_000, channels);
                let first_bits = (1u32 << channels) - 1;
                assert_eq!(
                    header(spec, Some(first_bits), &[]).unwrap(),
                    header(spec, None, &[]).unwrap(),
                    "{enc} x{channels}"
                );
            }
        }
        // Metadata goes between the format chunk and the data chunk header, padded.
        let spec = Encoding::Int(16).spec(8000, 2);
        let c = Chunk {
            id: *b"abcd",
            body: vec![1, 2, 3],
        };
        let plain = header(spec, None, &[]).unwrap();
        let with = header(spec, None, &[c]).unwrap();
        assert_eq!(with.len(), plain.len() + 12);
        assert_eq!(
            &with[with.len() - 20..with.len() - 8],
            b"abcd\x03\0\0\0\x01\x02\x03\0"
        );
        assert_eq!(&with[with.len() - 8..with.len() - 4], b"data");
    }

    #[test]
    fn round_trip_every_encoding() {
        let dir = tempfile::tempdir().unwrap();
        for enc in [
            Encoding::Int(8),
            Encoding::Int(16),
            Encoding::Int(24),
            Encoding::Int(32),
            Encoding::Float32,
        ] {
            for channels in [1u16, 2, 6] {
                let path = dir.path().join(format!("{enc}-{channels}.wav"));
                let mut opts = WriterOptions::new(8000, channels, enc);
                opts.dither = Dither::None;
                let mut w = WavWriter::create(&path, &opts).unwrap();
                let frames = 1000;
                let x: Vec<f64> = (0..frames * usize::from(channels))
                    .map(|i| ((i * 7919) % 2001) as f64 / 1000.0 - 1.0)
                    .collect();
                w.write_frames(&x).unwrap();
                w.finish().unwrap();
                let mut r = WavReader::open(&path).unwrap();
                assert_eq!(r.info().encoding, enc);
                assert_eq!(r.info().channels, channels);
                assert_eq!(r.info().frames, frames as u64);
                let mut y = vec![0.0_f64; x.len()];
                assert_eq!(r.read_frames(&mut y, NonFinite::Refuse).unwrap(), frames);
                let lsb = 1.0 / enc.scale();
                let tol = if enc.is_float() { 1e-7 } else { lsb };
                for (a, b) in x.iter().zip(&y) {
                    // Positive full scale is one LSB short of +1.0.
                    assert!((a - b).abs() <= tol + 1e-12, "{enc}: {a} vs {b}");
                }
            }
        }
    }
}
