//! The simplest rate converters, kept as baselines so measurements can show what a
//! windowed-sinc filter buys: sample repetition (hold), linear interpolation, and hold
//! followed by a moving average or a one-pole smoother. Whole-signal, `f64`, any rate pair;
//! output sample `m` is placed at input time `m A / B` as in [`crate::offline`].

use crate::{RatePair, Result};

/// A baseline method.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Baseline {
    /// Each output takes the newest input sample at or before its time (zero-order hold).
    Hold,
    /// Straight line between the two input samples around the output's time.
    Linear,
    /// Hold, then a moving average over [`Baseline::smoother_len`] output samples.
    HoldMovingAverage,
    /// Hold, then a one-pole smoother `y[n] = (1 - a) x[n] + a y[n - 1]`, its -3 dB point at
    /// half the lower Nyquist frequency.
    HoldOnePole,
}

impl Baseline {
    /// All baselines, simplest first.
    pub const ALL: [Baseline; 4] = [
        Baseline::Hold,
        Baseline::Linear,
        Baseline::HoldMovingAverage,
        Baseline::HoldOnePole,
    ];

    /// Short name for tables.
    pub fn name(self) -> &'static str {
        match self {
            Baseline::Hold => "hold",
            Baseline::Linear => "linear",
            Baseline::HoldMovingAverage => "hold+moving-average",
            Baseline::HoldOnePole => "hold+one-pole",
        }
    }

    /// Length of the moving average for a rate pair: the output samples per input sample,
    /// rounded up, at least 2.
    pub fn smoother_len(in_rate: u32, out_rate: u32) -> usize {
        (f64::from(out_rate) / f64::from(in_rate)).ceil().max(2.0) as usize
    }

    /// Feedback coefficient `a` of the one-pole smoother at `out_rate`: -3 dB at a quarter
    /// of the lower rate (`a = 2 - cos w - sqrt((2 - cos w)^2 - 1)`, the exact -3 dB point
    /// of `|H| = (1 - a) / |1 - a e^{-jw}|`; standard result, any DSP text).
    pub fn one_pole_coefficient(in_rate: u32, out_rate: u32) -> f64 {
        let fc = f64::from(in_rate.min(out_rate)) / 4.0;
        let w = 2.0 * core::f64::consts::PI * fc / f64::from(out_rate);
        let b = 2.0 - w.cos();
        b - (b * b - 1.0).sqrt()
    }

    /// Convert `x` from `in_rate` to `out_rate`; output length `ceil(n B / A)` as the
    /// windowed-sinc converter.
    pub fn convert(self, in_rate: u32, out_rate: u32, x: &[f64]) -> Result<Vec<f64>> {
        let pair = RatePair::new(in_rate, out_rate)?;
        let (up, down) = (pair.up(), pair.down());
        let total = pair.output_len(x.len() as u64) as usize;
        let at = |i: u64| x.get(i as usize).copied().unwrap_or(0.0);
        let mut y: Vec<f64> = (0..total as u64)
            .map(|m| {
                let pos = u128::from(m) * u128::from(down);
                let i = (pos / u128::from(up)) as u64;
                match self {
                    Baseline::Linear => {
                        let f = (pos % u128::from(up)) as f64 / up as f64;
                        (1.0 - f) * at(i) + f * at(i + 1)
                    }
                    _ => at(i),
                }
            })
            .collect();
        match self {
            Baseline::HoldMovingAverage => {
                let n = Self::smoother_len(in_rate, out_rate);
                let mut sum = 0.0;
                let held = y.clone();
                for (k, v) in y.iter_mut().enumerate() {
                    sum += held[k];
                    if k >= n {
                        sum -= held[k - n];
                    }
                    *v = sum / n as f64;
                }
            }
            Baseline::HoldOnePole => {
                let a = Self::one_pole_coefficient(in_rate, out_rate);
                let mut s = 0.0;
                for v in &mut y {
                    s = (1.0 - a) * *v + a * s;
                    *v = s;
                }
            }
            Baseline::Hold | Baseline::Linear => {}
        }
        Ok(y)
    }
}

impl Baseline {
    /// [`Baseline::convert`] in any float type, into a caller's buffer (at least
    /// `ceil(n B / A)` long), without allocating once `scratch` has grown (it holds the
    /// linear interpolation's fractions, or the moving average's last
    /// [`Baseline::smoother_len`] inputs): the form to time the
    /// baselines with, at the precision of the rows beside them. Same arithmetic as
    /// `convert`, step by step (identical results in `f64`). Returns the output length.
    pub fn convert_into<T: num_traits::Float>(
        self,
        in_rate: u32,
        out_rate: u32,
        x: &[T],
        y: &mut [T],
        scratch: &mut Vec<T>,
    ) -> Result<usize> {
        let pair = RatePair::new(in_rate, out_rate)?;
        let (up, down) = (u64::from(pair.up()), u64::from(pair.down()));
        let total = (pair.output_len(x.len() as u64) as usize).min(y.len());
        let at = |i: u64| x.get(i as usize).copied().unwrap_or_else(T::zero);
        let (step, carry) = (down / up, down % up);
        let upf = T::from(up).unwrap_or_else(T::one);
        let (mut i, mut rem) = (0u64, 0u64);
        match self {
            Baseline::Linear => {
                // The fractions rem / up, divided once each (a table of `up` entries).
                let table = up <= 1 << 16;
                if table {
                    scratch.clear();
                    scratch.extend((0..up).map(|r| T::from(r).unwrap_or_else(T::zero) / upf));
                }
                for v in y.iter_mut().take(total) {
                    let f = if table {
                        scratch[rem as usize]
                    } else {
                        T::from(rem).unwrap_or_else(T::zero) / upf
                    };
                    *v = (T::one() - f) * at(i) + f * at(i + 1);
                    i += step;
                    rem += carry;
                    if rem >= up {
                        rem -= up;
                        i += 1;
                    }
                }
            }
            _ => {
                for v in y.iter_mut().take(total) {
                    *v = at(i);
                    i += step;
                    rem += carry;
                    if rem >= up {
                        rem -= up;
                        i += 1;
                    }
                }
            }
        }
        match self {
            Baseline::HoldMovingAverage => {
                let n = Self::smoother_len(in_rate, out_rate);
                let nf = T::from(n).unwrap_or_else(T::one);
                scratch.clear();
                scratch.resize(n, T::zero());
                let mut sum = T::zero();
                for (k, v) in y.iter_mut().take(total).enumerate() {
                    let held = *v;
                    sum = sum + held;
                    if k >= n {
                        sum = sum - scratch[k % n];
                    }
                    scratch[k % n] = held;
                    *v = sum / nf;
                }
            }
            Baseline::HoldOnePole => {
                let a =
                    T::from(Self::one_pole_coefficient(in_rate, out_rate)).unwrap_or_else(T::zero);
                let mut s = T::zero();
                for v in y.iter_mut().take(total) {
                    s = (T::one() - a) * *v + a * s;
                    *v = s;
                }
            }
            Baseline::Hold | Baseline::Linear => {}
        }
        Ok(total)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn convert_into_is_convert() {
        let x: Vec<f64> = (0..5000)
            .map(|i| ((i * 7919) % 1013) as f64 / 506.0 - 1.0)
            .collect();
        for (a, b) in [
            (44_100, 48_000),
            (96_000, 44_100),
            (8_000, 48_000),
            (48_000, 16_000),
        ] {
            for m in Baseline::ALL {
                let want = m.convert(a, b, &x).unwrap();
                let mut y = vec![0.0; want.len() + 3];
                let mut scratch = Vec::new();
                let n = m.convert_into(a, b, &x, &mut y, &mut scratch).unwrap();
                assert_eq!(n, want.len());
                assert_eq!(&y[..n], &want[..], "{} {a} -> {b}", m.name());
            }
        }
    }

    #[test]
    fn hold_and_linear_by_an_integer_factor() {
        // common practice, no source: hold repeats, linear interpolates on a straight line.
        let x = [1.0, 3.0, 5.0];
        assert_eq!(
            Baseline::Hold.convert(1000, 2000, &x).unwrap(),
            vec![1.0, 1.0, 3.0, 3.0, 5.0, 5.0]
        );
        assert_eq!(
            Baseline::Linear.convert(1000, 2000, &x).unwrap(),
            vec![1.0, 2.0, 3.0, 4.0, 5.0, 2.5]
        );
    }

    #[test]
    fn smoothers_keep_dc_and_lengths() {
        let x = vec![0.5; 1000];
        for b in Baseline::ALL {
            let y = b.convert(44_100, 48_000, &x).unwrap();
            assert_eq!(y.len(), 1089); // ceil(1000 * 160 / 147)
            assert!((y[800] - 0.5).abs() < 1e-9, "{}", b.name());
        }
    }

    #[test]
    fn one_pole_is_3db_down_at_its_corner() {
        // |H| = (1 - a) / |1 - a e^{-jw}| (standard result, any DSP text; CHECKS.md).
        let a = Baseline::one_pole_coefficient(44_100, 48_000);
        let w = 2.0 * core::f64::consts::PI * 11_025.0 / 48_000.0;
        let h = (1.0 - a) / ((1.0 - a * w.cos()).powi(2) + (a * w.sin()).powi(2)).sqrt();
        assert!((20.0 * h.log10() + 3.0103).abs() < 1e-3);
    }

    #[test]
    fn bad_rates_are_errors() {
        assert!(Baseline::Hold.convert(0, 48_000, &[1.0]).is_err());
    }
}
