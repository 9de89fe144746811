//! The minimum-phase filter with the magnitude response of a given prototype, by the
//! homomorphic (cepstral) method.
//!
//! The real cepstrum of the prototype, `c = IDFT(log |DFT(h)|)`, is folded onto the causal
//! side (`c[0]`, `2 c[n]` for `0 < n < N/2`, `c[N/2]`, zero after), which is the complex
//! cepstrum of the minimum-phase sequence with magnitude `|H|`; `DFT` then `exp` then `IDFT`
//! give that sequence (A. V. Oppenheim, R. W. Schafer, Discrete-Time Signal Processing, the
//! chapters on minimum-phase systems and on the complex cepstrum; from memory). The full
//! magnitude is kept (not its square root), so the result has the prototype's magnitude
//! response and the prototype's length.
//!
//! The DFT samples the cepstrum's aliased copy: coefficients past `N/2` fold back. The zeros
//! of a Kaiser prototype on the unit circle make its cepstrum decay only like `1/n`, so the
//! DFT is long: [`fft_len`] points, at least [`CEPSTRUM_OVERSAMPLE`] times the prototype and
//! at least [`MIN_CEPSTRUM_FFT`]. With that rule the result's magnitude stayed within
//! 1.5e-4 dB of the prototype's in the passband and its difference from it in the stopband
//! at least 25 dB under the stopband, on the cases tried (44.1k/48k/16k/8k pairs, 80 to
//! 140 dB; against `scipy.signal.minimum_phase`, whose default DFT is about 200 times the
//! prototype, in tests/reference_scipy.rs). The design loop measures the result itself, and
//! doubles the DFT (up to [`MAX_CEPSTRUM_FFT`]) while the measured passband ripple exceeds
//! the allowance for the request (`response::ripple_allowance_db`): the aliased cepstrum
//! shows first there, a few 1e-6 dB at 140 dB.

use crate::par::*;
use rustfft::num_complex::Complex;
use rustfft::FftPlanner;

/// How far under the requested stopband the design floors the prototype's magnitudes
/// before the logarithm (see [`minimum_phase_on`]), dB.
pub const FLOOR_MARGIN_DB: f64 = 30.0;

/// The deeper floor the any-ratio engine asks for when its interpolation between a
/// minimum-phase prototype's phases misses the request with [`FLOOR_MARGIN_DB`] (the floor
/// spreads across the whole band of the phase grid, where interpolation errs most), dB.
pub const DEEP_FLOOR_MARGIN_DB: f64 = 50.0;

/// Least ratio of the cepstrum's DFT length to the prototype's length.
pub const CEPSTRUM_OVERSAMPLE: usize = 32;

/// Shortest cepstrum DFT (points): short prototypes' cepstra need more than
/// [`CEPSTRUM_OVERSAMPLE`] times their length.
pub const MIN_CEPSTRUM_FFT: usize = 1 << 20;

/// Largest cepstrum DFT (points; 128 MiB of `Complex<f64>`, and as much again of FFT
/// scratch, while a design runs): prototypes longer than
/// `MAX_CEPSTRUM_FFT / CEPSTRUM_OVERSAMPLE` taps are not made minimum phase.
pub const MAX_CEPSTRUM_FFT: usize = 1 << 23;

/// The cepstrum's DFT length for a prototype of `len` taps: the smallest power of two at or
/// above [`CEPSTRUM_OVERSAMPLE`]` len`, and at least [`MIN_CEPSTRUM_FFT`].
pub fn fft_len(len: usize) -> usize {
    (CEPSTRUM_OVERSAMPLE * len.max(1))
        .next_power_of_two()
        .max(MIN_CEPSTRUM_FFT)
}

/// This factor times the smallest non-zero magnitude of the prototype's DFT is added to every
/// magnitude before the logarithm (exact zeros have no logarithm). The same relative
/// floor as `scipy.signal.minimum_phase` (source read: it adds `1e-7` times the smallest
/// non-zero magnitude to every magnitude).
const LOG_FLOOR: f64 = 1e-7;

/// The minimum-phase filter with the magnitude response of `h`, as long as `h`, normalised
/// to unity DC gain, on a DFT of [`fft_len`] points. `h` must not be longer than `MAX_CEPSTRUM_FFT / CEPSTRUM_OVERSAMPLE`.
#[allow(dead_code)] // the tests' and the benchmarks' (feature `internals`) entry point
pub fn minimum_phase(h: &[f64]) -> Vec<f64> {
    minimum_phase_on(h, fft_len(h.len()), f64::INFINITY)
}

/// [`minimum_phase`] on a DFT of `n` points (at least twice the length of `h`, at most
/// [`MAX_CEPSTRUM_FFT`]; the design loop doubles it from [`fft_len`] while the result's
/// passband ripple exceeds the allowance for the request), with magnitudes raised to at
/// least `floor_db` under the largest before the logarithm (`f64::INFINITY`: no such floor).
///
/// The floor fills the prototype's stopband nulls, whose logarithms make the cepstrum
/// decay slowly and alias: the design sets it [`FLOOR_MARGIN_DB`] under the requested
/// stopband, where it cannot lift the stopband measurably, and the cepstrum then fits a
/// DFT that does. On the 44.1k -> 48k prototype for 160 dB (39551 taps, a 2^23-point DFT)
/// the result's passband ripple went from 2.3e-6 dB to 3.1e-7 dB with a floor 40 dB under
/// the stopband, and to 1.2e-7 dB with one 20 dB under it (numpy, the same construction),
/// against an allowance of 3.5e-7 dB.
pub fn minimum_phase_on(h: &[f64], n: usize, floor_db: f64) -> Vec<f64> {
    let n = n.clamp(2 * h.len().max(1), MAX_CEPSTRUM_FFT.max(2 * h.len()));
    let mut planner = FftPlanner::<f64>::new();
    let fwd = planner.plan_fft_forward(n);
    let inv = planner.plan_fft_inverse(n);
    let mut scratch = vec![
        Complex::new(0.0, 0.0);
        fwd.get_inplace_scratch_len()
            .max(inv.get_inplace_scratch_len())
    ];
    let mut buf = vec![Complex::new(0.0, 0.0); n];
    for (b, &v) in buf.iter_mut().zip(h) {
        b.re = v;
    }
    fwd.process_with_scratch(&mut buf, &mut scratch);
    // log |H|, with exact zeros (and anything far below the smallest non-zero value) raised.
    buf.par_iter_mut()
        .for_each(|c| *c = Complex::new(c.norm(), 0.0));
    let smallest = buf
        .par_iter()
        .map(|c| c.re)
        .filter(|&m| m > 0.0)
        .reduce(|| f64::INFINITY, f64::min);
    let largest = buf.par_iter().map(|c| c.re).reduce(|| 0.0, f64::max);
    let floor = if smallest.is_finite() {
        LOG_FLOOR * smallest
    } else {
        f64::MIN_POSITIVE
    }
    .max(largest * 10f64.powf(-floor_db / 20.0));
    buf.par_iter_mut()
        .for_each(|c| *c = Complex::new((c.re + floor).ln(), 0.0));
    // The real cepstrum (log |H| is real and even, so its inverse DFT is real), scaled.
    inv.process_with_scratch(&mut buf, &mut scratch);
    let scale = 1.0 / n as f64;
    // Fold onto the causal side: c[0], 2 c[k] for 0 < k < n/2, c[n/2], zero after.
    let half = n / 2;
    buf.par_iter_mut().enumerate().for_each(|(k, c)| {
        let w = if k == 0 || k == half {
            1.0
        } else if k < half {
            2.0
        } else {
            0.0
        };
        *c = Complex::new(c.re * scale * w, 0.0);
    });
    fwd.process_with_scratch(&mut buf, &mut scratch);
    buf.par_iter_mut().for_each(|c| *c = c.exp());
    inv.process_with_scratch(&mut buf, &mut scratch);
    let mut g: Vec<f64> = buf[..h.len()].iter().map(|c| c.re * scale).collect();
    let sum: f64 = g.iter().sum();
    if sum != 0.0 && sum.is_finite() {
        for v in &mut g {
            *v /= sum;
        }
    }
    g
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn minimum_phase_of_a_two_zero_filter_reflects_the_outer_zero() {
        // h = (1 - 2 z^-1)(1 - 0.25 z^-1) = 1 - 2.25 z^-1 + 0.5 z^-2: its zero at 2 lies
        // outside the unit circle; the minimum-phase filter with the same magnitude has it at
        // 1/2, (2 - z^-1)(1 - 0.25 z^-1) = 2 - 1.5 z^-1 + 0.25 z^-2 (reflecting a zero in the
        // unit circle keeps |H| up to the factor |2|; Oppenheim and Schafer, the all-pass /
        // minimum-phase decomposition, from memory). Both normalised to unity DC gain.
        let h = [1.0, -2.25, 0.5];
        let g = minimum_phase(&h);
        let want = [2.0, -1.5, 0.25];
        let s: f64 = want.iter().sum();
        for (a, b) in g.iter().zip(want) {
            // (The log floor, 1e-7 of the smallest magnitude, moves them by about that.)
            assert!((a - b / s).abs() < 1e-6, "{g:?}");
        }
    }

    #[test]
    fn fft_length_rule() {
        assert_eq!(fft_len(1), 1 << 20);
        assert_eq!(fft_len(33_775), 1 << 21);
        assert_eq!(fft_len(93_133), 1 << 22);
        assert!(fft_len(MAX_CEPSTRUM_FFT / CEPSTRUM_OVERSAMPLE) <= MAX_CEPSTRUM_FFT);
    }
}
