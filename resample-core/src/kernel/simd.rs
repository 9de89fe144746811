//! The body shared by every SIMD kernel, written once as a macro over a small vector
//! vocabulary (`zero`, `load`, `partial`, `splat`, `store`, `fma`, `add`, `hsum`, lane count
//! `W`, inputs per call `JOBS`) that each instruction-set module supplies per sample type.
//!
//! `dot`: two accumulators, `a` taking even vectors and `b` odd ones in steps of `2 W`
//! taps, then one whole vector into `a` if `W` taps remain, then a zero-filled partial
//! vector into `b`; finally `hsum(a + b)`.
//!
//! `groups`: a group table holds one vector of `W` taps per input sample (one lane per
//! output). Each input sample is broadcast to every lane and multiplied with its vector, so
//! a group of `W` outputs costs one multiply-add per input sample, with aligned loads of
//! taps and no horizontal sums. Up to `JOBS` inputs (other channels, or other periods of the
//! same group; 8 for 512-bit and 128-bit vectors, 4 for AVX2's 16 registers) share each
//! loaded vector of taps, in batches as even as possible. Every output has its own two accumulators
//! (even and odd rows, added at the end), so its value does not depend on which inputs it
//! was computed with.

/// Generate `dot` and `groups` functions for one instruction set and sample type.
///
/// `$feat`: the `target_feature` string; `$detect`: run-time check of those features;
/// `$t`: sample type; `$v`: sibling module with the vector vocabulary for `$t`; `$m`: name
/// of the generated module (with `dot` and `groups`).
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

            /// Groups of outputs (see [`crate::kernel::KernelFns::groups`]): `out[i W + l]` is
            /// lane `l` of the taps times input `i`. The caller has checked that every input
            /// holds at least `taps.len() / lanes` samples and `out` holds `inputs.len() lanes`.
            pub(crate) fn groups(taps: &[$t], lanes: usize, inputs: &[&[$t]], out: &mut [$t]) {
                if !$detect() || lanes != $v::W {
                    return $crate::kernel::scalar::groups(taps, lanes, inputs, out);
                }
                let rows = taps.len() / $v::W;
                let fits =
                    inputs.iter().all(|x| x.len() >= rows) && out.len() >= inputs.len() * lanes;
                if !fits {
                    return $crate::kernel::scalar::groups(taps, lanes, inputs, out);
                }
                let t = taps.as_ptr();
                let mut i = 0;
                // Batches as even as possible, so that none is left with too few inputs to
                // keep the multiply-add units busy.
                let mut batches = inputs.len().div_ceil($v::JOBS);
                while i < inputs.len() {
                    let n = (inputs.len() - i).div_ceil(batches);
                    batches -= 1;
                    let x = |k: usize| inputs[i + k.min(n - 1)].as_ptr();
                    // Safety: the CPU features were detected just above; the taps hold `rows`
                    // vectors of `W` lanes, every input at least `rows` samples and `out` one
                    // vector per input (all checked above).
                    unsafe {
                        let o = out.as_mut_ptr().add(i * lanes);
                        match n {
                            8 => jobs::<8>(
                                t,
                                rows,
                                [x(0), x(1), x(2), x(3), x(4), x(5), x(6), x(7)],
                                o,
                            ),
                            7 => jobs::<7>(t, rows, [x(0), x(1), x(2), x(3), x(4), x(5), x(6)], o),
                            6 => jobs::<6>(t, rows, [x(0), x(1), x(2), x(3), x(4), x(5)], o),
                            5 => jobs::<5>(t, rows, [x(0), x(1), x(2), x(3), x(4)], o),
                            4 => jobs::<4>(t, rows, [x(0), x(1), x(2), x(3)], o),
                            3 => jobs::<3>(t, rows, [x(0), x(1), x(2)], o),
                            2 => jobs::<2>(t, rows, [x(0), x(1)], o),
                            _ => jobs::<1>(t, rows, [x(0)], o),
                        }
                    }
                    i += n;
                }
            }

            /// One group of taps against `R` inputs: two accumulators per input (even and
            /// odd rows), added at the end, so every output is computed the same way
            /// whatever `R`.
            ///
            /// # Safety
            /// The CPU supports `$feat`; `t` is valid for `rows W` reads, every `x[i]` for
            /// `rows` reads and `out` for `R W` writes.
            #[target_feature(enable = $feat)]
            #[inline]
            unsafe fn jobs<const R: usize>(
                t: *const $t,
                rows: usize,
                x: [*const $t; R],
                out: *mut $t,
            ) {
                use $v::*;
                // Safety: every read is below `rows` rows, every write below `R W` (the
                // caller's guarantee); features as above.
                unsafe {
                    let mut a = [zero(); R];
                    let mut b = [zero(); R];
                    let mut r = 0;
                    while r + 2 <= rows {
                        let t0 = load(t.add(r * W));
                        let t1 = load(t.add((r + 1) * W));
                        for i in 0..R {
                            a[i] = fma(a[i], t0, splat(x[i].add(r)));
                            b[i] = fma(b[i], t1, splat(x[i].add(r + 1)));
                        }
                        r += 2;
                    }
                    if r < rows {
                        let t0 = load(t.add(r * W));
                        for i in 0..R {
                            a[i] = fma(a[i], t0, splat(x[i].add(r)));
                        }
                    }
                    for i in 0..R {
                        store(out.add(i * W), add(a[i], b[i]));
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
