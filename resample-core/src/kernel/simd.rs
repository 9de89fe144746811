//! The body shared by every SIMD kernel, written once as a macro over a small vector
//! vocabulary (`zero`, `load`, `partial`, `fma`, `add`, `hsum`, lane count `W`) that each
//! instruction-set module supplies per sample type.
//!
//! Accumulation order, fixed for every output whatever its block: two accumulators per
//! channel, `a` taking even vectors and `b` odd ones in steps of `2 W` taps, then one
//! whole vector into `a` if `W` taps remain, then a zero-filled partial vector into `b`;
//! finally `hsum(a + b)`. Channels are taken in pairs so each loaded vector of taps serves
//! two channels, and outputs in pairs so the core has independent chains to overlap; pairs
//! and singles run the same operations per output and channel.

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

            /// `K` outputs of `N` channels each: output `o` uses the row at `w[o]` and the
            /// channel windows at `x[o][c]`. Several outputs in one loop give the core
            /// independent chains to overlap; each output's arithmetic is the same whatever `K`
            /// and `N`.
            ///
            /// # Safety
            /// The CPU supports `$feat`; every `w[o]` and `x[o][c]` is valid for `tpp` reads.
            #[target_feature(enable = $feat)]
            #[inline]
            unsafe fn outputs<const K: usize, const N: usize>(
                w: [*const $t; K],
                x: [[*const $t; N]; K],
                tpp: usize,
            ) -> [[$t; N]; K] {
                use $v::*;
                // Safety: every read is below `tpp` (the caller's guarantee); features as above.
                unsafe {
                    let mut a = [[zero(); N]; K];
                    let mut b = [[zero(); N]; K];
                    let mut j = 0;
                    while j + 2 * W <= tpp {
                        for o in 0..K {
                            let w0 = load(w[o].add(j));
                            let w1 = load(w[o].add(j + W));
                            for c in 0..N {
                                a[o][c] = fma(a[o][c], w0, load(x[o][c].add(j)));
                                b[o][c] = fma(b[o][c], w1, load(x[o][c].add(j + W)));
                            }
                        }
                        j += 2 * W;
                    }
                    if j + W <= tpp {
                        for o in 0..K {
                            let w0 = load(w[o].add(j));
                            for c in 0..N {
                                a[o][c] = fma(a[o][c], w0, load(x[o][c].add(j)));
                            }
                        }
                        j += W;
                    }
                    if j < tpp {
                        for o in 0..K {
                            let w0 = partial(w[o].add(j), tpp - j);
                            for c in 0..N {
                                b[o][c] = fma(b[o][c], w0, partial(x[o][c].add(j), tpp - j));
                            }
                        }
                    }
                    let mut r = [[0.0; N]; K];
                    for o in 0..K {
                        for c in 0..N {
                            r[o][c] = hsum(add(a[o][c], b[o][c]));
                        }
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
                let o = out.as_mut_ptr();
                let mut c = 0;
                while c < b.channels {
                    let pair = c + 1 < b.channels;
                    let (mut p, mut i) = (b.phase, b.start);
                    let mut k = 0;
                    while k < frames {
                        let two = k + 1 < frames;
                        let (r0, i0) = (p as usize * tpp, i);
                        p += dr;
                        i += dq;
                        if p >= b.up {
                            p -= b.up;
                            i += 1;
                        }
                        let (r1, i1) = (p as usize * tpp, i);
                        if two {
                            p += dr;
                            i += dq;
                            if p >= b.up {
                                p -= b.up;
                                i += 1;
                            }
                        }
                        // Safety: rows `r0`, `r1` (the phases of outputs `k`, `k + 1`, below
                        // `up`) lie inside `coeffs`, and channel `c` (and `c + 1`)'s windows at
                        // `i0`, `i1` lie within its `stride` samples of `history` (both checked
                        // by `Block::new`; `r1`, `i1` are used only if output `k + 1` exists);
                        // the `out` indices are below `channels * frames`.
                        unsafe {
                            let x0 = h.add(c * stride + i0);
                            let x1 = h.add(c * stride + i1);
                            let (w0, w1) = (w.add(r0), w.add(r1));
                            let y0 = o.add(c * frames + k);
                            match (pair, two) {
                                (true, true) => {
                                    let [[v00, v01], [v10, v11]] = outputs::<2, 2>(
                                        [w0, w1],
                                        [[x0, x0.add(stride)], [x1, x1.add(stride)]],
                                        tpp,
                                    );
                                    *y0 = v00;
                                    *y0.add(frames) = v01;
                                    *y0.add(1) = v10;
                                    *y0.add(frames + 1) = v11;
                                }
                                (true, false) => {
                                    let [[v00, v01]] =
                                        outputs::<1, 2>([w0], [[x0, x0.add(stride)]], tpp);
                                    *y0 = v00;
                                    *y0.add(frames) = v01;
                                }
                                (false, true) => {
                                    let [[v00], [v10]] =
                                        outputs::<2, 1>([w0, w1], [[x0], [x1]], tpp);
                                    *y0 = v00;
                                    *y0.add(1) = v10;
                                }
                                (false, false) => {
                                    let [[v00]] = outputs::<1, 1>([w0], [[x0]], tpp);
                                    *y0 = v00;
                                }
                            }
                        }
                        k += if two { 2 } else { 1 };
                    }
                    c += if pair { 2 } else { 1 };
                }
            }
        }
    };
}

pub(crate) use simd_kernels;
