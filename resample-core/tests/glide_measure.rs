//! The any-ratio engine measured from outside: the sweep-through analyser's image and alias
//! rejection at drifting-clock ratios, and agreement with the fixed-ratio engine at a
//! rational ratio with a small L; with linear and with minimum phase.

use resample_core::measure::{measure_converter, Settings, Sweep};
use resample_core::{offline, FilterSpec, GlideConverter, GlideDesign, Kernel, Phase};

/// Convert `x` whole (mono, f64) at `ratio`: process in one call, then flush.
fn convert(g: &GlideDesign, ratio: f64, x: &[f64]) -> Vec<f64> {
    let mut conv = GlideConverter::<f64>::with_kernel(g, 1, ratio, Kernel::detect()).unwrap();
    let mut out = vec![0.0; conv.max_output_frames(x.len())];
    let p = conv.process_interleaved(x, &mut out).unwrap();
    assert_eq!(p.frames_read, x.len());
    let mut y = out[..p.frames_written].to_vec();
    let mut tail = vec![0.0; 4096];
    loop {
        let n = conv.flush_interleaved(&mut tail).unwrap();
        if n == 0 {
            break;
        }
        y.extend_from_slice(&tail[..n]);
    }
    y
}

/// Rejection measured by the sweep-through test (DESIGN.md, "Quality: how it is measured";
/// exponential sweep after Farina, AES 108th Convention, 2000) at `a` dB, input `rate_in`,
/// nominal output `rate_out` whose clock runs `ppm` fast.
fn rejection(a: f64, rate_in: u32, rate_out: u32, ppm: f64, seconds: f64) -> f64 {
    rejection_of(a, rate_in, rate_out, ppm, seconds, Phase::Linear)
}

/// [`rejection`] for a table of the given phase response.
fn rejection_of(a: f64, rate_in: u32, rate_out: u32, ppm: f64, seconds: f64, phase: Phase) -> f64 {
    let g = FilterSpec::new(rate_in, rate_out)
        .stopband_db(a)
        .phase(phase)
        .design_glide()
        .unwrap();
    let ratio = f64::from(rate_out) * (1.0 + ppm * 1e-6) / f64::from(rate_in);
    // The analyser takes a whole output rate; the true one differs by under 0.5 Hz, which
    // moves the wanted tone by under 11 ppm of its frequency (inside the guard band) and
    // shows as a small latency (the time axis is off by that much).
    let true_out = f64::from(rate_in) * ratio;
    let sweep = Sweep::new(rate_in).seconds(seconds);
    let m = measure_converter(&sweep, true_out.round() as u32, &Settings::default(), |x| {
        convert(&g, ratio, x)
    })
    .unwrap();
    eprintln!(
        "A {a} {phase:?}: {rate_in} -> {true_out:.3} Hz: rejection {:.1} dB, latency {:.3} \
         samples (P {}, {}, error {:.1} dB)",
        m.rejection_db,
        m.latency_samples,
        g.report().phases,
        g.report().interpolation.name(),
        g.report().interpolation_error_db
    );
    m.rejection_db
}

#[test]
fn measured_rejection_meets_the_request_at_drifting_ratios() {
    // 44.1k -> 48k x (1 + 100 ppm) and 48k -> 44.1k x (1 - 250 ppm), 60 to 140 dB.
    for a in [60.0, 80.0, 100.0, 120.0, 140.0] {
        let r = rejection(a, 44_100, 48_000, 100.0, 2.0);
        assert!(r >= a, "44.1k up, A {a}: {r:.1} dB");
        let r = rejection(a, 48_000, 44_100, -250.0, 2.0);
        assert!(r >= a, "48k down, A {a}: {r:.1} dB");
    }
}

#[test]
#[ignore = "every 10 dB from 60 to 140 dB with longer sweeps; run with --ignored"]
fn measured_rejection_every_10_db() {
    for k in 0..=8 {
        let a = 60.0 + 10.0 * k as f64;
        let r = rejection(a, 44_100, 48_000, 100.0, 4.0);
        assert!(r >= a, "44.1k up, A {a}: {r:.1} dB");
        let r = rejection(a, 48_000, 44_100, -250.0, 4.0);
        assert!(r >= a, "48k down, A {a}: {r:.1} dB");
    }
}

#[test]
fn agrees_with_the_fixed_engine_at_a_small_rational_ratio() {
    // 32 kHz -> 48 kHz (L/M = 3/2) and back. Both engines approximate the same ideal
    // band-limited conversion (the polyphase result of Crochiere & Rabiner, Proc. IEEE
    // 69(3), 1981); for passband tones each differs from it by at most its passband
    // deviation (under 10^(-A/20) for a Kaiser design, common practice, no source), and the
    // any-ratio engine by its measured interpolation error besides.
    let a = 120.0;
    for (fin, fout) in [(32_000_u32, 48_000_u32), (48_000, 32_000)] {
        let fixed = FilterSpec::new(fin, fout).stopband_db(a).design().unwrap();
        let g = FilterSpec::new(fin, fout)
            .stopband_db(a)
            .design_glide()
            .unwrap();
        let ratio = f64::from(fout) / f64::from(fin);
        let n = 30_000;
        let nyq = 0.5 * f64::from(fin.min(fout)) / f64::from(fin); // cycles per input sample
        let x: Vec<f64> = (0..n)
            .map(|k| {
                [0.07, 0.41, 0.83]
                    .iter()
                    .map(|&f| (2.0 * std::f64::consts::PI * f * nyq * k as f64 + f).sin() / 3.0)
                    .sum()
            })
            .collect();
        let yf = offline::convert(&fixed, &x);
        let yg = convert(&g, ratio, &x);
        assert!(yf.len().abs_diff(yg.len()) <= 1);
        let guard = 400;
        let diff = yf[guard..yf.len() - guard]
            .iter()
            .zip(&yg[guard..])
            .map(|(p, q)| (p - q).abs())
            .fold(0.0, f64::max);
        let bound =
            10f64.powf(g.report().interpolation_error_db / 20.0) + 2.0 * 10f64.powf(-a / 20.0);
        eprintln!(
            "{fin} -> {fout}: largest difference {:.1} dB, bound {:.1} dB",
            20.0 * diff.log10(),
            20.0 * bound.log10()
        );
        assert!(diff <= bound, "{diff} > {bound}");
    }
}

#[test]
fn minimum_phase_rejection_meets_the_request_at_drifting_ratios() {
    // Issue 14: the any-ratio engine runs minimum-phase tables; measured as the linear ones.
    for a in [60.0, 100.0, 140.0] {
        let r = rejection_of(a, 44_100, 48_000, 100.0, 2.0, Phase::Minimum);
        assert!(r >= a, "44.1k up, A {a}: {r:.1} dB");
        let r = rejection_of(a, 48_000, 44_100, -250.0, 2.0, Phase::Minimum);
        assert!(r >= a, "48k down, A {a}: {r:.1} dB");
    }
}

#[test]
fn minimum_phase_latency_is_at_most_a_quarter_of_linear_phase() {
    // Issue 14's target: the group delay at 1 kHz (the delay the table states and the
    // converter compensates) at most 25 % of the linear-phase table's for the same request.
    // The latency a live stream sees follows it: the input needed before the first output
    // (the frames-needed query, which processing matches exactly: anyratio.rs unit tests).
    for a in [100.0, 140.0] {
        for (fin, fout, ppm) in [(44_100_u32, 48_000_u32, 100.0), (48_000, 44_100, -250.0)] {
            let spec = FilterSpec::new(fin, fout).stopband_db(a);
            let lin = spec.design_glide().unwrap();
            let min = spec.phase(Phase::Minimum).design_glide().unwrap();
            let ratio = f64::from(fout) * (1.0 + ppm * 1e-6) / f64::from(fin);
            let cl = GlideConverter::<f32>::with_kernel(&lin, 2, ratio, Kernel::Scalar).unwrap();
            let cm = GlideConverter::<f32>::with_kernel(&min, 2, ratio, Kernel::Scalar).unwrap();
            let stated = min.report().delay_input_frames / lin.report().delay_input_frames;
            let (nl, nm) = (cl.input_frames_for_output(1), cm.input_frames_for_output(1));
            eprintln!(
                "A {a}: {fin} -> {fout} x (1 {ppm:+} ppm): delay {:.3} vs {:.3} input frames \
                 ({:.1} %), look-ahead {:.2} vs {:.2}, first output after {nm} vs {nl} frames, \
                 passband group-delay variation {:.2} frames",
                min.report().delay_input_frames,
                lin.report().delay_input_frames,
                100.0 * stated,
                cm.latency_input_frames(),
                cl.latency_input_frames(),
                min.report().group_delay_variation_input_frames
            );
            assert!(stated <= 0.25, "{stated}");
            assert!(cm.latency_input_frames() <= 0.25 * cl.latency_input_frames());
            assert!(nm as f64 <= 0.25 * nl as f64, "{nm} vs {nl}");
        }
    }
}

#[test]
fn minimum_phase_agrees_with_the_fixed_engine_on_the_same_prototype() {
    // A minimum-phase filter follows from the whole log-magnitude of its prototype on the
    // prototype's grid (the phase is its Hilbert transform; Oppenheim and Schafer,
    // Discrete-Time Signal Processing, the minimum-phase and complex-cepstrum chapters,
    // from memory), so two designs of one request on different grids (L = 3 and P = 64
    // phases) are not the same filter. The fixed engine runs the table's own prototype when
    // its L is the table's P and the lower Nyquist is the input's: the pair 63 k -> 64 k at
    // 120 dB (P = 64), whose delay is taken at the same 1 kHz. There every output's position
    // falls on a table phase and the engines compute the same sums in another order: they
    // must agree to the stated interpolation bound (the same terms as for linear phase) and,
    // in fact, to rounding.
    let a = 120.0;
    let g = FilterSpec::new(63_000, 64_000)
        .stopband_db(a)
        .phase(Phase::Minimum)
        .design_glide()
        .unwrap();
    assert_eq!(g.report().phases, 64, "the pair is chosen for P = 64");
    let fixed = FilterSpec::new(63_000, 64_000)
        .stopband_db(a)
        .phase(Phase::Minimum)
        .design()
        .unwrap();
    assert_eq!(fixed.pair().up(), 64);
    assert_eq!(
        fixed.delay() as f64 / 64.0,
        g.report().delay_input_frames,
        "the same delay"
    );
    let n = 30_000;
    let x: Vec<f64> = (0..n)
        .map(|k| {
            // Three passband tones (fractions of the input Nyquist), amplitude 1/6 each.
            [0.03, 0.41, 0.83]
                .iter()
                .map(|&f| (std::f64::consts::PI * f * k as f64 + f).sin() / 6.0)
                .sum::<f64>()
        })
        .collect();
    let yf = offline::convert(&fixed, &x);
    let yg = convert(&g, 64.0 / 63.0, &x);
    assert!(
        yf.len().abs_diff(yg.len()) <= 1,
        "{} {}",
        yf.len(),
        yg.len()
    );
    let guard = 400;
    let diff = yf[guard..yf.len() - guard]
        .iter()
        .zip(&yg[guard..])
        .map(|(p, q)| (p - q).abs())
        .fold(0.0, f64::max);
    let bound = 10f64.powf(g.report().interpolation_error_db / 20.0) + 2.0 * 10f64.powf(-a / 20.0);
    eprintln!(
        "63k -> 64k minimum phase: largest difference {:.1} dB, bound {:.1} dB",
        20.0 * diff.log10(),
        20.0 * bound.log10()
    );
    assert!(diff <= bound, "{diff} > {bound}");
    // Measured 6.9e-12 (about 180 products in another order, and the group table's own
    // layout); an output off by a phase or a tap of delay would differ by far more.
    assert!(diff < 1e-10, "same sums in another order: {diff}");
}
