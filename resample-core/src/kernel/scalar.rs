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

/// A span of consecutive groups (see [`super::KernelFns::span`]):
/// `out[(i G + g) lanes + l] = sum_r tap(g, r, l) * inputs[i][shifts[g] - shifts[0] + r]`,
/// summed as every kernel sums it: even rows into one accumulator and odd rows into another,
/// each in row order, then the two added. Stops at the first input or output that is too
/// short (the caller checks the sizes).
pub(crate) fn span<T: Float>(g: &super::GroupSpan<'_, T>, inputs: &[&[T]], out: &mut [T]) {
    let (lanes, rows) = (g.lanes, g.rows);
    if lanes == 0 || g.shifts.is_empty() {
        return;
    }
    let per_group = rows * lanes;
    let s0 = g.shifts[0];
    let stride = g.shifts.len() * lanes;
    for (x, o) in inputs.iter().zip(out.chunks_exact_mut(stride)) {
        for (j, (&s, o)) in g.shifts.iter().zip(o.chunks_exact_mut(lanes)).enumerate() {
            let (Some(taps), Some(x)) = (
                g.taps.get(j * per_group..(j + 1) * per_group),
                x.get(s - s0..s - s0 + rows),
            ) else {
                return;
            };
            for (l, y) in o.iter_mut().enumerate() {
                let mut acc = [T::zero(); 2];
                for (r, &v) in x.iter().enumerate() {
                    acc[r % 2] = acc[r % 2] + taps[r * lanes + l] * v;
                }
                *y = acc[0] + acc[1];
            }
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
