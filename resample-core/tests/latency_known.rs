//! The measured latency against converters whose delay is known from their definition:
//! zero-delay linear interpolation, scipy.signal.resample_poly with its default filter
//! (zero delay by construction: scipy's source, read; ../shared/CHECKS.md), and pure delays
//! of k output samples added to them.

use resample_core::measure::Baseline;
use resample_core::measure::{measure_converter, Settings, Sweep};
#[allow(dead_code)]
mod common;

use common::bessel_i0;

/// scipy.signal.resample_poly(x, up, down) with its default window ("kaiser", 5.0):
/// `max_rate = max(up, down)`, `half_len = 10 max_rate`,
/// `h = firwin(2 half_len + 1, 1 / max_rate, window=("kaiser", 5.0))`, output
/// `y[m] = up sum_k x[k] h[m down - k up + half_len]`, length `ceil(len(x) up / down)`
/// (scipy's source, read).
fn scipy_default_resample_poly(x: &[f64], up: usize, down: usize) -> Vec<f64> {
    let max_rate = up.max(down);
    let half = 10 * max_rate;
    let n = 2 * half + 1;
    let c = 1.0 / max_rate as f64;
    let beta = 5.0;
    let i0b = bessel_i0(beta);
    let mut h: Vec<f64> = (0..n)
        .map(|i| {
            let m = i as f64 - half as f64;
            let x = c * m;
            let sinc = if x == 0.0 {
                1.0
            } else {
                (core::f64::consts::PI * x).sin() / (core::f64::consts::PI * x)
            };
            let t = 2.0 * i as f64 / (n as f64 - 1.0) - 1.0;
            c * sinc * bessel_i0(beta * (1.0 - t * t).max(0.0).sqrt()) / i0b
        })
        .collect();
    let s: f64 = h.iter().sum();
    for v in &mut h {
        *v /= s;
    }
    let total = (x.len() * up).div_ceil(down);
    (0..total)
        .map(|m| {
            let t = m * down + half;
            let mut k = (t / up).min(x.len() - 1);
            let mut j = t - k * up;
            let mut acc = 0.0;
            while j < h.len() {
                acc += x[k] * h[j];
                if k == 0 {
                    break;
                }
                k -= 1;
                j += up;
            }
            up as f64 * acc
        })
        .collect()
}

fn delayed(y: Vec<f64>, k: usize) -> Vec<f64> {
    let mut out = vec![0.0; k];
    out.extend(y);
    out
}

fn gcd(a: u32, b: u32) -> u32 {
    if b == 0 {
        a
    } else {
        gcd(b, a % b)
    }
}

const PAIRS: [(u32, u32); 5] = [
    (44_100, 48_000),
    (48_000, 44_100),
    (96_000, 44_100),
    (32_000, 96_000),
    (48_000, 16_000),
];

fn latency(a: u32, b: u32, f: impl FnOnce(&[f64]) -> Vec<f64>) -> f64 {
    let sweep = Sweep::new(a).seconds(2.0);
    measure_converter(&sweep, b, &Settings::default(), f)
        .unwrap()
        .latency_samples
}

#[test]
fn zero_delay_linear_interpolation_measures_zero() {
    // Output sample m is the straight line between the input samples around time m A / B
    // (resample_core::baseline): no delay by construction (common practice, no source).
    for (a, b) in PAIRS {
        for k in [0usize, 7] {
            let l = latency(a, b, |x| {
                delayed(Baseline::Linear.convert(a, b, x).unwrap(), k)
            });
            assert!((l - k as f64).abs() < 0.01, "{a} -> {b} + {k}: {l}");
        }
    }
}

#[test]
fn scipy_resample_poly_measures_zero_and_a_pure_delay_k() {
    for (a, b) in PAIRS {
        let g = gcd(a, b);
        let (up, down) = ((b / g) as usize, (a / g) as usize);
        for k in [0usize, 1, 189] {
            let l = latency(a, b, |x| {
                delayed(scipy_default_resample_poly(x, up, down), k)
            });
            assert!((l - k as f64).abs() < 0.01, "{a} -> {b} + {k}: {l}");
        }
    }
}

#[test]
fn a_pure_delay_at_one_rate_measures_its_length() {
    for k in [0usize, 1, 13, 500] {
        let l = latency(48_000, 48_000, |x| delayed(x.to_vec(), k));
        assert!((l - k as f64).abs() < 1e-3, "{k}: {l}");
    }
}
