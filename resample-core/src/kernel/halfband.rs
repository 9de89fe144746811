//! The half-band kernel: the outputs of a half-band stage from planes of its input.
//!
//! A half-band prototype has zero taps at even distances from its centre, so an output is
//! the centre tap times one sample plus, for each pair of nonzero taps `g_t` at distances
//! `+-(2t + 1)`, `g_t` times the sum of the two samples they meet. The stage keeps its
//! input as planes (the even and the odd samples of a 2:1 stage, the input itself for 1:2),
//! so the samples the pairs meet are contiguous in one plane:
//!
//! `out[j] = centre mid[j] + sum_t g_t (odd[j + K + t] + odd[j + K - 1 - t])`, `t < K`,
//!
//! with `mid` absent (no centre term) for the odd outputs of a 1:2 stage. Taking the two
//! samples' sum before multiplying halves the multiplies of a direct-form sum (the
//! symmetric FIR structure; common practice, no source).
//!
//! Every output is computed by the same operations in the same order whatever block it is
//! in: the SIMD kernels (AVX2 + FMA, AVX-512F) with one vector lane per output and a fused
//! multiply-add per pair, their tail one output at a time with the same fused
//! multiply-adds; the scalar reference with separate multiplies and adds (so it agrees with
//! them to rounding, not bit for bit).

use super::{avx2_fma_detected, avx512_detected, Kernel};

/// One call of the half-band kernel: see the module documentation.
#[derive(Debug, Clone, Copy)]
pub struct HalfBandJob<'a, T> {
    /// The centre tap (with the stage's gain).
    pub centre: T,
    /// The samples the centre tap meets, one per output; `None`: no centre term.
    pub mid: Option<&'a [T]>,
    /// The nonzero taps on one side, nearest the centre first (with the stage's gain).
    pub g: &'a [T],
    /// The samples the pairs meet: at least `outputs + 2 K - 1`.
    pub odd: &'a [T],
}

/// A half-band kernel for one sample type. Called only through [`run`], which checks the
/// sizes.
pub type HalfBandFn<T> = fn(&HalfBandJob<'_, T>, &mut [T]);

mod sealed {
    /// The half-band kernels of a sample type; cannot be named outside the crate.
    pub trait HalfBandKernels: Sized {
        /// The half-band function of a kernel for this type (the scalar reference when the
        /// kernel has none or cannot run here).
        fn halfband_fn(kernel: super::Kernel) -> super::HalfBandFn<Self>;
    }
}
pub(crate) use sealed::HalfBandKernels;

/// Compute `out` (every element) by `f`. Returns false, computing nothing, when the job
/// is short of samples for `out.len()` outputs or has no taps.
pub(crate) fn run<T>(f: HalfBandFn<T>, job: &HalfBandJob<'_, T>, out: &mut [T]) -> bool {
    let n = out.len();
    let k = job.g.len();
    if k == 0 || job.odd.len() < n + 2 * k - 1 || job.mid.is_some_and(|m| m.len() < n) {
        return false;
    }
    f(job, out);
    true
}

/// The scalar reference: separate multiplies and adds, pairs in order of `t`, sixteen
/// outputs at a time (each output by the same operations as one on its own).
pub(crate) fn scalar<T: num_traits::Float>(job: &HalfBandJob<'_, T>, out: &mut [T]) {
    const B: usize = 16;
    let g = job.g;
    let k = g.len();
    let odd = job.odd;
    let n = out.len();
    let start = |j: usize| job.mid.map_or(T::zero(), |m| job.centre * m[j]);
    let whole = n - n % B;
    for j0 in (0..whole).step_by(B) {
        let mut a = [T::zero(); B];
        for (l, v) in a.iter_mut().enumerate() {
            *v = start(j0 + l);
        }
        for (t, &gt) in g.iter().enumerate() {
            let hi = &odd[j0 + k + t..j0 + k + t + B];
            let lo = &odd[j0 + k - 1 - t..j0 + k - 1 - t + B];
            for l in 0..B {
                a[l] = a[l] + gt * (hi[l] + lo[l]);
            }
        }
        out[j0..j0 + B].copy_from_slice(&a);
    }
    for (j, o) in out.iter_mut().enumerate().skip(whole) {
        let mut a = start(j);
        for (t, &gt) in g.iter().enumerate() {
            a = a + gt * (odd[j + k + t] + odd[j + k - 1 - t]);
        }
        *o = a;
    }
}

/// One SIMD half-band kernel: `$name` for sample type `$t` with vectors `$v` of `$w`
/// lanes, target features `$feat`, run-time check `$detect`, and the intrinsics for an
/// unaligned load, a broadcast, an add, a multiply, a fused multiply-add (`a b + c`) and
/// an unaligned store.
#[cfg(target_arch = "x86_64")]
macro_rules! halfband_simd {
    ($name:ident, $imp:ident, $feat:literal, $detect:path, $t:ty, $v:ty, $w:expr,
     $load:ident, $set1:ident, $add:ident, $mul:ident, $fmadd:ident, $store:ident, $zero:ident) => {
        /// The SIMD half-band kernel (sizes checked by [`run`]); the scalar reference if
        /// the CPU lacks the features.
        pub(crate) fn $name(job: &HalfBandJob<'_, $t>, out: &mut [$t]) {
            if !$detect() {
                return scalar(job, out);
            }
            let n = out.len();
            let mid = job.mid.map_or(core::ptr::null(), <[$t]>::as_ptr);
            // Safety: the features were detected just above; `run` checked that `odd` holds
            // `n + 2 K - 1` samples and `mid` (when present) `n`, and `out` has `n` places.
            unsafe {
                $imp(
                    job.centre,
                    mid,
                    job.g,
                    job.odd.as_ptr(),
                    out.as_mut_ptr(),
                    n,
                )
            }
        }

        /// # Safety
        /// The CPU has `$feat`; `odd` is valid for `n + 2 g.len() - 1` reads, `mid` null or
        /// valid for `n` reads, `out` for `n` writes.
        #[target_feature(enable = $feat)]
        unsafe fn $imp(
            centre: $t,
            mid: *const $t,
            g: &[$t],
            odd: *const $t,
            out: *mut $t,
            n: usize,
        ) {
            use core::arch::x86_64::*;
            const W: usize = $w;
            const U: usize = 4;
            let k = g.len();
            let c = $set1(centre);
            let mut j = 0;
            // Four vectors of outputs at a time: each pair's tap is broadcast once for them.
            while j + U * W <= n {
                let mut a: [$v; U] = [$zero(); U];
                if !mid.is_null() {
                    for (u, v) in a.iter_mut().enumerate() {
                        // Safety: j + (u + 1) W <= n, and `mid` holds `n`.
                        *v = $mul(c, unsafe { $load(mid.add(j + u * W)) });
                    }
                }
                for (t, &gt) in g.iter().enumerate() {
                    let w = $set1(gt);
                    for (u, v) in a.iter_mut().enumerate() {
                        let at = j + u * W;
                        // Safety: the highest read is at + k + t + W - 1 <= n + 2k - 2.
                        let s = unsafe {
                            $add($load(odd.add(at + k + t)), $load(odd.add(at + k - 1 - t)))
                        };
                        *v = $fmadd(w, s, *v);
                    }
                }
                for (u, v) in a.iter().enumerate() {
                    // Safety: j + (u + 1) W <= n writes.
                    unsafe { $store(out.add(j + u * W), *v) };
                }
                j += U * W;
            }
            while j + W <= n {
                let mut a = $zero();
                if !mid.is_null() {
                    // Safety: j + W <= n.
                    a = $mul(c, unsafe { $load(mid.add(j)) });
                }
                for (t, &gt) in g.iter().enumerate() {
                    let (hi, lo) = (j + k + t, j + k - 1 - t);
                    // Safety: the highest read is j + k + t + W - 1 <= n + 2k - 2.
                    let s = unsafe { $add($load(odd.add(hi)), $load(odd.add(lo))) };
                    a = $fmadd($set1(gt), s, a);
                }
                // Safety: j + W <= n.
                unsafe { $store(out.add(j), a) };
                j += W;
            }
            // The tail, one output at a time with the same operations as a lane.
            while j < n {
                let mut a: $t = 0.0;
                if !mid.is_null() {
                    // Safety: j < n.
                    a = centre * unsafe { *mid.add(j) };
                }
                for (t, &gt) in g.iter().enumerate() {
                    // Safety: j + k + t <= n + 2k - 2.
                    let s = unsafe { *odd.add(j + k + t) + *odd.add(j + k - 1 - t) };
                    a = gt.mul_add(s, a);
                }
                // Safety: j < n.
                unsafe { *out.add(j) = a };
                j += 1;
            }
        }
    };
}

#[cfg(target_arch = "x86_64")]
halfband_simd!(
    avx2_f32,
    avx2_f32_impl,
    "avx2,fma",
    avx2_fma_detected,
    f32,
    __m256,
    8,
    _mm256_loadu_ps,
    _mm256_set1_ps,
    _mm256_add_ps,
    _mm256_mul_ps,
    _mm256_fmadd_ps,
    _mm256_storeu_ps,
    _mm256_setzero_ps
);
#[cfg(target_arch = "x86_64")]
halfband_simd!(
    avx2_f64,
    avx2_f64_impl,
    "avx2,fma",
    avx2_fma_detected,
    f64,
    __m256d,
    4,
    _mm256_loadu_pd,
    _mm256_set1_pd,
    _mm256_add_pd,
    _mm256_mul_pd,
    _mm256_fmadd_pd,
    _mm256_storeu_pd,
    _mm256_setzero_pd
);
#[cfg(target_arch = "x86_64")]
halfband_simd!(
    avx512_f32,
    avx512_f32_impl,
    "avx512f,avx2,fma",
    avx512_detected,
    f32,
    __m512,
    16,
    _mm512_loadu_ps,
    _mm512_set1_ps,
    _mm512_add_ps,
    _mm512_mul_ps,
    _mm512_fmadd_ps,
    _mm512_storeu_ps,
    _mm512_setzero_ps
);
#[cfg(target_arch = "x86_64")]
halfband_simd!(
    avx512_f64,
    avx512_f64_impl,
    "avx512f,avx2,fma",
    avx512_detected,
    f64,
    __m512d,
    8,
    _mm512_loadu_pd,
    _mm512_set1_pd,
    _mm512_add_pd,
    _mm512_mul_pd,
    _mm512_fmadd_pd,
    _mm512_storeu_pd,
    _mm512_setzero_pd
);

macro_rules! halfband_for {
    ($t:ty, $avx2:ident, $avx512:ident) => {
        impl HalfBandKernels for $t {
            fn halfband_fn(kernel: Kernel) -> HalfBandFn<Self> {
                match kernel {
                    #[cfg(target_arch = "x86_64")]
                    Kernel::Avx2Fma if kernel.is_available() => $avx2,
                    #[cfg(target_arch = "x86_64")]
                    Kernel::Avx512 if kernel.is_available() => $avx512,
                    _ => scalar::<$t>,
                }
            }
        }
    };
}

#[cfg(target_arch = "x86_64")]
halfband_for!(f32, avx2_f32, avx512_f32);
#[cfg(target_arch = "x86_64")]
halfband_for!(f64, avx2_f64, avx512_f64);

#[cfg(not(target_arch = "x86_64"))]
impl HalfBandKernels for f32 {
    fn halfband_fn(_: Kernel) -> HalfBandFn<Self> {
        scalar::<f32>
    }
}
#[cfg(not(target_arch = "x86_64"))]
impl HalfBandKernels for f64 {
    fn halfband_fn(_: Kernel) -> HalfBandFn<Self> {
        scalar::<f64>
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn noise(n: usize, seed: u64) -> Vec<f64> {
        let mut s = seed | 1;
        (0..n)
            .map(|_| {
                s ^= s << 13;
                s ^= s >> 7;
                s ^= s << 17;
                (s >> 11) as f64 / (1u64 << 53) as f64 - 0.5
            })
            .collect()
    }

    /// Every kernel this CPU runs against the scalar reference, for outputs counts around
    /// every vector boundary, with and without the centre term; and each output the same
    /// bits whatever block it is computed in (chunk invariance).
    fn agrees<T: crate::kernel::Sample>(tol: f64) {
        for kernel in Kernel::available() {
            let f = T::halfband_fn(kernel);
            for k in [1usize, 3, 8, 21] {
                let g: Vec<T> = noise(k, 3 + k as u64)
                    .iter()
                    .map(|&v| T::from_f64(v).unwrap())
                    .collect();
                for n in [0usize, 1, 7, 8, 15, 16, 31, 33, 64, 65, 100, 131] {
                    let odd: Vec<T> = noise(n + 2 * k - 1, 7)
                        .iter()
                        .map(|&v| T::from_f64(v).unwrap())
                        .collect();
                    let mid: Vec<T> = noise(n, 9)
                        .iter()
                        .map(|&v| T::from_f64(v).unwrap())
                        .collect();
                    for with_mid in [true, false] {
                        let job = HalfBandJob {
                            centre: T::from_f64(0.5).unwrap(),
                            mid: with_mid.then_some(&mid[..]),
                            g: &g,
                            odd: &odd,
                        };
                        let mut want = vec![T::zero(); n];
                        let mut got = vec![T::zero(); n];
                        assert!(run(scalar::<T>, &job, &mut want));
                        assert!(run(f, &job, &mut got));
                        for (a, b) in want.iter().zip(&got) {
                            let d = (a.to_f64().unwrap() - b.to_f64().unwrap()).abs();
                            assert!(d <= tol, "{kernel:?} k {k} n {n}: {d}");
                        }
                        // Outputs 3.. computed on their own give the same bits.
                        if n > 3 {
                            let sub = HalfBandJob {
                                mid: job.mid.map(|m| &m[3..]),
                                odd: &odd[3..],
                                ..job
                            };
                            let mut part = vec![T::zero(); n - 3];
                            assert!(run(f, &sub, &mut part));
                            assert!(part.iter().zip(&got[3..]).all(|(a, b)| a == b));
                        }
                    }
                }
            }
        }
    }

    #[test]
    fn kernels_agree_with_the_scalar_reference() {
        agrees::<f32>(1e-5);
        agrees::<f64>(1e-13);
    }

    #[test]
    fn short_jobs_are_refused() {
        let g = [1.0_f32; 4];
        let odd = [0.0_f32; 10];
        let mut out = [0.0_f32; 4];
        // 4 outputs need 4 + 7 = 11 samples.
        let job = HalfBandJob {
            centre: 1.0,
            mid: None,
            g: &g,
            odd: &odd,
        };
        assert!(!run(scalar::<f32>, &job, &mut out));
        assert!(run(scalar::<f32>, &job, &mut out[..3]));
    }
}
