//! The body shared by every SIMD kernel, written once as a macro over a small vector
//! vocabulary (`zero`, `load`, `partial`, `fma`, `add`, `hsum`, lane count `W`) that each
//! instruction-set module supplies per sample type.
//!
//! Accumulation order, fixed for every output whatever its block: two accumulators per
//! channel, `a` taking even vectors and `b` odd ones in steps of `2 W` taps, then one
//! whole vector into `a` if `W` taps remain, then a zero-filled partial vector into `b`;
//! finally `hsum(a + b)`. Channels are taken in pairs so each loaded vector of taps serves
//! two channels; a pair and a single channel run the same operations per channel.

/// Generate `dot` and `block` functions for one instruction set and sample type.
///
/// `$feat`: the `target_feature` string; `$detect`: run-time check of those features;
/// `$t`: sample type; `$v`: sibling module with the vector vocabulary for `$t`; `$m`: name
/// of the generated module (with `dot` and `block`).
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

            /// A block of outputs (see [`crate::kernel::Block`]).
            pub(crate) fn block(b: &$crate::kernel::Block<'_, $t>, out: &mut [$t]) {
                if !$detect() || out.len() < b.channels * b.frames {
                    return $crate::kernel::scalar::block(b, out);
                }
                // Safety: the CPU features were detected just above; `Block::new` checked that
                // every row and every channel's window lies inside `coeffs` and `history`, and
                // `out` holds `channels * frames` values (checked above).
                unsafe { block_impl(b, out) }
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

            /// `N` channels of one output: the row at `w`, channel windows at `x[c]`.
            ///
            /// # Safety
            /// The CPU supports `$feat`; `w` and every `x[c]` are valid for `tpp` reads.
            #[target_feature(enable = $feat)]
            #[inline]
            unsafe fn output<const N: usize>(
                w: *const $t,
                x: [*const $t; N],
                tpp: usize,
            ) -> [$t; N] {
                use $v::*;
                // Safety: every read is below `tpp` (the caller's guarantee); features as above.
                unsafe {
                    let mut a = [zero(); N];
                    let mut b = [zero(); N];
                    let mut j = 0;
                    while j + 2 * W <= tpp {
                        let w0 = load(w.add(j));
                        let w1 = load(w.add(j + W));
                        for c in 0..N {
                            a[c] = fma(a[c], w0, load(x[c].add(j)));
                            b[c] = fma(b[c], w1, load(x[c].add(j + W)));
                        }
                        j += 2 * W;
                    }
                    if j + W <= tpp {
                        let w0 = load(w.add(j));
                        for c in 0..N {
                            a[c] = fma(a[c], w0, load(x[c].add(j)));
                        }
                        j += W;
                    }
                    if j < tpp {
                        let w0 = partial(w.add(j), tpp - j);
                        for c in 0..N {
                            b[c] = fma(b[c], w0, partial(x[c].add(j), tpp - j));
                        }
                    }
                    let mut r = [0.0; N];
                    for c in 0..N {
                        r[c] = hsum(add(a[c], b[c]));
                    }
                    r
                }
            }

            /// # Safety
            /// The CPU supports `$feat`; `b` was checked by `Block::new`;
            /// `out.len() >= b.channels * b.frames`.
            #[target_feature(enable = $feat)]
            unsafe fn block_impl(b: &$crate::kernel::Block<'_, $t>, out: &mut [$t]) {
                let tpp = b.tpp;
                let frames = b.frames;
                let stride = b.channel_stride;
                let dq = (b.down / b.up) as usize;
                let dr = b.down % b.up;
                let w = b.coeffs.as_ptr();
                let h = b.history.as_ptr();
                let mut c = 0;
                while c < b.channels {
                    let pair = c + 1 < b.channels;
                    let (mut p, mut i) = (b.phase, b.start);
                    for k in 0..frames {
                        let row = p as usize * tpp;
                        // Safety: `row + tpp <= coeffs.len()` because `p < up` and the table
                        // holds `up` rows; channel `c` (and `c + 1`)'s window `i..i + tpp` lies
                        // within its `stride` samples of `history` (both checked by
                        // `Block::new`); `out` indices are below `channels * frames`.
                        unsafe {
                            let x0 = h.add(c * stride + i);
                            if pair {
                                let [v0, v1] = output::<2>(w.add(row), [x0, x0.add(stride)], tpp);
                                *out.get_unchecked_mut(c * frames + k) = v0;
                                *out.get_unchecked_mut((c + 1) * frames + k) = v1;
                            } else {
                                let [v0] = output::<1>(w.add(row), [x0], tpp);
                                *out.get_unchecked_mut(c * frames + k) = v0;
                            }
                        }
                        p += dr;
                        i += dq;
                        if p >= b.up {
                            p -= b.up;
                            i += 1;
                        }
                    }
                    c += if pair { 2 } else { 1 };
                }
            }
        }
    };
}

pub(crate) use simd_kernels;
