//! Files past 4 GiB: the RF64 container (EBU Tech 3306, "MBWF / RF64: an extended file
//! format for audio", 2009; ITU-R BS.2088 calls the same layout BW64), from memory.
//!
//! A RIFF file's sizes are 32-bit. RF64 keeps the RIFF layout but starts with "RF64" (or
//! "BW64") and a size field of 0xFFFFFFFF, and its first chunk, 'ds64', holds the 64-bit
//! sizes: riffSize (u64), dataSize (u64), sampleCount (u64), then a table of other chunks'
//! 64-bit sizes (tableLength u32, then entries of chunk id + u64 size). The 'data' chunk's
//! own 32-bit size is then 0xFFFFFFFF.
//!
//! The writer does what the specification recommends: every output starts with a 'JUNK'
//! chunk the size of a 'ds64' chunk (no table), which readers skip; at the end, a file that
//! fits stays plain RIFF/WAVE, and a larger one is promoted in place: "RIFF" becomes "RF64",
//! 'JUNK' becomes 'ds64' with the true sizes, and the 32-bit size fields become 0xFFFFFFFF.

/// Bytes of a 'ds64' chunk body without a table: riffSize, dataSize, sampleCount (u64 each)
/// and tableLength (u32).
pub(crate) const DS64_BODY: u32 = 28;

/// The chunk reserved after "WAVE" in every output: 'JUNK', its size, and zeros.
pub(crate) fn junk_chunk() -> [u8; 8 + DS64_BODY as usize] {
    let mut c = [0u8; 8 + DS64_BODY as usize];
    c[..4].copy_from_slice(b"JUNK");
    c[4..8].copy_from_slice(&DS64_BODY.to_le_bytes());
    c
}

/// What to write over the reserved places of a finished file: byte offset and bytes.
pub(crate) type Patch = (u64, Vec<u8>);

/// The size fields of a finished file whose header (everything before the first audio byte,
/// the reserved 'JUNK' chunk at offset 12 included) is `header_len` bytes, with `data` bytes
/// of audio (plus a pad byte when odd) holding `frames` frames, followed by `trailer` bytes
/// of chunks. Plain RIFF when both 32-bit sizes fit, RF64 otherwise. The data chunk's size
/// field is the header's last 4 bytes.
pub(crate) fn size_fields(header_len: u64, data: u64, frames: u64, trailer: u64) -> Vec<Patch> {
    let riff = header_len + data + data % 2 + trailer - 8;
    let data_field = header_len - 4;
    match (u32::try_from(riff), u32::try_from(data)) {
        (Ok(riff), Ok(data)) => vec![
            (4, riff.to_le_bytes().to_vec()),
            (data_field, data.to_le_bytes().to_vec()),
        ],
        _ => {
            let mut ds64 = Vec::with_capacity(8 + DS64_BODY as usize);
            ds64.extend_from_slice(b"ds64");
            ds64.extend_from_slice(&DS64_BODY.to_le_bytes());
            ds64.extend_from_slice(&riff.to_le_bytes());
            ds64.extend_from_slice(&data.to_le_bytes());
            ds64.extend_from_slice(&frames.to_le_bytes());
            ds64.extend_from_slice(&0u32.to_le_bytes());
            let mut head = Vec::with_capacity(8);
            head.extend_from_slice(b"RF64");
            head.extend_from_slice(&u32::MAX.to_le_bytes());
            vec![
                (0, head),
                (12, ds64),
                (data_field, u32::MAX.to_le_bytes().to_vec()),
            ]
        }
    }
}

/// The 64-bit sizes of an RF64/BW64 file, from its 'ds64' chunk body.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct Ds64 {
    /// Bytes after the file's first 8.
    pub riff_size: u64,
    /// Bytes of audio in the 'data' chunk.
    pub data_size: u64,
}

/// Parse a 'ds64' body (at least [`DS64_BODY`] bytes; a table may follow, and is not
/// needed: rerate reads no chunk other than 'fmt ' and 'data' by size).
pub(crate) fn parse_ds64(body: &[u8]) -> Option<Ds64> {
    let u64_at = |i: usize| {
        body.get(i..i + 8)
            .map(|b| u64::from_le_bytes([b[0], b[1], b[2], b[3], b[4], b[5], b[6], b[7]]))
    };
    Some(Ds64 {
        riff_size: u64_at(0)?,
        data_size: u64_at(8)?,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn small_files_stay_riff_and_large_ones_become_rf64() {
        let header = 12 + 36 + 8 + 16 + 8;
        // Fits: two 32-bit fields.
        let p = size_fields(header, 1001, 1001, 0);
        assert_eq!(p.len(), 2);
        assert_eq!(p[0], (4, (header as u32 + 1002 - 8).to_le_bytes().to_vec()));
        assert_eq!(p[1], (header - 4, 1001u32.to_le_bytes().to_vec()));
        // The largest even data chunk whose RIFF size still fits in 32 bits (4294967294 after
        // the first 8 bytes), then two bytes more.
        let edge = u64::from(u32::MAX) + 8 - header - 1;
        assert_eq!(edge % 2, 0);
        assert_eq!(size_fields(header, edge, edge, 0).len(), 2);
        // Chunks after the audio count in the RIFF size: two bytes of them promote it too.
        let p = size_fields(header, edge, edge, 2);
        assert_eq!(p.len(), 3);
        assert_eq!(
            parse_ds64(&p[1].1[8..]).unwrap().riff_size,
            header + edge + 2 - 8
        );
        let p = size_fields(header, edge + 2, edge + 2, 0);
        assert_eq!(p.len(), 3);
        assert_eq!(&p[0].1, b"RF64\xFF\xFF\xFF\xFF");
        let ds = parse_ds64(&p[1].1[8..]).unwrap();
        assert_eq!(ds.riff_size, header + edge + 2 - 8);
        assert_eq!(ds.data_size, edge + 2);
        assert_eq!(&p[1].1[..8], b"ds64\x1c\0\0\0");
        assert_eq!(p[2], (header - 4, vec![0xFF; 4]));
    }
}
