//! How much noise `f32` arithmetic adds to a conversion, against `f64` arithmetic and against
//! the rounding of storing the `f64` result as 32-bit float (a float WAV file's own floor).
//!
//! The data behind the choice of precision for float output (see `benches/README.md`).
//! The test signal is made here (demo material): 10 s at 44.1 kHz of two tones (amplitudes
//! 0.45 and 0.4) plus white noise (0.1 peak), at most 0.95 (-0.4 dBFS) together, converted to 48 kHz at 100, 140 and
//! 160 dB; both precisions start from the same `f32` samples, so only the arithmetic
//! differs.
//!
//! Run: `cargo run --release -p resample-core --example arithmetic_noise`

use resample_core::{offline, FilterSpec};

fn main() -> Result<(), resample_core::Error> {
    let rate = 44_100u32;
    let n = rate as usize * 10;
    // A fixed-seed linear congruential generator, the same signal every run (constants from
    // memory: Knuth's MMIX generator).
    let mut state = 12_345u64;
    let x32: Vec<f32> = (0..n)
        .map(|i| {
            state = state
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1_442_695_040_888_963_407);
            let white = (state >> 11) as f64 / (1u64 << 53) as f64 * 2.0 - 1.0;
            let t = i as f64 / f64::from(rate);
            let tau = 2.0 * core::f64::consts::PI;
            (0.45 * (tau * 997.0 * t).sin() + 0.4 * (tau * 15_013.0 * t).sin() + 0.1 * white) as f32
        })
        .collect();
    let x64: Vec<f64> = x32.iter().map(|&v| f64::from(v)).collect();
    let dbfs = |v: f64| 20.0 * v.log10();
    println!("44.1 kHz -> 48 kHz, 10 s, demo signal (two tones + noise, -0.4 dBFS peak)");
    for db in [100.0, 140.0, 160.0] {
        let design = FilterSpec::new(rate, 48_000).stopband_db(db).design()?;
        let y64 = offline::convert_interleaved(&design, 1, &x64)?;
        let y32 = offline::convert_interleaved(&design, 1, &x32)?;
        let (mut err2, mut err_peak, mut store2) = (0.0_f64, 0.0_f64, 0.0_f64);
        for (&a, &b) in y64.iter().zip(&y32) {
            let e = f64::from(b) - a;
            err2 += e * e;
            err_peak = err_peak.max(e.abs());
            let s = f64::from(a as f32) - a;
            store2 += s * s;
        }
        let count = y64.len().max(1) as f64;
        println!(
            "{db:5.0} dB ({:3} taps/phase): f32 arithmetic adds {:6.1} dBFS rms, {:6.1} dBFS peak; \
             storing the f64 result as float: {:6.1} dBFS rms",
            design.report().taps_per_phase,
            dbfs((err2 / count).sqrt()),
            dbfs(err_peak),
            dbfs((store2 / count).sqrt()),
        );
    }
    Ok(())
}
