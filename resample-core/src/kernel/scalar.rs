//! The scalar reference: plain arithmetic in a fixed order. Every SIMD kernel is tested
//! against it, and it can be forced with [`super::Kernel::Scalar`].

use num_traits::Float;

/// `sum_i taps[i] * x[i]`, accumulated left to right. Extra elements of the longer slice are
/// ignored.
pub fn dot<T: Float>(taps: &[T], x: &[T]) -> T {
    let mut acc = T::zero();
    for (&t, &v) in taps.iter().zip(x) {
        acc = acc + t * v;
    }
    acc
}

/// Groups of outputs: `out[i lanes + l] = sum_r taps[r lanes + l] * inputs[i][r]`, summed as
/// every kernel sums it: even rows into one accumulator and odd rows into another, each in
/// row order, then the two added. Stops at the shortest of inputs and `out` (the caller
/// checks their sizes).
pub(crate) fn groups<T: Float>(taps: &[T], lanes: usize, inputs: &[&[T]], out: &mut [T]) {
    if lanes == 0 {
        return;
    }
    let rows = taps.len() / lanes;
    for (x, o) in inputs.iter().zip(out.chunks_exact_mut(lanes)) {
        if x.len() < rows {
            return;
        }
        for (l, y) in o.iter_mut().enumerate() {
            let (mut a, mut b) = (T::zero(), T::zero());
            let mut r = 0;
            while r + 2 <= rows {
                a = a + taps[r * lanes + l] * x[r];
                b = b + taps[(r + 1) * lanes + l] * x[r + 1];
                r += 2;
            }
            if r < rows {
                a = a + taps[r * lanes + l] * x[r];
            }
            *y = a + b;
        }
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
