//! The scalar reference: plain, in order, one accumulator. Every SIMD kernel is tested
//! against it, and it can be forced with [`super::Kernel::Scalar`].

use num_traits::Float;

use super::Block;

/// `sum_i taps[i] * x[i]`, accumulated left to right. Extra elements of the longer slice are
/// ignored.
pub fn dot<T: Float>(taps: &[T], x: &[T]) -> T {
    let mut acc = T::zero();
    for (&t, &v) in taps.iter().zip(x) {
        acc = acc + t * v;
    }
    acc
}

/// A block of outputs, each by [`dot`]. `out.len() >= channels * frames` (checked by the
/// caller; a shorter `out` only receives the outputs that fit).
pub(crate) fn block<T: Float>(b: &Block<'_, T>, out: &mut [T]) {
    let tpp = b.tpp;
    let frames = b.frames;
    for c in 0..b.channels {
        let hist = &b.history[c * b.channel_stride..];
        let Some(dst) = out.get_mut(c * frames..(c + 1) * frames) else {
            return;
        };
        b.for_each_output(|k, row, at| {
            dst[k] = dot(&b.coeffs[row..row + tpp], &hist[at..at + tpp]);
        });
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn small_dot() {
        assert_eq!(dot(&[1.0_f64, 2.0, 3.0], &[4.0, 5.0, 6.0]), 32.0);
        assert_eq!(dot::<f32>(&[], &[]), 0.0);
    }
}
