//! A small, bounded look at a WAV header's format chunk, used only to name an encoding that
//! `hound` declined (its error does not say which format tag it met).

use std::fs::File;
use std::io::{Read, Seek, SeekFrom};
use std::path::Path;

/// Chunks looked at before giving up.
const MAX_CHUNKS: usize = 64;

/// "format tag 0x0007 (mu-law), 8 bits" or similar; `None` if the fmt chunk is not found.
pub(crate) fn describe_format(path: &Path) -> Option<String> {
    let mut f = File::open(path).ok()?;
    let mut head = [0u8; 12];
    f.read_exact(&mut head).ok()?;
    if &head[0..4] != b"RIFF" || &head[8..12] != b"WAVE" {
        return None;
    }
    for _ in 0..MAX_CHUNKS {
        let mut ch = [0u8; 8];
        f.read_exact(&mut ch).ok()?;
        let len = u32::from_le_bytes([ch[4], ch[5], ch[6], ch[7]]);
        if &ch[0..4] == b"fmt " {
            let mut fmt = [0u8; 40];
            let n = (len as usize).min(40);
            f.read_exact(&mut fmt[..n]).ok()?;
            if n < 16 {
                return None;
            }
            let mut tag = u16::from_le_bytes([fmt[0], fmt[1]]);
            let bits = u16::from_le_bytes([fmt[14], fmt[15]]);
            let extensible = tag == 0xFFFE && n >= 26;
            if extensible {
                // The first two bytes of the SubFormat GUID carry the format tag.
                tag = u16::from_le_bytes([fmt[24], fmt[25]]);
            }
            return Some(format!(
                "{}format tag 0x{tag:04X} ({}), {bits} bits per sample",
                if extensible {
                    "WAVE_FORMAT_EXTENSIBLE with "
                } else {
                    ""
                },
                tag_name(tag, bits)
            ));
        }
        let skip = i64::from(len) + i64::from(len & 1);
        f.seek(SeekFrom::Current(skip)).ok()?;
    }
    None
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
