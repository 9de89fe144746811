//! The 4 GiB size limit of a RIFF WAV file, checked before any work is done.

use super::encoding::Encoding;
use super::error::WavError;

/// Largest RIFF file: the 32-bit RIFF size field counts the bytes after its first 8.
pub const RIFF_LIMIT_BYTES: u64 = u32::MAX as u64 + 8;

/// Header bytes rerate's writer (through `hound`) may use: RIFF + WAVE + a
/// WAVE_FORMAT_EXTENSIBLE fmt chunk (8 + 40) + data chunk header (8), with room to spare.
const HEADER_BYTES: u64 = 12 + 48 + 8 + 4;

/// Bytes of a WAV file holding `frames` frames of `channels` channels in `encoding`
/// (saturating, so absurd inputs give an absurd but finite figure).
pub fn output_bytes(frames: u64, channels: u16, encoding: Encoding) -> u64 {
    frames
        .saturating_mul(u64::from(channels))
        .saturating_mul(u64::from(encoding.bytes()))
        .saturating_add(HEADER_BYTES)
}

/// Refuse an output that would pass the RIFF limit.
pub fn check_riff_size(frames: u64, channels: u16, encoding: Encoding) -> Result<(), WavError> {
    let bytes = output_bytes(frames, channels, encoding);
    // hound also stops when the data chunk length would overflow 32 bits.
    let data = bytes - HEADER_BYTES;
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
}
