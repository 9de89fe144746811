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

/// Modified Bessel function I0 by its power series (common practice, no source).
fn i0(x: f64) -> f64 {
    let (mut sum, mut term, mut k) = (1.0, 1.0, 1.0);
    while term > 1e-20 * sum {
        term *= (x / (2.0 * k)).powi(2);
        sum += term;
        k += 1.0;
    }
    sum
}

/// Peak of the Kaiser-windowed (beta 20: side lobes far under -140 dB, Harris 1978 trend,
/// from memory) spectrum of `x`, scaled so that a sine of amplitude 1 on a bin reads 0 dB.
fn windowed_peak_db(x: &[f64]) -> f64 {
    use rustfft::num_complex::Complex;
    let n = x.len();
    let beta = 20.0;
    let w: Vec<f64> = (0..n)
        .map(|k| {
            let r = 2.0 * k as f64 / (n - 1) as f64 - 1.0;
            i0(beta * (1.0 - r * r).max(0.0).sqrt()) / i0(beta)
        })
        .collect();
    let gain: f64 = w.iter().sum::<f64>() / 2.0;
    let nfft = (4 * n).next_power_of_two();
    let mut buf = vec![Complex::new(0.0, 0.0); nfft];
    for (b, (v, w)) in buf.iter_mut().zip(x.iter().zip(&w)) {
        *b = Complex::new(v * w, 0.0);
    }
    rustfft::FftPlanner::new()
        .plan_fft_forward(nfft)
        .process(&mut buf);
    let peak = buf[..nfft / 2].iter().map(|c| c.norm()).fold(0.0, f64::max);
    20.0 * (peak / gain).log10()
}

#[test]
fn a_glide_adds_no_spur() {
    let a = 120.0;
    let g = FilterSpec::new(48_000, 48_000)
        .stopband_db(a)
        .design_glide()
        .unwrap();
    // Glides across the ratio 1 (where the kernel starts to stretch), and a small one as a
    // drift follower makes them.
    for (r0, r1, frames) in [(0.9, 1.2, 30_000_u64), (1.0, 1.0 + 300e-6, 5_000)] {
        let mut conv = GlideConverter::<f64>::with_kernel(&g, 1, r0, Kernel::detect()).unwrap();
        let freq = 0.021; // about 1 kHz at 48 kHz, cycles per input sample
        let w = 2.0 * std::f64::consts::PI * freq;
        let x: Vec<f64> = (0..80_000).map(|k| (w * k as f64).sin()).collect();
        // Feed 10 000 frames, then start the glide.
        let mut y = Vec::new();
        let mut out = vec![0.0; 40_000];
        let p = conv.process_interleaved(&x[..10_000], &mut out).unwrap();
        assert_eq!(p.frames_read, 10_000);
        y.extend_from_slice(&out[..p.frames_written]);
        let start = y.len();
        conv.glide_to(r1, frames).unwrap();
        let mut pos = 10_000;
        while pos < x.len() {
            let p = conv
                .process_interleaved(&x[pos..(pos + 777).min(x.len())], &mut out)
                .unwrap();
            y.extend_from_slice(&out[..p.frames_written]);
            pos += p.frames_read;
        }
        // The output times, computed independently: the increment 1 / ratio moves linearly
        // from 1 / r0 to 1 / r1 over `frames` outputs (the glide's definition, see
        // `GlideConverter::glide_to`).
        let (s0, s1) = (1.0 / r0, 1.0 / r1);
        let mut t = 0.0_f64;
        let mut resid = Vec::with_capacity(y.len());
        for (m, v) in y.iter().enumerate() {
            resid.push(v - (w * t).sin());
            // Increment from output m to m + 1: j steps into the glide.
            let s = if m < start {
                s0
            } else if (m - start) as u64 >= frames {
                s1
            } else {
                s0 + (s1 - s0) * ((m - start) as f64 / frames as f64)
            };
            t += s;
        }
        // Analyse from well after the start transient through the glide and beyond.
        let seg = &resid[2_000..y.len() - 2_000];
        let spur = windowed_peak_db(seg);
        let tone: Vec<f64> = y[2_000..y.len() - 2_000].to_vec();
        let level = windowed_peak_db(&tone);
        eprintln!(
            "glide {r0} -> {r1} over {frames}: tone {level:.1} dB, residual peak {spur:.1} dB"
        );
        assert!(spur <= -(a - 6.0), "{spur}");
    }
}

#[test]
fn a_glide_across_the_band_edge_adds_no_spur_and_no_alias() {
    // 48 kHz -> 44.1 kHz: the design has a table of its own for the ratios within 0.1 % of
    // the nominal one (read without stretching); a glide from inside that band to outside
    // it (where the kernel is stretched) and back must neither leave a spur on a passband
    // tone nor let a tone above the lowest output Nyquist fold back.
    let a = 120.0;
    let g = FilterSpec::new(48_000, 44_100)
        .stopband_db(a)
        .design_glide()
        .unwrap();
    let band = g.report().band.clone().expect("a band table below ratio 1");
    let nominal = 44_100.0 / 48_000.0;
    let inside = nominal * (1.0 - 250e-6);
    let outside = nominal * (1.0 - 2_000e-6);
    assert!(band.contains(inside) && !band.contains(outside), "{band:?}");
    eprintln!("{band:?}");
    let mut conv = GlideConverter::<f64>::with_kernel(&g, 1, inside, Kernel::detect()).unwrap();
    let freq = 0.021; // passband tone, cycles per input sample
    let high = 0.47; // above the output Nyquist of every ratio here (at most 0.4594)
    let w = 2.0 * std::f64::consts::PI * freq;
    let wh = 2.0 * std::f64::consts::PI * high;
    let x: Vec<f64> = (0..100_000)
        .map(|k| 0.5 * (w * k as f64).sin() + 0.4 * (wh * k as f64).sin())
        .collect();
    let mut y = Vec::new();
    let mut out = vec![0.0; 40_000];
    let mut starts = Vec::new();
    let glides = [(outside, 20_000_u64), (inside, 20_000)];
    let mut pos = 0;
    for (k, chunk) in [10_000, 45_000, 70_000].into_iter().enumerate() {
        while pos < chunk {
            let p = conv
                .process_interleaved(&x[pos..(pos + 613).min(chunk)], &mut out)
                .unwrap();
            y.extend_from_slice(&out[..p.frames_written]);
            pos += p.frames_read;
        }
        if let Some(&(r, frames)) = glides.get(k) {
            starts.push((y.len(), r, frames));
            conv.glide_to(r, frames).unwrap();
        }
    }
    while pos < x.len() {
        let p = conv
            .process_interleaved(&x[pos..(pos + 613).min(x.len())], &mut out)
            .unwrap();
        y.extend_from_slice(&out[..p.frames_written]);
        pos += p.frames_read;
    }
    // The output times, computed independently from the glides' definition (the increment
    // 1 / ratio moves linearly over the glide's outputs, `GlideConverter::glide_to`); both
    // glides end before the next starts (checked below).
    let mut t = 0.0_f64;
    let mut resid = Vec::with_capacity(y.len());
    for (m, v) in y.iter().enumerate() {
        // The ideal output: the passband tone at the output time (the other tone is above
        // the output Nyquist and must be gone; common practice, no source).
        resid.push(v - 0.5 * (w * t).sin());
        // Increment from output m to m + 1: j steps into the latest glide started.
        let mut inc = 1.0 / inside;
        let mut from = 1.0 / inside;
        for &(s, r, frames) in &starts {
            if m >= s {
                let j = (m - s) as u64;
                inc = if j >= frames {
                    1.0 / r
                } else {
                    from + (1.0 / r - from) * (j as f64 / frames as f64)
                };
            }
            from = 1.0 / r;
        }
        t += inc;
    }
    // Not vacuous: the glides ran, one after the other, and the ratio ended inside again.
    assert!(
        starts[1].0 as u64 > starts[0].0 as u64 + starts[0].2,
        "{starts:?}"
    );
    assert!((conv.ratio() - inside).abs() < 1e-12);
    let seg = &resid[2_000..y.len() - 2_000];
    let spur = windowed_peak_db(seg);
    eprintln!("glide across the band edge: residual peak {spur:.1} dB");
    assert!(spur <= -(a - 6.0), "{spur}");
}
