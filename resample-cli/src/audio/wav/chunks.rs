//! Walking a RIFF/WAVE file's chunk list (bounded; nothing is allocated by a declared size)
//! to find the format chunk, where the audio data lies, and the metadata chunks on the way
//! (and, after the audio, those that follow it). RIFF pads odd-length chunks to an
//! even length; the walk honours that. The format chunk is parsed here too, so that every
//! layout the specifications allow is decoded by their rules (left-justified valid bits).

use std::io::{self, Read};

use super::error::WavError;
use super::metadata::{id_text, is_known, Chunk, Found, MAX_CHUNK_BYTES, MAX_TOTAL_BYTES};
use super::rf64::{parse_ds64, Ds64, DS64_BODY};
use super::source::Source;

/// Largest format chunk accepted, bytes (WAVE_FORMAT_EXTENSIBLE needs 40).
const MAX_FMT_BYTES: u32 = 1024;
/// Most chunks looked at before the data chunk.
const MAX_CHUNKS: usize = 100_000;
/// Largest 'ds64' chunk accepted, bytes (its table of other chunks' sizes is not needed).
const MAX_DS64_BYTES: u32 = 64 << 10;

/// Where things are in a WAV file.
#[derive(Debug, Clone, PartialEq, Eq)]
pub(crate) struct Layout {
    /// The format chunk's body.
    pub fmt: Vec<u8>,
    /// Offset of the first audio byte.
    pub data_offset: u64,
    /// Bytes of audio the data chunk declares (from 'ds64' for an RF64/BW64 file).
    pub data_len: u64,
    /// The chunks before the data chunk other than 'fmt ' (and 'ds64'), in their order.
    pub chunks: Vec<Found>,
    /// Bytes of metadata read so far (bounded by [`MAX_TOTAL_BYTES`]).
    pub metadata_bytes: u64,
}

impl Layout {
    /// The channel mask of a WAVE_FORMAT_EXTENSIBLE format chunk (u32 at 20; Microsoft,
    /// "Multiple channel audio data and WAVE files").
    pub fn channel_mask(&self) -> Option<u32> {
        let f = &self.fmt;
        let tag = u16::from_le_bytes([*f.first()?, *f.get(1)?]);
        (tag == WAVE_FORMAT_EXTENSIBLE && f.len() >= 24)
            .then(|| u32::from_le_bytes([f[20], f[21], f[22], f[23]]))
    }

    /// A description of the encoding in the format chunk, for an "unsupported" message:
    /// "format tag 0x0007 (mu-law), 8 bits per sample", or for WAVE_FORMAT_EXTENSIBLE
    /// "... 20 valid bits in 24-bit containers".
    pub fn describe(&self) -> String {
        let f = &self.fmt;
        let mut tag = u16::from_le_bytes([f[0], f[1]]);
        let bits = u16::from_le_bytes([f[14], f[15]]);
        let extensible = tag == WAVE_FORMAT_EXTENSIBLE && f.len() >= 26;
        let mut width = format!("{bits} bits per sample");
        if extensible {
            // The first two bytes of the SubFormat GUID carry the format tag.
            tag = u16::from_le_bytes([f[24], f[25]]);
            let valid = u16::from_le_bytes([f[18], f[19]]);
            width = format!("{valid} valid bits in {bits}-bit containers");
        }
        format!(
            "{}format tag 0x{tag:04X} ({}), {width}",
            if extensible {
                "WAVE_FORMAT_EXTENSIBLE with "
            } else {
                ""
            },
            tag_name(tag, bits)
        )
    }

    /// The sample layout the format chunk declares, checked for what rerate decodes:
    /// integer PCM of 1 to 32 valid bits in containers of 1 to 4 bytes, or 32-bit IEEE
    /// float; plain or WAVE_FORMAT_EXTENSIBLE.
    ///
    /// Fields of WAVEFORMATEX and WAVE_FORMAT_EXTENSIBLE as Microsoft, "Multiple channel
    /// audio data and WAVE files" (2007) gives them: format tag at 0, channels at 2, sample
    /// rate at 4, block align at 12, bits per sample (the container) at 14, cbSize at 16,
    /// valid bits per sample at 18, channel mask at 20, SubFormat GUID at 24 (its first two
    /// bytes carry the format tag).
    pub fn format(&self) -> Result<Format, WavError> {
        let f = &self.fmt;
        let u16_at = |i: usize| u16::from_le_bytes([f[i], f[i + 1]]);
        let tag = u16_at(0);
        let channels = u16_at(2);
        let sample_rate = u32::from_le_bytes([f[4], f[5], f[6], f[7]]);
        let block_align = u16_at(12);
        let bits = u16_at(14);
        let (tag, valid_bits) = if tag == WAVE_FORMAT_EXTENSIBLE {
            if f.len() < 40 || u16_at(16) < 22 {
                return Err(WavError::Malformed(format!(
                    "WAVE_FORMAT_EXTENSIBLE format chunk of {} bytes with cbSize {} \
                     (expected 40 bytes, cbSize 22)",
                    f.len(),
                    if f.len() >= 18 { u16_at(16) } else { 0 }
                )));
            }
            if f[26..40] != GUID_TAIL {
                return Err(WavError::Unsupported(format!(
                    "WAVE_FORMAT_EXTENSIBLE with a SubFormat GUID that is not a format tag \
                     ({})",
                    guid_text(&f[24..40])
                )));
            }
            (u16_at(24), u16_at(18))
        } else {
            (tag, bits)
        };
        if channels == 0 {
            return Err(WavError::Malformed("the header declares 0 channels".into()));
        }
        let container = block_align / channels;
        if block_align == 0 || block_align % channels != 0 {
            return Err(WavError::Malformed(format!(
                "block align {block_align} is not a whole number of bytes per channel for \
                 {channels} channels"
            )));
        }
        let sample = match (tag, container, valid_bits) {
            (WAVE_FORMAT_PCM, 1..=4, v) if (1..=container * 8).contains(&v) => {
                // The container size in bits must agree with the declared sample width:
                // equal to it (EXTENSIBLE), or its rounding up to whole bytes (plain PCM).
                if bits.div_ceil(8) != container {
                    return Err(WavError::Malformed(format!(
                        "{bits} bits per sample in blocks of {container} bytes per channel"
                    )));
                }
                SampleLayout::Int {
                    container_bytes: container,
                    valid_bits: v,
                }
            }
            (WAVE_FORMAT_IEEE_FLOAT, 4, 32) => SampleLayout::Float32,
            _ => return Err(WavError::Unsupported(self.describe())),
        };
        Ok(Format {
            sample_rate,
            channels,
            block_align,
            sample,
        })
    }
}

/// WAVEFORMATEX format tag of integer PCM (Microsoft mmreg.h).
const WAVE_FORMAT_PCM: u16 = 0x0001;
/// WAVEFORMATEX format tag of IEEE float samples (Microsoft mmreg.h).
const WAVE_FORMAT_IEEE_FLOAT: u16 = 0x0003;
/// The format tag that says "see the SubFormat GUID" (Microsoft, "Multiple channel audio
/// data and WAVE files").
const WAVE_FORMAT_EXTENSIBLE: u16 = 0xFFFE;
/// The last 14 bytes of every SubFormat GUID that carries a plain format tag in its first
/// two bytes: {xxxxxxxx-0000-0010-8000-00AA00389B71} (same source, KSDATAFORMAT_SUBTYPE_*).
const GUID_TAIL: [u8; 14] = [
    0x00, 0x00, 0x00, 0x00, 0x10, 0x00, 0x80, 0x00, 0x00, 0xAA, 0x00, 0x38, 0x9B, 0x71,
];

/// A GUID's 16 bytes, as usually written: {01234567-89AB-CDEF-0123-456789ABCDEF}.
fn guid_text(g: &[u8]) -> String {
    let hex = |b: &[u8]| b.iter().map(|x| format!("{x:02X}")).collect::<String>();
    let rev = |b: &[u8]| hex(&b.iter().rev().copied().collect::<Vec<_>>());
    format!(
        "{{{}-{}-{}-{}-{}}}",
        rev(&g[0..4]),
        rev(&g[4..6]),
        rev(&g[6..8]),
        hex(&g[8..10]),
        hex(&g[10..16])
    )
}

/// What the format chunk declares, once checked.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct Format {
    /// Frames per second (not yet checked against 0 or the converter's range).
    pub sample_rate: u32,
    /// Channels (never 0).
    pub channels: u16,
    /// Bytes per frame (never 0; channels x container bytes).
    pub block_align: u16,
    /// How each sample is stored.
    pub sample: SampleLayout,
}

/// How one sample is stored.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum SampleLayout {
    /// Integer PCM: `valid_bits` significant bits, left-justified in a little-endian
    /// container of `container_bytes` (the low bits are zero; 8-bit containers are
    /// unsigned with offset 128, wider ones two's complement).
    Int {
        /// 1 to 4.
        container_bytes: u16,
        /// 1 to 8 x `container_bytes`.
        valid_bits: u16,
    },
    /// 32-bit little-endian IEEE float, full scale ±1.0.
    Float32,
}

fn read_exact_or<R: Read>(r: &mut R, buf: &mut [u8], short: WavError) -> Result<(), WavError> {
    r.read_exact(buf).map_err(|e| {
        if e.kind() == io::ErrorKind::UnexpectedEof {
            short
        } else {
            WavError::io("cannot read", e)
        }
    })
}

/// Walk the chunks of a source whose first 12 bytes ("RIFF", size, "WAVE"; or "RF64"/"BW64"
/// when `rf64_container`) are already checked; `r` is positioned after them. `size` is the
/// source's length, `None` for a stream (then a chunk that runs past the end is found by
/// reading, not by arithmetic). An RF64/BW64 file must begin with its 'ds64' chunk, whose data
/// size replaces the data chunk's 32-bit placeholder.
pub(crate) fn scan(
    r: &mut Source,
    size: Option<u64>,
    rf64_container: bool,
) -> Result<Layout, WavError> {
    let mut pos = 12u64;
    let mut fmt: Option<Vec<u8>> = None;
    let no_data = |fmt: &Option<Vec<u8>>| match fmt {
        None => WavError::HeaderTruncated,
        Some(_) => WavError::Malformed("no data chunk".into()),
    };
    let mut rf64: Option<Ds64> = None;
    let mut chunks = Vec::new();
    let mut metadata_bytes = 0u64;
    if rf64_container {
        let mut head = [0u8; 8];
        read_exact_or(r, &mut head, WavError::HeaderTruncated)?;
        pos += 8;
        let len = u32::from_le_bytes([head[4], head[5], head[6], head[7]]);
        if &head[..4] != b"ds64" || !(DS64_BODY..=MAX_DS64_BYTES).contains(&len) {
            return Err(WavError::Malformed(format!(
                "an RF64/BW64 file must start with a 'ds64' chunk of {DS64_BODY} to \
                 {MAX_DS64_BYTES} bytes; found '{}' of {len} bytes",
                String::from_utf8_lossy(&head[..4]).escape_debug()
            )));
        }
        if size.is_some_and(|size| u64::from(len) > size - pos) {
            return Err(WavError::HeaderTruncated);
        }
        let mut body = vec![0u8; len as usize];
        read_exact_or(r, &mut body, WavError::HeaderTruncated)?;
        pos += u64::from(len);
        rf64 = parse_ds64(&body);
        if len % 2 == 1 {
            pos += r.skip(1).map_err(|e| WavError::io("cannot read", e))?;
        }
    }
    for _ in 0..MAX_CHUNKS {
        let mut head = [0u8; 8];
        if size.is_some_and(|size| size.saturating_sub(pos) < 8) {
            return Err(no_data(&fmt));
        }
        read_exact_or(r, &mut head, no_data(&fmt))?;
        pos += 8;
        let tag = [head[0], head[1], head[2], head[3]];
        let len = u32::from_le_bytes([head[4], head[5], head[6], head[7]]);
        // What follows: known for a seekable source, unbounded (until read) for a stream.
        let avail = size.map_or(u64::MAX, |size| size - pos);
        match &tag {
            b"data" => {
                let fmt = fmt.ok_or_else(|| {
                    WavError::Malformed("missing fmt chunk before the data chunk".into())
                })?;
                // RF64: the 32-bit size is a placeholder for the 'ds64' figure (EBU Tech 3306).
                let data_len = match (rf64, len) {
                    (Some(ds), u32::MAX) => ds.data_size,
                    _ => u64::from(len),
                };
                return Ok(Layout {
                    fmt,
                    data_offset: pos,
                    data_len,
                    chunks,
                    metadata_bytes,
                });
            }
            b"fmt " => {
                if !(16..=MAX_FMT_BYTES).contains(&len) {
                    return Err(WavError::Malformed(format!(
                        "fmt chunk of {len} bytes (expected 16 to {MAX_FMT_BYTES})"
                    )));
                }
                if u64::from(len) > avail {
                    return Err(WavError::HeaderTruncated);
                }
                let mut body = vec![0u8; len as usize];
                read_exact_or(r, &mut body, WavError::HeaderTruncated)?;
                pos += u64::from(len);
                fmt = Some(body);
                if len % 2 == 1 && avail > u64::from(len) {
                    pos += r.skip(1).map_err(|e| WavError::io("cannot read", e))?;
                }
            }
            _ => {
                let too_long = |avail: u64| {
                    WavError::Malformed(format!(
                        "the '{}' chunk declares {len} bytes but only {avail} follow",
                        String::from_utf8_lossy(&tag).escape_debug()
                    ))
                };
                if u64::from(len) > avail {
                    return Err(too_long(avail));
                }
                match read_metadata(r, tag, len, &mut metadata_bytes)? {
                    Ok(found) => {
                        pos += u64::from(len);
                        chunks.extend(found);
                    }
                    Err(got) => return Err(too_long(got)),
                }
                if len % 2 == 1 && avail > u64::from(len) {
                    pos += r.skip(1).map_err(|e| WavError::io("cannot read", e))?;
                }
            }
        }
    }
    Err(WavError::Malformed(format!(
        "more than {MAX_CHUNKS} chunks before the data chunk"
    )))
}

/// Read (or skip) the body of a chunk of `len` bytes that is neither 'fmt ' nor 'data'
/// (the source is at its first byte; the pad byte is left to the caller): what was found
/// (nothing for padding), or `Err(bytes)` when the source ended after only that many
/// bytes. A known chunk over [`MAX_CHUNK_BYTES`], or metadata past [`MAX_TOTAL_BYTES`] in
/// all, is refused; an unknown chunk over the limit is skipped unread.
pub(crate) fn read_metadata(
    r: &mut Source,
    tag: [u8; 4],
    len: u32,
    total: &mut u64,
) -> Result<Result<Option<Found>, u64>, WavError> {
    let padding = matches!(&tag, b"JUNK" | b"junk" | b"PAD " | b"FLLR");
    if padding || len > MAX_CHUNK_BYTES {
        if len > MAX_CHUNK_BYTES && is_known(&tag) && !padding {
            return Err(WavError::MetadataTooLarge {
                id: id_text(&tag),
                len: u64::from(len),
                limit: u64::from(MAX_CHUNK_BYTES),
            });
        }
        let skipped = r
            .skip(u64::from(len))
            .map_err(|e| WavError::io("cannot read", e))?;
        if skipped < u64::from(len) {
            return Ok(Err(skipped));
        }
        return Ok(Ok((!padding).then_some(Found::TooLarge {
            id: tag,
            len: u64::from(len),
        })));
    }
    *total += u64::from(len);
    if *total > MAX_TOTAL_BYTES {
        return Err(WavError::MetadataTooLarge {
            id: "all metadata".into(),
            len: *total,
            limit: MAX_TOTAL_BYTES,
        });
    }
    let mut body = Vec::new();
    let got = Read::by_ref(r)
        .take(u64::from(len))
        .read_to_end(&mut body)
        .map_err(|e| WavError::io("cannot read", e))?;
    if got < len as usize {
        return Ok(Err(got as u64));
    }
    Ok(Ok(Some(Found::Read(Chunk { id: tag, body }))))
}

/// Common format tags (Microsoft mmreg.h; common practice, no further source).
fn tag_name(tag: u16, bits: u16) -> &'static str {
    match (tag, bits) {
        (0x0001, 8 | 16 | 24 | 32) => "integer PCM",
        (0x0001, _) => "integer PCM of an unusual word length",
        (0x0003, 64) => "64-bit float",
        (0x0003, _) => "IEEE float",
        (0x0002, _) => "Microsoft ADPCM",
        (0x0006, _) => "A-law",
        (0x0007, _) => "mu-law",
        (0x0011, _) => "IMA ADPCM",
        (0x0031, _) => "GSM 6.10",
        (0x0050, _) => "MPEG",
        (0x0055, _) => "MPEG layer 3",
        (0x00FF | 0x1610, _) => "AAC",
        _ => "unknown",
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::io::{Cursor, Seek, SeekFrom};

    fn at_12(v: &[u8]) -> Source {
        let mut c = Cursor::new(v.to_vec());
        c.seek(SeekFrom::Start(12)).unwrap();
        Source::Seekable(Box::new(c))
    }

    fn stream_12(v: &[u8]) -> Source {
        Source::Stream(Box::new(Cursor::new(v[12..].to_vec())))
    }

    fn file(chunks: &[(&[u8; 4], &[u8], Option<u32>)]) -> Vec<u8> {
        let mut v = b"RIFF\0\0\0\0WAVE".to_vec();
        for (tag, body, declared) in chunks {
            v.extend_from_slice(*tag);
            v.extend_from_slice(&declared.unwrap_or(body.len() as u32).to_le_bytes());
            v.extend_from_slice(body);
            if body.len() % 2 == 1 {
                v.push(0);
            }
        }
        v
    }

    #[test]
    fn honours_pad_bytes_and_finds_data() {
        let fmt = [1u8, 0, 1, 0, 64, 31, 0, 0, 128, 62, 0, 0, 2, 0, 16, 0];
        let v = file(&[
            (b"LIST", b"odd", None),
            (b"fmt ", &fmt, None),
            (b"data", &[0, 0, 1, 0], None),
        ]);
        let l = scan(&mut at_12(&v), Some(v.len() as u64), false).unwrap();
        assert_eq!(l.fmt, fmt);
        assert_eq!(l.data_len, 4);
        assert_eq!(l.data_offset, v.len() as u64 - 4);
        // The same bytes as a stream of unknown length.
        let l = scan(&mut stream_12(&v), None, false).unwrap();
        assert_eq!(l.fmt, fmt);
        assert_eq!(l.data_len, 4);
        assert_eq!(l.data_offset, v.len() as u64 - 4);
    }

    #[test]
    fn absurd_sizes_are_refused_without_allocating() {
        let v = file(&[(b"fmt ", &[0u8; 16], Some(0xFFFF_FFF0))]);
        assert!(matches!(
            scan(&mut at_12(&v), Some(v.len() as u64), false),
            Err(WavError::Malformed(_))
        ));
        let v = file(&[(b"junk", &[0u8; 4], Some(0x7FFF_FFFF))]);
        let e = scan(&mut at_12(&v), Some(v.len() as u64), false)
            .unwrap_err()
            .to_string();
        assert!(e.contains("declares 2147483647 bytes"), "{e}");
        // A stream finds out by reading (bounded by the bytes there are).
        let e = scan(&mut stream_12(&v), None, false)
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("declares 2147483647 bytes but only 4 follow"),
            "{e}"
        );
    }
}
