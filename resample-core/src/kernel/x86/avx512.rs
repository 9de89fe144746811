//! x86_64 AVX-512F kernels: 512-bit vectors (16 `f32` or 8 `f64` lanes), fused
//! multiply-add, masked loads for a row's last partial vector.

use crate::kernel::simd::simd_kernels;

/// Vector vocabulary for `f32`.
mod v32 {
    use core::arch::x86_64::*;

    pub(crate) type V = __m512;
    pub(crate) const W: usize = 16;
    /// Inputs taken together per kernel call (each with two accumulators in registers).
    pub(crate) const JOBS: usize = 8;

    #[target_feature(enable = "avx512f,avx2,fma")]
    #[inline]
    pub(crate) fn zero() -> V {
        _mm512_setzero_ps()
    }

    /// # Safety
    /// `p` valid for 16 reads; AVX-512F present.
    #[target_feature(enable = "avx512f,avx2,fma")]
    #[inline]
    pub(crate) unsafe fn load(p: *const f32) -> V {
        // Safety: the caller's guarantee.
        unsafe { _mm512_loadu_ps(p) }
    }

    /// # Safety
    /// `p` valid for `n < 16` reads; AVX-512F present.
    #[target_feature(enable = "avx512f,avx2,fma")]
    #[inline]
    pub(crate) unsafe fn partial(p: *const f32, n: usize) -> V {
        let mask = ((1u32 << n) - 1) as __mmask16;
        // Safety: masked-off lanes are not read (and cannot fault); the first `n` are valid.
        unsafe { _mm512_maskz_loadu_ps(mask, p) }
    }

    /// # Safety
    /// `p` valid for one read; AVX-512F present.
    #[target_feature(enable = "avx512f,avx2,fma")]
    #[inline]
    pub(crate) unsafe fn splat(p: *const f32) -> V {
        // Safety: the caller's guarantee.
        unsafe { _mm512_set1_ps(*p) }
    }

    /// # Safety
    /// `p` valid for 16 writes; AVX-512F present.
    #[target_feature(enable = "avx512f,avx2,fma")]
    #[inline]
    pub(crate) unsafe fn store(p: *mut f32, v: V) {
        // Safety: the caller's guarantee.
        unsafe { _mm512_storeu_ps(p, v) }
    }

    #[target_feature(enable = "avx512f,avx2,fma")]
    #[inline]
    pub(crate) fn fma(acc: V, w: V, x: V) -> V {
        _mm512_fmadd_ps(w, x, acc)
    }

    #[target_feature(enable = "avx512f,avx2,fma")]
    #[inline]
    pub(crate) fn add(a: V, b: V) -> V {
        _mm512_add_ps(a, b)
    }

    #[target_feature(enable = "avx512f,avx2,fma")]
    #[inline]
    pub(crate) fn hsum(v: V) -> f32 {
        let lo = _mm512_castps512_ps256(v);
        let hi = _mm256_castpd_ps(_mm512_extractf64x4_pd(_mm512_castps_pd(v), 1));
        super::super::avx2::hsum256_ps(_mm256_add_ps(lo, hi))
    }
}

/// Vector vocabulary for `f64`.
mod v64 {
    use core::arch::x86_64::*;

    pub(crate) type V = __m512d;
    pub(crate) const W: usize = 8;
    /// Inputs taken together per kernel call (each with two accumulators in registers).
    pub(crate) const JOBS: usize = 8;

    #[target_feature(enable = "avx512f,avx2,fma")]
    #[inline]
    pub(crate) fn zero() -> V {
        _mm512_setzero_pd()
    }

    /// # Safety
    /// `p` valid for 8 reads; AVX-512F present.
    #[target_feature(enable = "avx512f,avx2,fma")]
    #[inline]
    pub(crate) unsafe fn load(p: *const f64) -> V {
        // Safety: the caller's guarantee.
        unsafe { _mm512_loadu_pd(p) }
    }

    /// # Safety
    /// `p` valid for `n < 8` reads; AVX-512F present.
    #[target_feature(enable = "avx512f,avx2,fma")]
    #[inline]
    pub(crate) unsafe fn partial(p: *const f64, n: usize) -> V {
        let mask = ((1u32 << n) - 1) as __mmask8;
        // Safety: masked-off lanes are not read (and cannot fault); the first `n` are valid.
        unsafe { _mm512_maskz_loadu_pd(mask, p) }
    }

    /// # Safety
    /// `p` valid for one read; AVX-512F present.
    #[target_feature(enable = "avx512f,avx2,fma")]
    #[inline]
    pub(crate) unsafe fn splat(p: *const f64) -> V {
        // Safety: the caller's guarantee.
        unsafe { _mm512_set1_pd(*p) }
    }

    /// # Safety
    /// `p` valid for 8 writes; AVX-512F present.
    #[target_feature(enable = "avx512f,avx2,fma")]
    #[inline]
    pub(crate) unsafe fn store(p: *mut f64, v: V) {
        // Safety: the caller's guarantee.
        unsafe { _mm512_storeu_pd(p, v) }
    }

    #[target_feature(enable = "avx512f,avx2,fma")]
    #[inline]
    pub(crate) fn fma(acc: V, w: V, x: V) -> V {
        _mm512_fmadd_pd(w, x, acc)
    }

    #[target_feature(enable = "avx512f,avx2,fma")]
    #[inline]
    pub(crate) fn add(a: V, b: V) -> V {
        _mm512_add_pd(a, b)
    }

    #[target_feature(enable = "avx512f,avx2,fma")]
    #[inline]
    pub(crate) fn hsum(v: V) -> f64 {
        let lo = _mm512_castpd512_pd256(v);
        let hi = _mm512_extractf64x4_pd(v, 1);
        super::super::avx2::hsum256_pd(_mm256_add_pd(lo, hi))
    }
}

simd_kernels!(
    "avx512f,avx2,fma",
    crate::kernel::avx512_detected,
    f32,
    v32,
    k32
);
simd_kernels!(
    "avx512f,avx2,fma",
    crate::kernel::avx512_detected,
    f64,
    v64,
    k64
);

pub(crate) use k32::{dot as dot_f32, span as groups_f32};
pub(crate) use k64::{dot as dot_f64, span as groups_f64};

// The any-ratio engine's run kernel (`kernel/glide.rs`).
crate::kernel::glide::glide_kernels!(
    "avx512f,avx2,fma",
    crate::kernel::avx512_detected,
    f32,
    v32,
    g32,
    crate::kernel::glide::prefetch
);
crate::kernel::glide::glide_kernels!(
    "avx512f,avx2,fma",
    crate::kernel::avx512_detected,
    f64,
    v64,
    g64,
    crate::kernel::glide::prefetch
);
pub(crate) use g32::glide_run as glide_run_f32;
pub(crate) use g64::glide_run as glide_run_f64;
