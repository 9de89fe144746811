//! The scalar reference dot product: plain, in order, one accumulator.

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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn small_dot() {
        assert_eq!(dot(&[1.0_f64, 2.0, 3.0], &[4.0, 5.0, 6.0]), 32.0);
        assert_eq!(dot::<f32>(&[], &[]), 0.0);
    }
}
