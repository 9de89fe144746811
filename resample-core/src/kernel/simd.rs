//! The body shared by every SIMD kernel, written once as a macro over a small vector
//! vocabulary (`zero`, `load`, `partial`, `splat`, `store`, `fma`, `add`, `hsum`, lane count
//! `W`, inputs per call `JOBS`) that each instruction-set module supplies per sample type.
//!
//! `dot`: two accumulators, `a` taking even vectors and `b` odd ones in steps of `2 W`
//! taps, then one whole vector into `a` if `W` taps remain, then a zero-filled partial
//! vector into `b`; finally `hsum(a + b)`.
//!
//! `span`: a group table holds one vector of `W` taps per input sample (one lane per
//! output). Each input sample is broadcast to every lane and multiplied with its vector, so
//! a group of `W` outputs costs one multiply-add per input sample, with aligned loads of
//! taps and no horizontal sums. Up to `JOBS` inputs (other channels, or other periods of the
//! same group; 8 for 512-bit and 128-bit vectors, 4 for AVX2's 16 registers) share each
//! loaded vector of taps, in batches as even as possible. Every output has its own two accumulators
//! (even and odd rows, added at the end), so its value does not depend on which inputs it
//! was computed with.

/// Generate `dot` and `span` functions for one instruction set and sample type.
///
/// `$feat`: the `target_feature` string; `$detect`: run-time check of those features;
/// `$t`: sample type; `$v`: sibling module with the vector vocabulary for `$t`; `$m`: name
/// of the generated module (with `dot` and `span`).
macro_rules! simd_kernels {
    ($feat:literal, $detect:path, $t:ty, $v:ident, $m:ident) => {
        /// The kernels for one sample type.
        pub(crate) mod $m {
            use super::$v;

            /// Dot product over the shorter of the two lengths.
            pub(crate) fn dot(taps: &[$t], x: &[$t]) -> $t {
                let n = taps.len().min(x.len());
                if !$detect() {
                    return $crate::kernel::scalar::dot(taps, x);
                }
                // Safety: the CPU features this function is compiled for were detected just
                // above, and both pointers are valid for `n` reads.
                unsafe { dot_impl(taps.as_ptr(), x.as_ptr(), n) }
            }

            /// A span of consecutive groups (see [`crate::kernel::KernelFns::span`]) for
            /// several inputs: `out[(i G + g) W + l]` is lane `l` of group `g` against input `i`
            /// from its shift on. The caller has checked the sizes (taps of every group, inputs
            /// long enough for the last group, room in `out`).
            pub(crate) fn span(
                g: &$crate::kernel::GroupSpan<'_, $t>,
                inputs: &[&[$t]],
                out: &mut [$t],
            ) {
                let n_groups = g.shifts.len();
                if !$detect() || g.lanes != $v::W || n_groups == 0 {
                    return $crate::kernel::scalar::span(g, inputs, out);
                }
                let rows = g.rows;
                let reach = g.shifts[n_groups - 1] - g.shifts[0] + rows;
                let fits = g.taps.len() >= n_groups * rows * $v::W
                    && inputs.iter().all(|x| x.len() >= reach)
                    && out.len() >= inputs.len() * n_groups * $v::W;
                if !fits {
                    return $crate::kernel::scalar::span(g, inputs, out);
                }
                let t = g.taps.as_ptr();
                let stride = n_groups * $v::W;
                let mut i = 0;
                // Batches as even as possible, so that none is left with too few inputs to
                // keep the multiply-add units busy.
                let mut batches = inputs.len().div_ceil($v::JOBS);
                while i < inputs.len() {
                    let n = (inputs.len() - i).div_ceil(batches);
                    batches -= 1;
                    let xs = &inputs[i..i + n];
                    let o = out[i * stride..].as_mut_ptr();
                    // Safety: the CPU features were detected just above; the taps hold
                    // `rows` vectors of `W` lanes per group, every input at least `reach`
                    // samples and `out` `stride` values per input from `o` (checked above).
                    unsafe {
                        match n {
                            8 => batch::<8>(t, rows, g.shifts, xs, o, stride),
                            7 => batch::<7>(t, rows, g.shifts, xs, o, stride),
                            6 => batch::<6>(t, rows, g.shifts, xs, o, stride),
                            5 => batch::<5>(t, rows, g.shifts, xs, o, stride),
                            4 => batch::<4>(t, rows, g.shifts, xs, o, stride),
                            3 => batch::<3>(t, rows, g.shifts, xs, o, stride),
                            2 => batch::<2>(t, rows, g.shifts, xs, o, stride),
                            _ => batch::<1>(t, rows, g.shifts, xs, o, stride),
                        }
                    }
                    i += n;
                }
            }

            /// Every group of a span against `R` inputs, group after group, the inputs'
            /// pointers set up once.
            ///
            /// # Safety
            /// The CPU supports `$feat`; `xs.len() >= R`; `t` valid for `shifts.len() rows W`
            /// reads; every input for `shifts[last] - shifts[0] + rows` reads; `out` for
            /// `(R - 1) stride + shifts.len() W` writes.
            #[target_feature(enable = $feat)]
            unsafe fn batch<const R: usize>(
                t: *const $t,
                rows: usize,
                shifts: &[usize],
                xs: &[&[$t]],
                out: *mut $t,
                stride: usize,
            ) {
                let x: [*const $t; R] = core::array::from_fn(|k| xs[k].as_ptr());
                // Safety: the caller's guarantee, passed on.
                unsafe {
                    // Few inputs leave few multiply-add chains: run several groups side by
                    // side then (each group's outputs computed exactly as alone), keeping the
                    // accumulators (2 G R) to eight with sixteen vector registers (AVX2,
                    // `JOBS` 4) and to twelve with thirty-two.
                    match R {
                        1 => groups_by::<R, 4>(t, rows, shifts, x, out, stride),
                        2 => groups_by::<R, 2>(t, rows, shifts, x, out, stride),
                        3 if $v::JOBS >= 8 => groups_by::<R, 2>(t, rows, shifts, x, out, stride),
                        _ => groups_by::<R, 1>(t, rows, shifts, x, out, stride),
                    }
                }
            }

            /// The groups of a span against `R` inputs, `G` groups at a time (the last ones
            /// one at a time).
            ///
            /// # Safety
            /// As [`batch`], with the inputs' pointers in `x`.
            #[target_feature(enable = $feat)]
            #[inline]
            unsafe fn groups_by<const R: usize, const G: usize>(
                t: *const $t,
                rows: usize,
                shifts: &[usize],
                x: [*const $t; R],
                out: *mut $t,
                stride: usize,
            ) {
                let s0 = shifts[0];
                let n = shifts.len();
                let mut g = 0;
                // Safety: every group's taps and outputs are inside the caller's ranges, and
                // group `g`'s reads end at `shifts[g] - s0 + rows`, inside every input.
                unsafe {
                    while g + G <= n {
                        let tg: [*const $t; G] =
                            core::array::from_fn(|k| t.add((g + k) * rows * $v::W));
                        let xg: [[*const $t; R]; G] =
                            core::array::from_fn(|k| x.map(|p| p.add(shifts[g + k] - s0)));
                        let og: [*mut $t; G] = core::array::from_fn(|k| out.add((g + k) * $v::W));
                        jobs::<R, G>(tg, rows, xg, og, stride);
                        g += G;
                    }
                    while g < n {
                        let xg = x.map(|p| p.add(shifts[g] - s0));
                        jobs::<R, 1>(
                            [t.add(g * rows * $v::W)],
                            rows,
                            [xg],
                            [out.add(g * $v::W)],
                            stride,
                        );
                        g += 1;
                    }
                }
            }

            /// `G` groups of taps, each against its `R` inputs: two accumulators per input and
            /// group (even and odd rows), added at the end, so every output is computed the
            /// same way whatever `R` and `G`.
            ///
            /// # Safety
            /// The CPU supports `$feat`; every `t[k]` is valid for `rows W` reads, every
            /// `x[k][i]` for `rows` reads and every `out[k]` for `W` writes at every multiple
            /// of `stride` below `R stride`.
            #[target_feature(enable = $feat)]
            #[inline]
            unsafe fn jobs<const R: usize, const G: usize>(
                t: [*const $t; G],
                rows: usize,
                x: [[*const $t; R]; G],
                out: [*mut $t; G],
                stride: usize,
            ) {
                use $v::*;
                // Safety: every read is below `rows` rows, every write inside the caller's
                // ranges; features as above.
                unsafe {
                    let mut a = [[zero(); R]; G];
                    let mut b = [[zero(); R]; G];
                    let mut r = 0;
                    while r + 2 <= rows {
                        for k in 0..G {
                            let t0 = load(t[k].add(r * W));
                            let t1 = load(t[k].add((r + 1) * W));
                            for i in 0..R {
                                a[k][i] = fma(a[k][i], t0, splat(x[k][i].add(r)));
                                b[k][i] = fma(b[k][i], t1, splat(x[k][i].add(r + 1)));
                            }
                        }
                        r += 2;
                    }
                    if r < rows {
                        for k in 0..G {
                            let t0 = load(t[k].add(r * W));
                            for i in 0..R {
                                a[k][i] = fma(a[k][i], t0, splat(x[k][i].add(r)));
                            }
                        }
                    }
                    for k in 0..G {
                        for i in 0..R {
                            store(out[k].add(i * stride), add(a[k][i], b[k][i]));
                        }
                    }
                }
            }

            /// # Safety
            /// The CPU supports `$feat`; `w` and `x` are valid for `n` reads.
            #[target_feature(enable = $feat)]
            unsafe fn dot_impl(w: *const $t, x: *const $t, n: usize) -> $t {
                use $v::*;
                // Safety: every read is below `n` (the caller's guarantee); features as above.
                unsafe {
                    let mut a = zero();
                    let mut b = zero();
                    let mut j = 0;
                    while j + 2 * W <= n {
                        a = fma(a, load(w.add(j)), load(x.add(j)));
                        b = fma(b, load(w.add(j + W)), load(x.add(j + W)));
                        j += 2 * W;
                    }
                    if j + W <= n {
                        a = fma(a, load(w.add(j)), load(x.add(j)));
                        j += W;
                    }
                    if j < n {
                        b = fma(b, partial(w.add(j), n - j), partial(x.add(j), n - j));
                    }
                    hsum(add(a, b))
                }
            }
        }
    };
}

pub(crate) use simd_kernels;
