//! The any-ratio engine's kernel for runs of outputs ([`GlideRun`], [`super::KernelFns::glide_run`]):
//! each output's taps are interpolated once from a table stored as polynomial coefficients
//! in the position between two phases (linear: the phase and the difference to the next;
//! cubic: the Lagrange cubic through four phases in Horner form, the polynomial structure of
//! C. W. Farrow, "A continuously variable digital delay element", Proc. IEEE ISCAS 1988),
//! then shared by every channel. Per tap that is `order + channels` multiply-adds, where
//! weighting the dot products of `order + 1` table rows costs `(order + 1) channels`.
//!
//! Table layout ([`glide_chunk`], [`glide_block_len`]): one block per phase interval; inside
//! a block the taps go in chunks of 64 bytes, and each chunk holds its `order + 1`
//! coefficient vectors one after another (`c0` first), so one output reads one contiguous
//! stream. Columns are padded with zeros to whole chunks.
//!
//! Every output is computed by the same sequence of operations whatever run it belongs to,
//! so the engine's output does not depend on how its input is chunked.

use num_traits::Float;

/// Elements of `T` in one chunk of the coefficient layout (64 bytes).
pub const fn glide_chunk<T>() -> usize {
    64 / core::mem::size_of::<T>()
}

/// Length in elements of one phase interval's block: `order + 1` coefficient rows of `cols`
/// taps padded to whole chunks.
pub const fn glide_block_len<T>(cols: usize, order: usize) -> usize {
    let chunk = glide_chunk::<T>();
    cols.div_ceil(chunk) * chunk * (order + 1)
}

/// Consecutive outputs of the any-ratio engine, all read from one table in coefficient
/// layout (see the module documentation): output `k`'s block starts at `table[blocks[k]..]`,
/// its position between the block's two phases is `fracs[k]` (0 to 1), and channel `c`'s
/// inputs are `hist[starts[k] + c stride..][..cols]`.
#[derive(Debug, Clone, Copy)]
pub struct GlideRun<'a, T> {
    /// The table: blocks of [`glide_block_len`]`(cols, order)` values.
    pub table: &'a [T],
    /// Taps per output (inputs per channel).
    pub cols: usize,
    /// Polynomial order: 1 (linear) or 3 (cubic).
    pub order: usize,
    /// The inputs, channel after channel.
    pub hist: &'a [T],
    /// Distance between two channels' inputs in `hist`.
    pub stride: usize,
    /// Channels.
    pub channels: usize,
    /// Per output: where its block starts in `table`.
    pub blocks: &'a [usize],
    /// Per output: where its first input (channel 0) is in `hist`.
    pub starts: &'a [usize],
    /// Per output: its position between the two phases of its block.
    pub fracs: &'a [T],
}

impl<T> GlideRun<'_, T> {
    /// Whether every read the run implies is inside its slices and `out` holds
    /// `outputs channels` values (see [`super::KernelFns::glide_run`]).
    pub(crate) fn fits(&self, out_len: usize) -> bool {
        let n = self.blocks.len();
        let block = glide_block_len::<T>(self.cols, self.order);
        (self.order == 1 || self.order == 3)
            && self.channels >= 1
            && self.cols >= 1
            && self.starts.len() == n
            && self.fracs.len() == n
            && out_len >= n * self.channels
            // The largest start of each kind decides (a maximum the compiler vectorizes,
            // where a check per output with early exit is a loop of branches).
            && (n == 0
                || (max_of(self.blocks)
                    .checked_add(block)
                    .is_some_and(|e| e <= self.table.len())
                    && (self.channels - 1)
                        .checked_mul(self.stride)
                        .and_then(|r| r.checked_add(self.cols))
                        .and_then(|r| r.checked_add(max_of(self.starts)))
                        .is_some_and(|e| e <= self.hist.len())))
    }
}

/// The largest value of `v` (0 if empty).
#[inline]
fn max_of(v: &[usize]) -> usize {
    v.iter().fold(0, |m, &x| m.max(x))
}

/// The scalar reference: for output `k` the taps `t_j = (..(c_order f + c_(order-1)) f ..) f
/// + c_0` (Horner, in order), then for each channel `sum_j t_j x_j` accumulated left to
/// right; `out[k channels + c]`. Returns whether the run fit (nothing is written if not).
pub(crate) fn glide_run<T: Float>(g: &GlideRun<'_, T>, out: &mut [T]) -> bool {
    if !g.fits(out.len()) {
        return false;
    }
    let chunk = glide_chunk::<T>();
    let rows = g.order + 1;
    for (k, o) in out
        .chunks_exact_mut(g.channels)
        .take(g.blocks.len())
        .enumerate()
    {
        let block = &g.table[g.blocks[k]..];
        let f = g.fracs[k];
        for (c, y) in o.iter_mut().enumerate() {
            let x = &g.hist[g.starts[k] + c * g.stride..][..g.cols];
            let mut acc = T::zero();
            for (j, &v) in x.iter().enumerate() {
                let at = (j / chunk) * rows * chunk + j % chunk;
                let mut t = block[at + g.order * chunk];
                for r in (0..g.order).rev() {
                    t = t * f + block[at + r * chunk];
                }
                acc = acc + t * v;
            }
            *y = acc;
        }
    }
    true
}

/// Rows `y_(p-1), y_p, y_(p+1), y_(p+2)` of a table (phases `p - 1 .. p + 2`) as the
/// coefficients `c_0 .. c_3` of the cubic Lagrange polynomial through them in the position
/// `f` between phases `p` and `p + 1` (nodes -1, 0, 1, 2): `t(f) = c_0 + c_1 f + c_2 f^2 +
/// c_3 f^3` (the basis polynomials expanded; common practice, no source).
pub(crate) fn cubic_coefficients(y: [f64; 4]) -> [f64; 4] {
    let [ym, y0, y1, y2] = y;
    [
        y0,
        -ym / 3.0 - y0 / 2.0 + y1 - y2 / 6.0,
        ym / 2.0 - y0 + y1 / 2.0,
        -ym / 6.0 + y0 / 2.0 - y1 / 2.0 + y2 / 6.0,
    ]
}

/// Generate the run kernel for one instruction set and sample type, as a module `$m` with
/// `glide_run`; `$v` is the sibling vector vocabulary module (see `simd.rs`), `$pf` a
/// prefetch hint function `fn(*const $t)`.
macro_rules! glide_kernels {
    ($feat:literal, $detect:path, $t:ty, $v:ident, $m:ident, $pf:path) => {
        /// The run kernel of the any-ratio engine for one sample type.
        pub(crate) mod $m {
            use super::$v;
            use $crate::kernel::glide::{glide_block_len, glide_chunk, GlideRun};

            /// See [`crate::kernel::KernelFns::glide_run`].
            pub(crate) fn glide_run(g: &GlideRun<'_, $t>, out: &mut [$t]) -> bool {
                if !$detect() {
                    return $crate::kernel::glide::glide_run(g, out);
                }
                if !g.fits(out.len()) {
                    return false;
                }
                let mut c = 0;
                while c < g.channels {
                    let left = g.channels - c;
                    // Safety: the CPU features were detected and the run's reads and
                    // writes checked (`fits`) just above; channels `c..c + C` exist.
                    unsafe {
                        c += match (g.order, left) {
                            (1, 1) => run_impl::<1, 1>(g, c, out),
                            (1, 2) => run_impl::<1, 2>(g, c, out),
                            (1, 3) => run_impl::<1, 3>(g, c, out),
                            (1, _) => run_impl::<1, 4>(g, c, out),
                            (_, 1) => run_impl::<3, 1>(g, c, out),
                            (_, 2) => run_impl::<3, 2>(g, c, out),
                            (_, 3) => run_impl::<3, 3>(g, c, out),
                            _ => run_impl::<3, 4>(g, c, out),
                        };
                    }
                }
                true
            }

            /// Channels `c0..c0 + C` of every output of the run, polynomial order `O`. Up to
            /// two channels, the outputs go in pairs (two outputs' work interleaved, and the
            /// coefficient rows loaded once when both read the same block, as sorted runs
            /// often do), with one channel and 512-bit vectors four at a time when all four
            /// read one block; else one at a time; every output is computed by the same
            /// operations either way ([`group`]). Returns `C`.
            ///
            /// # Safety
            /// The CPU supports `$feat`; `g.fits(out.len())`; `g.order == O`;
            /// `c0 + C <= g.channels`.
            #[target_feature(enable = $feat)]
            unsafe fn run_impl<const O: usize, const C: usize>(
                g: &GlideRun<'_, $t>,
                c0: usize,
                out: &mut [$t],
            ) -> usize {
                let outputs = g.blocks.len();
                let o = out.as_mut_ptr();
                let mut k = 0;
                // Safety: the caller's guarantees, and `k + N <= outputs` for each group.
                unsafe {
                    while k < outputs {
                        // Four outputs of one block together for one channel, where the
                        // registers hold them (512-bit vectors: 32 registers).
                        if C == 1
                            && $v::W * core::mem::size_of::<$t>() == 64
                            && k + 3 < outputs
                            && g.blocks[k] == g.blocks[k + 3]
                            && g.blocks[k] == g.blocks[k + 1]
                            && g.blocks[k] == g.blocks[k + 2]
                        {
                            group::<O, C, 4, true>(g, c0, o, k);
                            k += 4;
                        } else if C <= 2 && k + 1 < outputs {
                            if g.blocks[k] == g.blocks[k + 1] {
                                group::<O, C, 2, true>(g, c0, o, k);
                            } else {
                                group::<O, C, 2, false>(g, c0, o, k);
                            }
                            k += 2;
                        } else {
                            group::<O, C, 1, false>(g, c0, o, k);
                            k += 1;
                        }
                    }
                }
                C
            }

            /// Outputs `k..k + N` of the run, channels `c0..c0 + C`, polynomial order `O`:
            /// per vector of taps the Horner steps, then one multiply-add per channel into
            /// two accumulators (even and odd vectors), added and summed at the end. `SH`:
            /// the outputs read the same block, whose rows are then loaded once. The block
            /// after the group is prefetched while it is computed.
            ///
            /// # Safety
            /// The CPU supports `$feat`; `g.fits(len)` for the `len` values at `o`;
            /// `g.order == O`; `c0 + C <= g.channels`; `k + N <= g.blocks.len()`; with `SH`,
            /// the `N` outputs' blocks are equal.
            #[target_feature(enable = $feat)]
            #[inline]
            // One vector per chunk for 512-bit vectors: `v % S` is then always 0.
            #[allow(clippy::modulo_one)]
            unsafe fn group<const O: usize, const C: usize, const N: usize, const SH: bool>(
                g: &GlideRun<'_, $t>,
                c0: usize,
                o: *mut $t,
                k: usize,
            ) {
                use $v::*;
                const CH: usize = glide_chunk::<$t>();
                // Vectors per chunk.
                const S: usize = CH / $v::W;
                let n = g.cols;
                let (full, tail) = (n / W, n % W);
                let block = glide_block_len::<$t>(n, O);
                let table = g.table.as_ptr();
                let hist = g.hist.as_ptr();
                // Safety: every block read is inside `table` and every input read inside
                // `hist` (`fits`: the block's length from its start, `cols` inputs from
                // each channel's start), the last partial vector of inputs masked; the
                // output index `(k + i) channels + c0 + c` is below `outputs channels`.
                // The prefetches are hints that cannot fault, at addresses inside the
                // table.
                unsafe {
                    if k + N < g.blocks.len() {
                        let next = table.add(g.blocks[k + N]);
                        let mut l = 0;
                        while l < block.min(8 * CH) {
                            $pf(next.add(l));
                            l += CH;
                        }
                    }
                    let blk: [*const $t; N] = core::array::from_fn(|i| table.add(g.blocks[k + i]));
                    let f: [V; N] = core::array::from_fn(|i| splat(g.fracs.as_ptr().add(k + i)));
                    let x: [[*const $t; C]; N] = core::array::from_fn(|i| {
                        core::array::from_fn(|c| hist.add(g.starts[k + i] + (c0 + c) * g.stride))
                    });
                    let mut a = [[zero(); C]; N];
                    let mut b = [[zero(); C]; N];
                    // Vector `v` of taps: chunk `v / S`, sub-vector `v % S`.
                    let at = |i: usize, v: usize| blk[i].add((v / S) * (O + 1) * CH + (v % S) * W);
                    // Horner's rule from the top row down, the same steps for loaded or
                    // shared rows.
                    let horner = |rows: &[V; 4], f: V| {
                        let mut t = rows[O];
                        let mut r = O;
                        while r > 0 {
                            r -= 1;
                            t = fma(rows[r], t, f);
                        }
                        t
                    };
                    let rows_at = |p: *const $t| -> [V; 4] {
                        core::array::from_fn(|r| if r <= O { load(p.add(r * CH)) } else { zero() })
                    };
                    let taps = |v: usize| -> [V; N] {
                        if SH {
                            let rows = rows_at(at(0, v));
                            core::array::from_fn(|i| horner(&rows, f[i]))
                        } else {
                            core::array::from_fn(|i| horner(&rows_at(at(i, v)), f[i]))
                        }
                    };
                    let mut v = 0;
                    while v + 2 <= full {
                        let t0 = taps(v);
                        let t1 = taps(v + 1);
                        for i in 0..N {
                            for c in 0..C {
                                a[i][c] = fma(a[i][c], t0[i], load(x[i][c].add(v * W)));
                                b[i][c] = fma(b[i][c], t1[i], load(x[i][c].add(v * W + W)));
                            }
                        }
                        v += 2;
                    }
                    if v < full {
                        let t0 = taps(v);
                        for i in 0..N {
                            for c in 0..C {
                                a[i][c] = fma(a[i][c], t0[i], load(x[i][c].add(v * W)));
                            }
                        }
                        v += 1;
                    }
                    if tail > 0 {
                        // The padded taps past `cols` are zero; the inputs are masked.
                        let t = taps(v);
                        for i in 0..N {
                            for c in 0..C {
                                let xv = partial(x[i][c].add(v * W), tail);
                                if v % 2 == 0 {
                                    a[i][c] = fma(a[i][c], t[i], xv);
                                } else {
                                    b[i][c] = fma(b[i][c], t[i], xv);
                                }
                            }
                        }
                    }
                    for i in 0..N {
                        for c in 0..C {
                            *o.add((k + i) * g.channels + c0 + c) = hsum(add(a[i][c], b[i][c]));
                        }
                    }
                }
            }
        }
    };
}

pub(crate) use glide_kernels;

/// A prefetch hint into the first-level cache (x86_64: `prefetcht0`).
#[cfg(target_arch = "x86_64")]
#[inline(always)]
pub(crate) fn prefetch<T>(p: *const T) {
    use core::arch::x86_64::{_mm_prefetch, _MM_HINT_T0};
    // Safety: a prefetch is a hint; it never faults, whatever the address (SSE, part of
    // the x86_64 baseline).
    unsafe { _mm_prefetch::<_MM_HINT_T0>(p.cast::<i8>()) }
}

/// No prefetch hint on other architectures (the hardware's own prefetcher serves).
#[cfg(not(target_arch = "x86_64"))]
#[inline(always)]
pub(crate) fn prefetch<T>(_p: *const T) {}
