//! Passband tones come out at the analytic amplitude and phase at the output rate.

mod common;

use resample_core::offline;

/// A sine in the passband, converted in f64, equals the same sine sampled at the output
/// rate (zero delay) within -(A - 10) dB of the tone, away from the signal's ends.
/// Common practice, no source: a linear-phase low-pass with delay compensation passes a
/// passband tone with an error bounded by its passband ripple plus its attenuated images.
#[test]
fn passband_sines_are_exact_to_the_attenuation() {
    let pairs = [
        (44_100, 48_000),
        (48_000, 44_100),
        (44_100, 16_000),
        (8_000, 44_100),
        (96_000, 44_100),
        (22_050, 44_100),
    ];
    let mut worst_margin = f64::INFINITY;
    for (a, b) in pairs {
        for db in [60.0, 100.0, 140.0] {
            let d = common::design(a, b, db);
            let edge = d.report().passband_edge_hz;
            for frac in [0.01, 0.25, 0.5, 0.77, 0.93, 1.0] {
                let f = frac * edge;
                let (amp, phase) = (0.5, 0.7);
                let n = 12_000 + 4 * d.report().latency_input_frames as usize;
                let w_in = 2.0 * std::f64::consts::PI * f / f64::from(a);
                let x: Vec<f64> = (0..n)
                    .map(|i| amp * (w_in * i as f64 + phase).sin())
                    .collect();
                let y = offline::convert(&d, &x);
                let w_out = 2.0 * std::f64::consts::PI * f / f64::from(b);
                let margin = 2 * d.report().latency_output_frames.ceil() as usize + 2;
                let err = (margin..y.len() - margin)
                    .map(|m| (y[m] - amp * (w_out * m as f64 + phase).sin()).abs())
                    .fold(0.0, f64::max);
                let err_db = 20.0 * (err / amp).log10();
                assert!(
                    err_db <= -(db - 10.0),
                    "{a}->{b} at {db} dB, tone {f:.1} Hz: error {err_db:.1} dB re the tone"
                );
                worst_margin = worst_margin.min(-(db - 10.0) - err_db);
            }
        }
    }
    eprintln!("smallest margin to the bound: {worst_margin:.1} dB");
}
