//! Walking a RIFF/WAVE file's chunk list (bounded; nothing is allocated by a declared size)
//! to find the format chunk and where the audio data lies. RIFF pads odd-length chunks to an
//! even length; the walk honours that, and hands `hound` a clean header of just the format
//! and data chunks.

use std::io::{self, Read, Seek, SeekFrom};

use super::error::WavError;

/// Largest format chunk accepted, bytes (WAVE_FORMAT_EXTENSIBLE needs 40).
const MAX_FMT_BYTES: u32 = 1024;
/// Most chunks looked at before the data chunk.
const MAX_CHUNKS: usize = 100_000;

/// Where things are in a WAV file.
#[derive(Debug, Clone, PartialEq, Eq)]
pub(crate) struct Layout {
    /// The format chunk's body.
    pub fmt: Vec<u8>,
    /// Offset of the first audio byte.
    pub data_offset: u64,
    /// Bytes of audio the data chunk declares.
    pub data_len: u32,
}

impl Layout {
    /// A minimal RIFF header (format chunk + data chunk header) for `hound`, to be followed
    /// by the audio bytes.
    pub fn clean_header(&self) -> Vec<u8> {
        let fmt_len = self.fmt.len() as u32;
        let riff_len = 4u32
            .saturating_add(8 + fmt_len)
            .saturating_add(8)
            .saturating_add(self.data_len);
        let mut h = Vec::with_capacity(28 + self.fmt.len());
        h.extend_from_slice(b"RIFF");
        h.extend_from_slice(&riff_len.to_le_bytes());
        h.extend_from_slice(b"WAVE");
        h.extend_from_slice(b"fmt ");
        h.extend_from_slice(&fmt_len.to_le_bytes());
        h.extend_from_slice(&self.fmt);
        h.extend_from_slice(b"data");
        h.extend_from_slice(&self.data_len.to_le_bytes());
        h
    }

    /// A description of the encoding in the format chunk, for an "unsupported" message:
    /// "format tag 0x0007 (mu-law), 8 bits per sample".
    pub fn describe(&self) -> String {
        let f = &self.fmt;
        let mut tag = u16::from_le_bytes([f[0], f[1]]);
        let bits = u16::from_le_bytes([f[14], f[15]]);
        let extensible = tag == 0xFFFE && f.len() >= 26;
        if extensible {
            // The first two bytes of the SubFormat GUID carry the format tag.
            tag = u16::from_le_bytes([f[24], f[25]]);
        }
        format!(
            "{}format tag 0x{tag:04X} ({}), {bits} bits per sample",
            if extensible {
                "WAVE_FORMAT_EXTENSIBLE with "
            } else {
                ""
            },
            tag_name(tag, bits)
        )
    }
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

/// Walk the chunks of a file of `size` bytes whose first 12 bytes ("RIFF", size, "WAVE")
/// are already checked; `r` is positioned after them.
pub(crate) fn scan<R: Read + Seek>(r: &mut R, size: u64) -> Result<Layout, WavError> {
    let mut pos = 12u64;
    let mut fmt: Option<Vec<u8>> = None;
    for _ in 0..MAX_CHUNKS {
        let mut head = [0u8; 8];
        if size.saturating_sub(pos) < 8 {
            return Err(match fmt {
                None => WavError::HeaderTruncated,
                Some(_) => WavError::Malformed("no data chunk".into()),
            });
        }
        read_exact_or(r, &mut head, WavError::HeaderTruncated)?;
        pos += 8;
        let tag = [head[0], head[1], head[2], head[3]];
        let len = u32::from_le_bytes([head[4], head[5], head[6], head[7]]);
        let avail = size - pos;
        match &tag {
            b"data" => {
                let fmt = fmt.ok_or_else(|| {
                    WavError::Malformed("missing fmt chunk before the data chunk".into())
                })?;
                return Ok(Layout {
                    fmt,
                    data_offset: pos,
                    data_len: len,
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
                    r.seek(SeekFrom::Current(1))
                        .map_err(|e| WavError::io("cannot read", e))?;
                    pos += 1;
                }
            }
            _ => {
                let skip = u64::from(len) + u64::from(len % 2);
                if u64::from(len) > avail {
                    return Err(WavError::Malformed(format!(
                        "the '{}' chunk declares {len} bytes but only {avail} follow",
                        String::from_utf8_lossy(&tag).escape_debug()
                    )));
                }
                let skip = skip.min(avail);
                r.seek(SeekFrom::Current(skip as i64))
                    .map_err(|e| WavError::io("cannot read", e))?;
                pos += skip;
            }
        }
    }
    Err(WavError::Malformed(format!(
        "more than {MAX_CHUNKS} chunks before the data chunk"
    )))
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
    use std::io::Cursor;

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
        let mut c = Cursor::new(&v);
        c.set_position(12);
        let l = scan(&mut c, v.len() as u64).unwrap();
        assert_eq!(l.fmt, fmt);
        assert_eq!(l.data_len, 4);
        assert_eq!(l.data_offset, v.len() as u64 - 4);
    }

    #[test]
    fn absurd_sizes_are_refused_without_allocating() {
        let v = file(&[(b"fmt ", &[0u8; 16], Some(0xFFFF_FFF0))]);
        let mut c = Cursor::new(&v);
        c.set_position(12);
        assert!(matches!(
            scan(&mut c, v.len() as u64),
            Err(WavError::Malformed(_))
        ));
        let v = file(&[(b"junk", &[0u8; 4], Some(0x7FFF_FFFF))]);
        let mut c = Cursor::new(&v);
        c.set_position(12);
        let e = scan(&mut c, v.len() as u64).unwrap_err().to_string();
        assert!(e.contains("declares 2147483647 bytes"), "{e}");
    }
}
