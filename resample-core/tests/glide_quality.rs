//! The any-ratio engine against outside references: sines resampled at irrational ratios
//! against the sine evaluated at the output times, and a sine through a ratio glide.

use resample_core::{FilterSpec, GlideConverter, GlideDesign, Kernel};

/// Run `x` (mono) through `conv` in chunks of 1000, then flush.
fn run<T: resample_core::Sample>(conv: &mut GlideConverter<T>, x: &[T]) -> Vec<T> {
    let mut y = Vec::new();
    let mut out = vec![T::zero(); conv.max_output_frames(1000) + 16];
    for chunk in x.chunks(1000) {
        let mut fed = 0;
        while fed < chunk.len() {
            let p = conv.process_interleaved(&chunk[fed..], &mut out).unwrap();
            y.extend_from_slice(&out[..p.frames_written]);
            fed += p.frames_read;
        }
    }
    loop {
        let n = conv.flush_interleaved(&mut out).unwrap();
        if n == 0 {
            break;
        }
        y.extend_from_slice(&out[..n]);
    }
    y
}

/// Largest error (dB re amplitude 1) of a sine of `freq` cycles per input sample resampled
/// at `ratio`, against the sine at the output times, away from both ends.
fn sine_error_db<T: resample_core::Sample>(g: &GlideDesign, ratio: f64, freq: f64) -> f64 {
    let mut conv = GlideConverter::<T>::with_kernel(g, 1, ratio, Kernel::detect()).unwrap();
    let n = 40_000;
    let phase0 = 0.3;
    let w = 2.0 * std::f64::consts::PI * freq;
    let x: Vec<T> = (0..n)
        .map(|k| T::from_f64_lossy((w * k as f64 + phase0).sin()))
        .collect();
    let y = run(&mut conv, &x);
    // Output m sits at input time m / ratio (the clock accumulates the same increment).
    let expect_len = (n as f64 * ratio).ceil() as usize;
    assert!(
        y.len().abs_diff(expect_len) <= 1,
        "{} vs {}",
        y.len(),
        expect_len
    );
    let guard = (2.0 * conv.latency_input_frames() / ratio.min(1.0) * ratio).ceil() as usize + 64;
    let mut worst = 0.0_f64;
    for (m, v) in y.iter().enumerate().skip(guard).take(y.len() - 2 * guard) {
        // The analytic ideal: a band-limited sine resampled is the same sine evaluated at
        // the output times (common practice, no source; Crochiere & Rabiner, Multirate
        // Digital Signal Processing, 1983, from memory).
        let t = m as f64 / ratio;
        let ideal = (w * t + phase0).sin();
        worst = worst.max((v.to_f64_exact() - ideal).abs());
    }
    20.0 * worst.log10()
}

#[test]
fn sines_at_irrational_ratios_match_the_ideal() {
    for a in [60.0, 100.0, 140.0] {
        let g = FilterSpec::new(44_100, 48_000)
            .stopband_db(a)
            .design_glide()
            .unwrap();
        eprintln!("A = {a}: {:?}", g.report());
        for ratio in [
            48_000.0 * (1.0 + 100e-6) / 44_100.0,
            44_100.0 * (1.0 - 250e-6) / 48_000.0,
            std::f64::consts::SQRT_2,
            1.0 / std::f64::consts::E,
        ] {
            let nyq = 0.5 * ratio.min(1.0); // lower Nyquist, cycles per input sample
            for frac in [0.05, 0.5, 0.88] {
                let f = frac * nyq;
                let e = sine_error_db::<f64>(&g, ratio, f);
                eprintln!("A {a} ratio {ratio:.6} f {f:.4}: {e:.1} dB");
                assert!(e <= -(a - 6.0), "A {a} ratio {ratio} f {f}: {e:.1} dB");
            }
        }
    }
}

#[test]
fn f32_sines_match_the_ideal_to_f32_precision() {
    let g = FilterSpec::new(48_000, 44_100)
        .stopband_db(120.0)
        .design_glide()
        .unwrap();
    for ratio in [44_100.0 * (1.0 - 250e-6) / 48_000.0, 1.0 + 300e-6] {
        let e = sine_error_db::<f32>(&g, ratio, 0.02);
        eprintln!("f32 ratio {ratio}: {e:.1} dB");
        // f32 carries 24 bits: about -140 dB per sample; the sums of ~200 products lose a
        // few bits more (common practice, no source).
        assert!(e <= -110.0, "{e}");
    }
}
