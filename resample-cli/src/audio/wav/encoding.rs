//! How samples are stored in a WAV file: integer PCM of 8, 16, 24 or 32 bits, or 32-bit
//! IEEE float.

use std::fmt;

/// A sample encoding rerate reads and writes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Encoding {
    /// Integer PCM with this many bits (8, 16, 24 or 32; 8-bit is stored unsigned).
    Int(u16),
    /// 32-bit IEEE float, full scale ±1.0.
    Float32,
}

impl Encoding {
    /// The encoding of a `hound` spec, if rerate writes it.
    pub fn from_spec(spec: &hound::WavSpec) -> Option<Self> {
        match (spec.sample_format, spec.bits_per_sample) {
            (hound::SampleFormat::Int, b @ (8 | 16 | 24 | 32)) => Some(Self::Int(b)),
            (hound::SampleFormat::Float, 32) => Some(Self::Float32),
            _ => None,
        }
    }

    /// Integer encoding of `bits` (8, 16, 24 or 32).
    pub fn int(bits: u16) -> Option<Self> {
        matches!(bits, 8 | 16 | 24 | 32).then_some(Self::Int(bits))
    }

    /// Bits stored per sample.
    pub fn bits(self) -> u16 {
        match self {
            Self::Int(b) => b,
            Self::Float32 => 32,
        }
    }

    /// Bytes stored per sample.
    pub fn bytes(self) -> u16 {
        self.bits() / 8
    }

    /// Whether this is a floating-point encoding.
    pub fn is_float(self) -> bool {
        matches!(self, Self::Float32)
    }

    /// Bits of resolution that set the noise floor: the word length for integers, the
    /// 24-bit significand (23 stored + the implicit one) for 32-bit float.
    pub fn resolution_bits(self) -> u16 {
        match self {
            Self::Int(b) => b,
            Self::Float32 => 24,
        }
    }

    /// The `hound` spec for this encoding.
    pub fn spec(self, sample_rate: u32, channels: u16) -> hound::WavSpec {
        hound::WavSpec {
            channels,
            sample_rate,
            bits_per_sample: self.bits(),
            sample_format: if self.is_float() {
                hound::SampleFormat::Float
            } else {
                hound::SampleFormat::Int
            },
        }
    }

    /// Integer codes per unit of full scale: `2^(bits-1)` (1 for float).
    pub fn scale(self) -> f64 {
        match self {
            Self::Int(b) => f64::from(1u32 << (b.clamp(1, 32) - 1)),
            Self::Float32 => 1.0,
        }
    }
}

impl fmt::Display for Encoding {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Int(b) => write!(f, "{b}-bit integer"),
            Self::Float32 => write!(f, "32-bit float"),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn scales_are_powers_of_two() {
        assert_eq!(Encoding::Int(8).scale(), 128.0);
        assert_eq!(Encoding::Int(16).scale(), 32768.0);
        assert_eq!(Encoding::Int(24).scale(), 8_388_608.0);
        assert_eq!(Encoding::Int(32).scale(), 2_147_483_648.0);
        assert_eq!(Encoding::Float32.scale(), 1.0);
    }

    #[test]
    fn only_supported_specs_map() {
        let s = |fmt, bits| hound::WavSpec {
            channels: 1,
            sample_rate: 8000,
            bits_per_sample: bits,
            sample_format: fmt,
        };
        assert_eq!(
            Encoding::from_spec(&s(hound::SampleFormat::Int, 24)),
            Some(Encoding::Int(24))
        );
        assert_eq!(Encoding::from_spec(&s(hound::SampleFormat::Int, 20)), None);
        assert_eq!(
            Encoding::from_spec(&s(hound::SampleFormat::Float, 64)),
            None
        );
    }
}
