//! A pair of sample rates reduced to the up/down factors L/M of a rational converter, and
//! the arithmetic of fixed ratios: greatest common divisor, output lengths, and which input
//! an output reads (the one home of each).

use crate::limits::MAX_RATE;
use crate::{Error, Result};

/// Input and output sample rates with their reduced up/down factors.
///
/// `out_rate / in_rate == up / down` with `gcd(up, down) == 1`.
///
/// ```
/// use resample_core::RatePair;
/// let r = RatePair::new(44_100, 48_000)?;
/// assert_eq!((r.up(), r.down()), (160, 147));
/// # Ok::<(), resample_core::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub struct RatePair {
    in_rate: u32,
    out_rate: u32,
    up: u32,
    down: u32,
}

/// Greatest common divisor (Euclid).
pub(crate) fn gcd(mut a: u64, mut b: u64) -> u64 {
    while b != 0 {
        let t = a % b;
        a = b;
        b = t;
    }
    a
}

impl RatePair {
    /// Reduce `out_rate / in_rate` to lowest terms. Rates must be in `1..=MAX_RATE` Hz.
    pub fn new(in_rate: u32, out_rate: u32) -> Result<Self> {
        for rate in [in_rate, out_rate] {
            if rate == 0 || rate > MAX_RATE {
                return Err(Error::RateOutOfRange { rate: rate.into() });
            }
        }
        let g = gcd(in_rate.into(), out_rate.into()) as u32;
        Ok(Self {
            in_rate,
            out_rate,
            up: out_rate / g,
            down: in_rate / g,
        })
    }

    /// Input sample rate in Hz.
    pub fn in_rate(&self) -> u32 {
        self.in_rate
    }

    /// Output sample rate in Hz.
    pub fn out_rate(&self) -> u32 {
        self.out_rate
    }

    /// Up-sampling factor L (reduced).
    pub fn up(&self) -> u32 {
        self.up
    }

    /// Down-sampling factor M (reduced).
    pub fn down(&self) -> u32 {
        self.down
    }

    /// True when both rates are equal (the conversion is the identity).
    pub fn is_identity(&self) -> bool {
        self.up == 1 && self.down == 1
    }

    /// The lower of the two Nyquist frequencies, in Hz.
    pub fn lower_nyquist(&self) -> f64 {
        f64::from(self.in_rate.min(self.out_rate)) / 2.0
    }

    /// Exact number of output frames for `input_frames` frames of input: `ceil(n * L / M)`.
    pub fn output_len(&self, input_frames: u64) -> u64 {
        output_len(input_frames, self.up.into(), self.down.into())
    }
}

/// Exact output length `ceil(frames L / M)` for any factors (reduced or not).
pub(crate) fn output_len(frames: u64, up: u64, down: u64) -> u64 {
    (u128::from(frames) * u128::from(up)).div_ceil(u128::from(down)) as u64
}

/// The timing rule of a fixed-ratio engine with delay `delay` (taps of the prototype at rate
/// `L * in_rate`): output `n` is centred on input time `n M / L`, and the newest input it
/// reads is `floor((n M + delay) / L)`. Output `n` is ready once that input has arrived.
pub(crate) fn newest_input(n: u64, up: u64, down: u64, delay: u64) -> i64 {
    ((u128::from(n) * u128::from(down) + u128::from(delay)) / u128::from(up)) as i64
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reduces_common_pairs() {
        // common practice, no source: 48000/44100 = 160/147.
        let cases = [
            (44_100, 48_000, 160, 147),
            (48_000, 44_100, 147, 160),
            (44_056, 48_000, 6000, 5507),
            (44_100, 16_000, 160, 441),
            (8_000, 44_100, 441, 80),
            (96_000, 44_100, 147, 320),
            (22_050, 44_100, 2, 1),
            (48_000, 48_000, 1, 1),
        ];
        for (a, b, up, down) in cases {
            let r = RatePair::new(a, b).unwrap();
            assert_eq!((r.up(), r.down()), (up, down), "{a} -> {b}");
        }
    }

    #[test]
    fn rejects_zero_and_absurd_rates() {
        assert_eq!(
            RatePair::new(0, 48_000),
            Err(Error::RateOutOfRange { rate: 0 })
        );
        assert!(RatePair::new(48_000, MAX_RATE + 1).is_err());
        assert!(RatePair::new(48_000, u32::MAX).is_err());
    }

    #[test]
    fn output_length_is_ceiling() {
        let r = RatePair::new(44_100, 48_000).unwrap();
        assert_eq!(r.output_len(0), 0);
        assert_eq!(r.output_len(1), 2); // ceil(160/147)
        assert_eq!(r.output_len(147), 160);
        assert_eq!(r.output_len(148), 162);
    }
}
