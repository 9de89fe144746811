//! x86_64 AVX2 + FMA kernels: 256-bit vectors (8 `f32` or 4 `f64` lanes), fused
//! multiply-add, masked loads for a slice's last partial vector.

use core::arch::x86_64::*;

use crate::kernel::simd::simd_kernels;

/// Sum of the 8 lanes: halves, then pairs, then the last two.
#[target_feature(enable = "avx2,fma")]
#[inline]
pub(crate) fn hsum256_ps(v: __m256) -> f32 {
    let s = _mm_add_ps(_mm256_castps256_ps128(v), _mm256_extractf128_ps(v, 1));
    let s = _mm_add_ps(s, _mm_movehl_ps(s, s));
    let s = _mm_add_ss(s, _mm_shuffle_ps(s, s, 1));
    _mm_cvtss_f32(s)
}

/// Sum of the 4 lanes: halves, then the last two.
#[target_feature(enable = "avx2,fma")]
#[inline]
pub(crate) fn hsum256_pd(v: __m256d) -> f64 {
    let s = _mm_add_pd(_mm256_castpd256_pd128(v), _mm256_extractf128_pd(v, 1));
    let s = _mm_add_sd(s, _mm_unpackhi_pd(s, s));
    _mm_cvtsd_f64(s)
}

/// Vector vocabulary for `f32`.
mod v32 {
    use core::arch::x86_64::*;

    pub(crate) type V = __m256;
    pub(crate) const W: usize = 8;
    /// Inputs taken together per kernel call (each with two accumulators in registers).
    pub(crate) const JOBS: usize = 4;

    #[target_feature(enable = "avx2,fma")]
    #[inline]
    pub(crate) fn zero() -> V {
        _mm256_setzero_ps()
    }

    /// # Safety
    /// `p` valid for 8 reads; AVX2 present.
    #[target_feature(enable = "avx2,fma")]
    #[inline]
    pub(crate) unsafe fn load(p: *const f32) -> V {
        // Safety: the caller's guarantee.
        unsafe { _mm256_loadu_ps(p) }
    }

    /// # Safety
    /// `p` valid for `n < 8` reads; AVX2 present.
    #[target_feature(enable = "avx2,fma")]
    #[inline]
    pub(crate) unsafe fn partial(p: *const f32, n: usize) -> V {
        let lanes = _mm256_setr_epi32(0, 1, 2, 3, 4, 5, 6, 7);
        let mask = _mm256_cmpgt_epi32(_mm256_set1_epi32(n as i32), lanes);
        // Safety: lanes whose mask is clear are not read (and cannot fault); the first `n`
        // are valid.
        unsafe { _mm256_maskload_ps(p, mask) }
    }

    /// # Safety
    /// `p` valid for one read; AVX2 present.
    #[target_feature(enable = "avx2,fma")]
    #[inline]
    pub(crate) unsafe fn splat(p: *const f32) -> V {
        // Safety: the caller's guarantee.
        unsafe { _mm256_set1_ps(*p) }
    }

    /// # Safety
    /// `p` valid for 8 writes; AVX2 present.
    #[target_feature(enable = "avx2,fma")]
    #[inline]
    pub(crate) unsafe fn store(p: *mut f32, v: V) {
        // Safety: the caller's guarantee.
        unsafe { _mm256_storeu_ps(p, v) }
    }

    #[target_feature(enable = "avx2,fma")]
    #[inline]
    pub(crate) fn fma(acc: V, w: V, x: V) -> V {
        _mm256_fmadd_ps(w, x, acc)
    }

    #[target_feature(enable = "avx2,fma")]
    #[inline]
    pub(crate) fn add(a: V, b: V) -> V {
        _mm256_add_ps(a, b)
    }

    #[target_feature(enable = "avx2,fma")]
    #[inline]
    pub(crate) fn hsum(v: V) -> f32 {
        super::hsum256_ps(v)
    }
}

/// Vector vocabulary for `f64`.
mod v64 {
    use core::arch::x86_64::*;

    pub(crate) type V = __m256d;
    pub(crate) const W: usize = 4;
    /// Inputs taken together per kernel call (each with two accumulators in registers).
    pub(crate) const JOBS: usize = 4;

    #[target_feature(enable = "avx2,fma")]
    #[inline]
    pub(crate) fn zero() -> V {
        _mm256_setzero_pd()
    }

    /// # Safety
    /// `p` valid for 4 reads; AVX2 present.
    #[target_feature(enable = "avx2,fma")]
    #[inline]
    pub(crate) unsafe fn load(p: *const f64) -> V {
        // Safety: the caller's guarantee.
        unsafe { _mm256_loadu_pd(p) }
    }

    /// # Safety
    /// `p` valid for `n < 4` reads; AVX2 present.
    #[target_feature(enable = "avx2,fma")]
    #[inline]
    pub(crate) unsafe fn partial(p: *const f64, n: usize) -> V {
        let lanes = _mm256_setr_epi64x(0, 1, 2, 3);
        let mask = _mm256_cmpgt_epi64(_mm256_set1_epi64x(n as i64), lanes);
        // Safety: lanes whose mask is clear are not read (and cannot fault); the first `n`
        // are valid.
        unsafe { _mm256_maskload_pd(p, mask) }
    }

    /// # Safety
    /// `p` valid for one read; AVX2 present.
    #[target_feature(enable = "avx2,fma")]
    #[inline]
    pub(crate) unsafe fn splat(p: *const f64) -> V {
        // Safety: the caller's guarantee.
        unsafe { _mm256_set1_pd(*p) }
    }

    /// # Safety
    /// `p` valid for 4 writes; AVX2 present.
    #[target_feature(enable = "avx2,fma")]
    #[inline]
    pub(crate) unsafe fn store(p: *mut f64, v: V) {
        // Safety: the caller's guarantee.
        unsafe { _mm256_storeu_pd(p, v) }
    }

    #[target_feature(enable = "avx2,fma")]
    #[inline]
    pub(crate) fn fma(acc: V, w: V, x: V) -> V {
        _mm256_fmadd_pd(w, x, acc)
    }

    #[target_feature(enable = "avx2,fma")]
    #[inline]
    pub(crate) fn add(a: V, b: V) -> V {
        _mm256_add_pd(a, b)
    }

    #[target_feature(enable = "avx2,fma")]
    #[inline]
    pub(crate) fn hsum(v: V) -> f64 {
        super::hsum256_pd(v)
    }
}

simd_kernels!("avx2,fma", crate::kernel::avx2_fma_detected, f32, v32, k32);
simd_kernels!("avx2,fma", crate::kernel::avx2_fma_detected, f64, v64, k64);

pub(crate) use k32::{dot as dot_f32, span as groups_f32};
pub(crate) use k64::{dot as dot_f64, span as groups_f64};

// The any-ratio engine's run kernel (`kernel/glide.rs`).
crate::kernel::glide::glide_kernels!(
    "avx2,fma",
    crate::kernel::avx2_fma_detected,
    f32,
    v32,
    g32,
    crate::kernel::glide::prefetch
);
crate::kernel::glide::glide_kernels!(
    "avx2,fma",
    crate::kernel::avx2_fma_detected,
    f64,
    v64,
    g64,
    crate::kernel::glide::prefetch
);
pub(crate) use g32::glide_run as glide_run_f32;
pub(crate) use g64::glide_run as glide_run_f64;
