//! Quality defaults that follow the output format: the stopband attenuation that puts images
//! and aliases under the format's noise floor, and the arithmetic precision whose own noise
//! stays under it. Every command that converts (convert, demo, verify) takes them from here.
//!
//! | output | noise floor 6.02·N + 1.76 dB | + margin 10 dB | default stopband (next 10 dB) | arithmetic |
//! | --- | --- | --- | --- | --- |
//! | 8-bit integer | 49.9 dB | 59.9 dB | 60 dB | f32 |
//! | 16-bit integer | 98.1 dB | 108.1 dB | 110 dB | f32 |
//! | 24-bit integer | 146.3 dB | 156.3 dB | 160 dB | f64 |
//! | 32-bit float (24-bit significand) | 146.3 dB | 156.3 dB | 160 dB | f64 |
//! | 32-bit integer | 194.4 dB | 204.4 dB | 200 dB (the core's maximum) | f64 |

use std::fmt;

use crate::audio::wav::Encoding;

/// Margin above the format's full-scale sine SNR, dB.
pub const STOPBAND_MARGIN_DB: f64 = 10.0;

/// Full-scale sine SNR of an ideal `bits`-bit quantizer: 6.0206·N + 1.7609 dB (common
/// practice; e.g. 16 bits: 98.09 dB).
pub fn format_snr_db(bits: u16) -> f64 {
    20.0 * 2f64.log10() * f64::from(bits) + 10.0 * 1.5f64.log10()
}

/// The default stopband attenuation for output in `encoding`: the format's SNR plus
/// [`STOPBAND_MARGIN_DB`], rounded up to a multiple of 10 dB, within the core's range.
pub fn default_stopband_db(encoding: Encoding) -> f64 {
    let want = format_snr_db(encoding.resolution_bits()) + STOPBAND_MARGIN_DB;
    ((want / 10.0).ceil() * 10.0).clamp(
        resample_core::limits::MIN_STOPBAND_DB,
        resample_core::limits::MAX_STOPBAND_DB,
    )
}

/// Arithmetic precision of the converter.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Precision {
    /// 32-bit float: rounding noise near -140 dBFS, under the 16-bit floor.
    F32,
    /// 64-bit float: rounding noise near -300 dBFS, under every format's floor.
    F64,
}

impl fmt::Display for Precision {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            Self::F32 => "f32",
            Self::F64 => "f64",
        })
    }
}

/// The precision whose arithmetic noise stays under the floor of `encoding`: f32 for
/// integer output of 16 bits or fewer, f64 otherwise.
pub fn precision_for(encoding: Encoding) -> Precision {
    if encoding.resolution_bits() <= 16 {
        Precision::F32
    } else {
        Precision::F64
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use resample_core::{offline, FilterSpec};

    #[test]
    fn the_documented_table() {
        // 6.0206 N + 1.7609 dB: 16-bit 98.09 dB, 24-bit 146.26 dB (common practice, no source).
        assert!((format_snr_db(16) - 98.09).abs() < 0.01);
        assert!((format_snr_db(24) - 146.26).abs() < 0.01);
        assert_eq!(default_stopband_db(Encoding::Int(8)), 60.0);
        assert_eq!(default_stopband_db(Encoding::Int(16)), 110.0);
        assert_eq!(default_stopband_db(Encoding::Int(24)), 160.0);
        assert_eq!(default_stopband_db(Encoding::Float32), 160.0);
        assert_eq!(default_stopband_db(Encoding::Int(32)), 200.0);
        assert_eq!(precision_for(Encoding::Int(16)), Precision::F32);
        assert_eq!(precision_for(Encoding::Int(24)), Precision::F64);
        assert_eq!(precision_for(Encoding::Float32), Precision::F64);
    }

    #[test]
    fn f32_arithmetic_noise_is_under_the_16_bit_floor() {
        // Rounding a full-scale signal to 16 bits leaves noise of LSB²/12 (common practice):
        // -101.2 dBFS for full scale ±1. The f32 engine must differ from the f64 engine by
        // far less (we ask for 20 dB less) on a loud, busy signal.
        let design = FilterSpec::new(44_100, 48_000)
            .stopband_db(default_stopband_db(Encoding::Int(16)))
            .design()
            .unwrap();
        let mut state = 12345u64;
        let x64: Vec<f64> = (0..20_000)
            .map(|i| {
                state = state.wrapping_mul(6364136223846793005).wrapping_add(1);
                let noise = (state >> 11) as f64 / (1u64 << 53) as f64 - 0.5;
                0.6 * (i as f64 * 0.07).sin() + 0.6 * noise
            })
            .collect();
        let x32: Vec<f32> = x64.iter().map(|&v| v as f32).collect();
        let y64 = offline::convert(&design, &x64);
        let y32 = offline::convert(&design, &x32);
        let err: f64 = y64
            .iter()
            .zip(&y32)
            .map(|(a, b)| (a - f64::from(*b)).powi(2))
            .sum::<f64>()
            / y64.len() as f64;
        let err_db = 10.0 * err.log10();
        let floor_db = 10.0 * ((1.0 / 32768.0_f64).powi(2) / 12.0).log10();
        assert!(
            err_db < floor_db - 20.0,
            "f32 error {err_db:.1} dBFS, floor {floor_db:.1}"
        );
    }
}
