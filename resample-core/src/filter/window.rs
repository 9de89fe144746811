//! The Kaiser window: the modified Bessel function I0, Kaiser's beta and length formulas.

/// Modified Bessel function of the first kind, order zero, by its power series.
///
/// `I0(x) = sum_k ((x/2)^k / k!)^2`; the series converges for every finite `x` and is summed
/// until a term no longer changes the total.
pub fn bessel_i0(x: f64) -> f64 {
    let half = x / 2.0;
    let mut term = 1.0_f64;
    let mut sum = 1.0_f64;
    let mut k = 1.0_f64;
    loop {
        let ratio = half / k;
        term *= ratio * ratio;
        let next = sum + term;
        if next == sum || !next.is_finite() {
            return next;
        }
        sum = next;
        k += 1.0;
    }
}

/// [`bessel_i0`] of `N` arguments at once, each result bit for bit the scalar one: the
/// same operations in the same order per lane, but the lanes' series advance side by side,
/// so their dependency chains (a division and two multiplications a term) overlap and the
/// compiler can run them in vector registers. A lane whose series has converged keeps its
/// sum while the others go on.
#[inline(always)]
pub fn bessel_i0_lanes<const N: usize>(x: [f64; N]) -> [f64; N] {
    let half = x.map(|v| v / 2.0);
    let mut term = [1.0_f64; N];
    let mut sum = [1.0_f64; N];
    let mut done = [false; N];
    let mut k = 1.0_f64;
    loop {
        for i in 0..N {
            let ratio = half[i] / k;
            term[i] *= ratio * ratio;
            let next = sum[i] + term[i];
            let stop = next == sum[i] || !next.is_finite();
            sum[i] = if done[i] { sum[i] } else { next };
            done[i] |= stop;
        }
        if done.iter().all(|&d| d) {
            return sum;
        }
        k += 1.0;
    }
}

/// Kaiser's beta for a stopband attenuation of `atten_db` dB.
///
/// `0.1102 (A - 8.7)` above 50 dB, `0.5842 (A - 21)^0.4 + 0.07886 (A - 21)` from 21 to 50 dB,
/// and 0 below.
pub fn kaiser_beta(atten_db: f64) -> f64 {
    if atten_db > 50.0 {
        0.1102 * (atten_db - 8.7)
    } else if atten_db >= 21.0 {
        0.5842 * (atten_db - 21.0).powf(0.4) + 0.07886 * (atten_db - 21.0)
    } else {
        0.0
    }
}

/// Kaiser's estimate of the length and beta of a low-pass filter.
///
/// `width` is the transition width as a fraction of the Nyquist frequency (0 < width < 1).
/// Returns `(taps, beta)` with `taps = ceil((A - 7.95) / (2.285 pi width) + 1)`.
pub fn kaiser_length(atten_db: f64, width: f64) -> (usize, f64) {
    let taps = ((atten_db - 7.95) / (2.285 * core::f64::consts::PI * width) + 1.0).ceil();
    (taps.max(1.0) as usize, kaiser_beta(atten_db))
}

/// Value of the Kaiser window of `len` points at index `n` (0-based), already divided by
/// `I0(beta)`; `i0_beta` must be `bessel_i0(beta)`.
#[cfg(any(feature = "measure", test))]
pub fn kaiser_at(n: f64, len: usize, beta: f64, i0_beta: f64) -> f64 {
    if len <= 1 {
        return 1.0;
    }
    let r = 2.0 * n / (len as f64 - 1.0) - 1.0;
    let arg = (1.0 - r * r).max(0.0);
    bessel_i0(beta * arg.sqrt()) / i0_beta
}

/// [`kaiser_at`] at `N` indices at once (bit for bit the same values), by
/// [`bessel_i0_lanes`].
#[inline(always)]
pub fn kaiser_at_lanes<const N: usize>(
    n: [f64; N],
    len: usize,
    beta: f64,
    i0_beta: f64,
) -> [f64; N] {
    if len <= 1 {
        return [1.0; N];
    }
    let x = n.map(|n| {
        let r = 2.0 * n / (len as f64 - 1.0) - 1.0;
        let arg = (1.0 - r * r).max(0.0);
        beta * arg.sqrt()
    });
    bessel_i0_lanes(x).map(|v| v / i0_beta)
}

/// The whole Kaiser window of `len` points (the analysis window of `measure`).
#[cfg(any(feature = "measure", test))]
pub fn kaiser_window(len: usize, beta: f64) -> Vec<f64> {
    let i0b = bessel_i0(beta);
    (0..len)
        .map(|n| kaiser_at(n as f64, len, beta, i0b))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn i0_known_values() {
        // Abramowitz & Stegun, Handbook of Mathematical Functions, Table 9.8 (from memory):
        // I0(1) = 1.2660658777520082, I0(5) = 27.239871823604442 (also scipy.special.i0).
        assert!((bessel_i0(0.0) - 1.0).abs() < 1e-15);
        assert!((bessel_i0(1.0) - 1.266_065_877_752_008_2).abs() < 1e-14);
        assert!((bessel_i0(5.0) / 27.239_871_823_604_442 - 1.0).abs() < 1e-14);
    }

    #[test]
    fn lanes_give_the_scalar_bits() {
        // Arguments from 0 to past any beta used, and the window at every index of a few
        // lengths: each lane must give exactly the scalar value.
        let xs: Vec<f64> = (0..4000)
            .map(|i| i as f64 * 0.0107 + (i % 7) as f64 * 1e-9)
            .collect();
        for c in xs.chunks_exact(8) {
            let lanes = bessel_i0_lanes::<8>(c.try_into().unwrap());
            for (x, v) in c.iter().zip(lanes) {
                assert_eq!(v.to_bits(), bessel_i0(*x).to_bits(), "x = {x}");
            }
        }
        for (len, beta) in [
            (1usize, 5.0),
            (9, 0.0),
            (33_701, 14.912_522_569_831_648),
            (1001, 21.3),
        ] {
            let i0b = bessel_i0(beta);
            for start in (0..len).step_by(8).take(600) {
                let n: [f64; 8] = std::array::from_fn(|j| (start + j) as f64);
                let got = kaiser_at_lanes(n, len, beta, i0b);
                for j in 0..8 {
                    let want = kaiser_at(n[j], len, beta, i0b);
                    assert_eq!(got[j].to_bits(), want.to_bits(), "len {len} n {}", n[j]);
                }
            }
        }
    }

    #[test]
    fn beta_matches_scipy_kaiser_beta() {
        // scipy.signal.kaiser_beta values, recomputed with scipy 1.17 (Kaiser, ISCAS 1974).
        assert!((kaiser_beta(40.0) - 3.395_321_052_261_457_4).abs() < 1e-12);
        for (a, b) in [
            (60.0, 5.65326),
            (80.0, 7.85726),
            (100.0, 10.06126),
            (120.0, 12.26526),
            (140.0, 14.46926),
        ] {
            assert!((kaiser_beta(a) - b).abs() < 1e-9, "A = {a}");
        }
        // The jump at A = 50 (CHECKS.md): 4.5335 from the middle branch, 4.5513 just above.
        assert!((kaiser_beta(50.0) - 4.5335).abs() < 1e-4);
        assert!((kaiser_beta(50.000_001) - 4.5513).abs() < 1e-4);
        assert_eq!(kaiser_beta(20.0), 0.0);
    }

    #[test]
    fn length_matches_scipy_kaiserord() {
        // scipy.signal.kaiserord values, recomputed with scipy 1.17 (its doc example first).
        let cases = [
            (65.0, 24.0 / 500.0, 167, 6.20426),
            (60.0, 0.1, 74, 5.65326),
            (120.0, 0.05, 314, 12.26526),
            (140.0, 0.02, 921, 14.46926),
        ];
        for (a, w, n, b) in cases {
            let (taps, beta) = kaiser_length(a, w);
            assert_eq!(taps, n, "A = {a}");
            assert!((beta - b).abs() < 1e-5, "A = {a}");
        }
    }

    #[test]
    fn window_is_symmetric_and_peaks_at_one() {
        let w = kaiser_window(31, 8.0);
        assert!((w[15] - 1.0).abs() < 1e-15);
        for i in 0..31 {
            assert!((w[i] - w[30 - i]).abs() < 1e-15);
        }
        // Ends equal 1 / I0(beta): common practice, no source.
        assert!((w[0] - 1.0 / bessel_i0(8.0)).abs() < 1e-15);
    }
}
