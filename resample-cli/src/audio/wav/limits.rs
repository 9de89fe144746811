//! The 4 GiB size limit of a RIFF WAV file, checked before any work is done.

use super::encoding::Encoding;
use super::error::WavError;

/// Largest RIFF file: the 32-bit RIFF size field counts the bytes after its first 8.
pub const RIFF_LIMIT_BYTES: u64 = u32::MAX as u64 + 8;

/// Header bytes rerate's writer (through `hound`) may use: RIFF + WAVE + a
/// WAVE_FORMAT_EXTENSIBLE fmt chunk (8 + 40) + data chunk header (8), with room to spare.
const HEADER_BYTES: u64 = 12 + 48 + 8 + 4;

/// Bytes of audio in the data chunk for `frames` frames of `channels` channels in
/// `encoding` (saturating).
fn data_bytes(frames: u64, channels: u16, encoding: Encoding) -> u64 {
    frames
        .saturating_mul(u64::from(channels))
        .saturating_mul(u64::from(encoding.bytes()))
}

/// Bytes of a WAV file holding `frames` frames of `channels` channels in `encoding`: header,
/// audio, and the pad byte that follows an odd-sized data chunk (IBM/Microsoft, "Multimedia
/// Programming Interface and Data Specifications 1.0", 1991). Saturating, so absurd inputs
/// give an absurd but finite figure.
pub fn output_bytes(frames: u64, channels: u16, encoding: Encoding) -> u64 {
    let data = data_bytes(frames, channels, encoding);
    data.saturating_add(data % 2).saturating_add(HEADER_BYTES)
}

/// Refuse an output that would pass the RIFF limit (pad byte included).
pub fn check_riff_size(frames: u64, channels: u16, encoding: Encoding) -> Result<(), WavError> {
    let bytes = output_bytes(frames, channels, encoding);
    // The data chunk's own size field (which does not count the pad byte) must fit too.
    let data = data_bytes(frames, channels, encoding);
    if bytes > RIFF_LIMIT_BYTES || data > u64::from(u32::MAX) {
        return Err(WavError::TooLarge {
            bytes,
            limit: RIFF_LIMIT_BYTES,
        });
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn an_hour_of_96k_stereo_24_bit_fits_but_four_hours_do_not() {
        let hour = 3600 * 96_000;
        assert!(check_riff_size(hour, 2, Encoding::Int(24)).is_ok());
        assert!(check_riff_size(4 * hour, 2, Encoding::Int(24)).is_err());
        assert!(check_riff_size(u64::MAX, u16::MAX, Encoding::Float32).is_err());
    }

    #[test]
    fn the_pad_byte_counts() {
        // 8-bit mono: one byte per frame. `odd` frames would end exactly at the limit without
        // their pad byte; with it they pass it by one. One frame fewer (even) fits.
        let odd = RIFF_LIMIT_BYTES - HEADER_BYTES;
        assert_eq!(odd % 2, 1);
        assert!(
            odd <= u64::from(u32::MAX),
            "refused for the pad, not the data size"
        );
        assert_eq!(output_bytes(odd, 1, Encoding::Int(8)), RIFF_LIMIT_BYTES + 1);
        assert!(check_riff_size(odd, 1, Encoding::Int(8)).is_err());
        assert_eq!(
            output_bytes(odd - 1, 1, Encoding::Int(8)),
            RIFF_LIMIT_BYTES - 1
        );
        assert!(check_riff_size(odd - 1, 1, Encoding::Int(8)).is_ok());
    }
}
