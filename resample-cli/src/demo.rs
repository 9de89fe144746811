//! The built-in demo scenario (invented, demo data only): a six-second stereo jingle for a
//! short video, made of tones, a chirp and a noise burst, generated at 44.1 kHz.

use std::f64::consts::PI;

/// Sample rate the jingle is generated at.
pub const JINGLE_RATE: u32 = 44_100;
/// Jingle length, seconds.
pub const JINGLE_SECONDS: f64 = 6.0;

/// The demo jingle as interleaved stereo at `rate`, full scale ±1.0, peaks below -3 dBFS.
pub fn jingle(rate: u32) -> Vec<f64> {
    let fs = f64::from(rate);
    let n = (JINGLE_SECONDS * fs) as usize;
    let mut out = vec![0.0; 2 * n];
    let mut add = |t0: f64, dur: f64, pan: f64, f: &dyn Fn(f64) -> f64| {
        let a = (t0 * fs) as usize;
        let b = (((t0 + dur) * fs) as usize).min(n);
        let (gl, gr) = ((1.0 - pan).sqrt(), pan.sqrt());
        for i in a..b {
            let v = f((i - a) as f64 / fs);
            out[2 * i] += gl * v;
            out[2 * i + 1] += gr * v;
        }
    };
    // 1. A rising arpeggio, alternating left and right.
    let notes = [523.25, 659.25, 783.99, 1046.50];
    for (k, &f) in notes.iter().enumerate() {
        let pan = if k % 2 == 0 { 0.25 } else { 0.75 };
        add(0.1 + 0.4 * k as f64, 0.6, pan, &|t| {
            0.25 * env(t, 0.01, 0.6) * ((2.0 * PI * f * t).sin() + 0.3 * (4.0 * PI * f * t).sin())
        });
    }
    // 2. An exponential chirp, 200 Hz to 18 kHz in 1.5 s, centred.
    let (f1, f2, dur) = (200.0_f64, 18_000.0_f64, 1.5);
    let r = (f2 / f1).ln();
    add(1.9, dur, 0.5, &|t| {
        0.2 * env(t, 0.02, dur) * (2.0 * PI * f1 * dur / r * ((t * r / dur).exp() - 1.0)).sin()
    });
    // 3. A short noise burst (a "whoosh"), left to right.
    let mut state = 0x6465_6d6f_u64;
    let noise: Vec<f64> = (0..(0.5 * fs) as usize)
        .map(|_| {
            state = state
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1_442_695_040_888_963_407);
            (state >> 11) as f64 / (1u64 << 53) as f64 * 2.0 - 1.0
        })
        .collect();
    let nb = noise.len();
    add(3.5, 0.5, 0.5, &|t| {
        let i = ((t * fs) as usize).min(nb - 1);
        0.15 * env(t, 0.05, 0.5) * noise[i]
    });
    // 4. A final chord with a high sparkle on the right.
    for (k, &f) in [261.63, 392.0, 523.25, 659.25].iter().enumerate() {
        add(4.1, 1.8, 0.3 + 0.1 * k as f64, &|t| {
            0.12 * env(t, 0.02, 1.8) * (2.0 * PI * f * t).sin()
        });
    }
    add(4.1, 1.2, 0.9, &|t| {
        0.05 * env(t, 0.005, 1.2) * (2.0 * PI * 12_000.0 * t).sin()
    });
    out
}

/// Attack-decay envelope: linear rise over `attack` s, then an exponential fall that
/// reaches -60 dB at `len` s, faded to zero at the end.
fn env(t: f64, attack: f64, len: f64) -> f64 {
    let rise = (t / attack).min(1.0);
    let fall = (-6.9 * t / len).exp();
    let tail = ((len - t) / 0.01).clamp(0.0, 1.0);
    rise * fall * tail
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn jingle_is_stereo_six_seconds_and_under_minus_3_dbfs() {
        let j = jingle(JINGLE_RATE);
        assert_eq!(j.len(), 2 * 6 * 44_100);
        let peak = j.iter().fold(0.0_f64, |m, v| m.max(v.abs()));
        assert!(peak > 0.1 && peak < 10f64.powf(-3.0 / 20.0), "peak {peak}");
    }
}
