//! Quality rules, in one place: the default stopband attenuation follows the output format
//! (enough to put images and aliases under the format's noise floor), and the arithmetic
//! precision follows the stopband actually requested (the cheapest whose own rounding noise
//! stays well under what the request lets through). Every command that converts or measures
//! a conversion (convert, demo, verify, and the reports) takes them from here.
//!
//! | output | noise floor 6.02·N + 1.76 dB | + margin 10 dB | default stopband (next 10 dB) |
//! | --- | --- | --- | --- |
//! | 8-bit integer | 49.9 dB | 59.9 dB | 60 dB |
//! | 16-bit integer | 98.1 dB | 108.1 dB | 110 dB |
//! | 24-bit integer | 146.3 dB | 156.3 dB | 160 dB |
//! | 32-bit float (24-bit significand) | 146.3 dB | 156.3 dB | 160 dB |
//! | 32-bit integer | 194.4 dB | 204.4 dB | 200 dB (the core's maximum) |
//!
//! Arithmetic: f32 for requests up to [`F32_MAX_STOPBAND_DB`] (110 dB), f64 above, whatever
//! the output format. `cargo run --release -p resample-core --example arithmetic_noise`
//! measured f32 arithmetic at -144 dBFS rms and -125 dBFS peak against f64 on a loud, busy
//! signal: more than 10 dB under a 110 dB request, but above a 140 dB one. So the defaults
//! run f32 for 8- and 16-bit output and f64 for 24-bit, 32-bit and float output, and an
//! explicit `--stopband-db` moves the choice with it (`--bits 16 --stopband-db 200` runs
//! f64; `--float --stopband-db 100` runs f32).

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

/// Largest stopband request served by f32 arithmetic, dB (see the module docs).
pub const F32_MAX_STOPBAND_DB: f64 = 110.0;

/// The arithmetic for a conversion asked to reject images and aliases by `stopband_db`: f32
/// up to [`F32_MAX_STOPBAND_DB`], f64 above, whatever the output format.
pub fn precision_for(stopband_db: f64) -> Precision {
    if stopband_db <= F32_MAX_STOPBAND_DB {
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
        // Precision follows the request, not the format: format x request -> arithmetic.
        let table = [
            (Encoding::Int(8), None, Precision::F32),
            (Encoding::Int(16), None, Precision::F32),
            (Encoding::Int(24), None, Precision::F64),
            (Encoding::Float32, None, Precision::F64),
            (Encoding::Int(32), None, Precision::F64),
            (Encoding::Int(16), Some(200.0), Precision::F64),
            (Encoding::Int(16), Some(120.0), Precision::F64),
            (Encoding::Int(24), Some(110.0), Precision::F32),
            (Encoding::Float32, Some(100.0), Precision::F32),
            (Encoding::Float32, Some(140.0), Precision::F64),
            (Encoding::Int(32), Some(60.0), Precision::F32),
        ];
        for (enc, request, want) in table {
            let db = request.unwrap_or_else(|| default_stopband_db(enc));
            assert_eq!(precision_for(db), want, "{enc} {request:?}");
        }
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
