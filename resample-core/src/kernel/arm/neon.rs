//! aarch64 NEON (Advanced SIMD) kernels: 128-bit vectors (4 `f32` or 2 `f64` lanes),
//! fused multiply-add.

use crate::kernel::simd::simd_kernels;

/// Vector vocabulary for `f32`.
mod v32 {
    use core::arch::aarch64::*;

    pub(crate) type V = float32x4_t;
    pub(crate) const W: usize = 4;
    /// Inputs taken together per kernel call (each with two accumulators in registers).
    pub(crate) const JOBS: usize = 8;

    #[target_feature(enable = "neon")]
    #[inline]
    pub(crate) fn zero() -> V {
        vdupq_n_f32(0.0)
    }

    /// # Safety
    /// `p` valid for 4 reads; NEON present.
    #[target_feature(enable = "neon")]
    #[inline]
    pub(crate) unsafe fn load(p: *const f32) -> V {
        // Safety: the caller's guarantee.
        unsafe { vld1q_f32(p) }
    }

    /// # Safety
    /// `p` valid for `n < 4` reads; NEON present.
    #[target_feature(enable = "neon")]
    #[inline]
    pub(crate) unsafe fn partial(p: *const f32, n: usize) -> V {
        let mut buf = [0.0_f32; 4];
        // Safety: the first `n` elements at `p` are valid (the caller's guarantee).
        unsafe {
            core::ptr::copy_nonoverlapping(p, buf.as_mut_ptr(), n.min(4));
            vld1q_f32(buf.as_ptr())
        }
    }

    /// # Safety
    /// `p` valid for one read; NEON present.
    #[target_feature(enable = "neon")]
    #[inline]
    pub(crate) unsafe fn splat(p: *const f32) -> V {
        // Safety: the caller's guarantee.
        unsafe { vld1q_dup_f32(p) }
    }

    /// # Safety
    /// `p` valid for 4 writes; NEON present.
    #[target_feature(enable = "neon")]
    #[inline]
    pub(crate) unsafe fn store(p: *mut f32, v: V) {
        // Safety: the caller's guarantee.
        unsafe { vst1q_f32(p, v) }
    }

    #[target_feature(enable = "neon")]
    #[inline]
    pub(crate) fn fma(acc: V, w: V, x: V) -> V {
        vfmaq_f32(acc, w, x)
    }

    #[target_feature(enable = "neon")]
    #[inline]
    pub(crate) fn add(a: V, b: V) -> V {
        vaddq_f32(a, b)
    }

    #[target_feature(enable = "neon")]
    #[inline]
    pub(crate) fn hsum(v: V) -> f32 {
        vaddvq_f32(v)
    }
}

/// Vector vocabulary for `f64`.
mod v64 {
    use core::arch::aarch64::*;

    pub(crate) type V = float64x2_t;
    pub(crate) const W: usize = 2;
    /// Inputs taken together per kernel call (each with two accumulators in registers).
    pub(crate) const JOBS: usize = 8;

    #[target_feature(enable = "neon")]
    #[inline]
    pub(crate) fn zero() -> V {
        vdupq_n_f64(0.0)
    }

    /// # Safety
    /// `p` valid for 2 reads; NEON present.
    #[target_feature(enable = "neon")]
    #[inline]
    pub(crate) unsafe fn load(p: *const f64) -> V {
        // Safety: the caller's guarantee.
        unsafe { vld1q_f64(p) }
    }

    /// # Safety
    /// `p` valid for `n < 2` reads; NEON present.
    #[target_feature(enable = "neon")]
    #[inline]
    pub(crate) unsafe fn partial(p: *const f64, n: usize) -> V {
        let mut buf = [0.0_f64; 2];
        // Safety: the first `n` elements at `p` are valid (the caller's guarantee).
        unsafe {
            core::ptr::copy_nonoverlapping(p, buf.as_mut_ptr(), n.min(2));
            vld1q_f64(buf.as_ptr())
        }
    }

    /// # Safety
    /// `p` valid for one read; NEON present.
    #[target_feature(enable = "neon")]
    #[inline]
    pub(crate) unsafe fn splat(p: *const f64) -> V {
        // Safety: the caller's guarantee.
        unsafe { vld1q_dup_f64(p) }
    }

    /// # Safety
    /// `p` valid for 2 writes; NEON present.
    #[target_feature(enable = "neon")]
    #[inline]
    pub(crate) unsafe fn store(p: *mut f64, v: V) {
        // Safety: the caller's guarantee.
        unsafe { vst1q_f64(p, v) }
    }

    #[target_feature(enable = "neon")]
    #[inline]
    pub(crate) fn fma(acc: V, w: V, x: V) -> V {
        vfmaq_f64(acc, w, x)
    }

    #[target_feature(enable = "neon")]
    #[inline]
    pub(crate) fn add(a: V, b: V) -> V {
        vaddq_f64(a, b)
    }

    #[target_feature(enable = "neon")]
    #[inline]
    pub(crate) fn hsum(v: V) -> f64 {
        vaddvq_f64(v)
    }
}

simd_kernels!("neon", crate::kernel::neon_detected, f32, v32, k32);
simd_kernels!("neon", crate::kernel::neon_detected, f64, v64, k64);

pub(crate) use k32::{dot as dot_f32, span as groups_f32};
pub(crate) use k64::{dot as dot_f64, span as groups_f64};

// The any-ratio engine's run kernel (`kernel/glide.rs`). Compiled for aarch64 only and not
// yet run on NEON hardware: the same macro body as the x86 kernels, no prefetch hint.
crate::kernel::glide::glide_kernels!(
    "neon",
    crate::kernel::neon_detected,
    f32,
    v32,
    g32,
    crate::kernel::glide::prefetch
);
crate::kernel::glide::glide_kernels!(
    "neon",
    crate::kernel::neon_detected,
    f64,
    v64,
    g64,
    crate::kernel::glide::prefetch
);
pub(crate) use g32::glide_run as glide_run_f32;
pub(crate) use g64::glide_run as glide_run_f64;
