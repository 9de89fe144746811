//! Plain loops outside the conversion kernels (the filter design and its measurement)
//! compiled for the widest vector instructions the CPU has.
//!
//! [`run`] runs a closure inside a function built with AVX-512F (or AVX2 + FMA) enabled,
//! so the closure's loops, inlined there, use the wider registers. The operations are the
//! same IEEE additions, multiplications, divisions and square roots in the same order
//! (Rust never fuses a multiplication and an addition on its own, and library calls such as
//! `sin` stay the same calls), so every result is bit for bit the baseline build's; only
//! the time changes. [`Width::Baseline`] forces the baseline build, for tests that check
//! exactly that.

/// Which build of a loop [`run`] uses.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Width {
    /// The target's baseline instructions (x86_64: SSE2).
    Baseline,
    /// AVX2 with FMA available (x86_64).
    #[cfg(target_arch = "x86_64")]
    Avx2,
    /// AVX-512F (x86_64).
    #[cfg(target_arch = "x86_64")]
    Avx512,
}

impl Width {
    /// The widest this CPU has (the standard library caches the CPU's answer, so asking
    /// again costs one load).
    pub(crate) fn detect() -> Self {
        #[cfg(target_arch = "x86_64")]
        {
            if is_x86_feature_detected!("avx512f") {
                return Width::Avx512;
            }
            if is_x86_feature_detected!("avx2") && is_x86_feature_detected!("fma") {
                return Width::Avx2;
            }
        }
        Width::Baseline
    }
}

impl Width {
    /// `self`, but AVX2 where `self` is AVX-512 (and the CPU has AVX2 and FMA), for loops
    /// whose AVX-512 build measured slower than their AVX2 build.
    pub(crate) fn at_most_avx2(self) -> Self {
        #[cfg(target_arch = "x86_64")]
        if self == Width::Avx512 {
            return if is_x86_feature_detected!("avx2") && is_x86_feature_detected!("fma") {
                Width::Avx2
            } else {
                Width::Baseline
            };
        }
        self
    }
}

/// `f()` compiled for `width` ([`Width::detect`]: the widest this CPU has); a width the CPU
/// lacks falls back to the baseline build.
#[inline(always)]
pub(crate) fn run<R>(width: Width, f: impl FnOnce() -> R) -> R {
    match width {
        Width::Baseline => f(),
        #[cfg(target_arch = "x86_64")]
        Width::Avx2 => {
            if is_x86_feature_detected!("avx2") && is_x86_feature_detected!("fma") {
                // Safety: the CPU has AVX2 and FMA (checked just above).
                unsafe { avx2(f) }
            } else {
                f()
            }
        }
        #[cfg(target_arch = "x86_64")]
        Width::Avx512 => {
            if is_x86_feature_detected!("avx512f") {
                // Safety: the CPU has AVX-512F (checked just above).
                unsafe { avx512(f) }
            } else {
                f()
            }
        }
    }
}

/// `f()` with AVX2 and FMA enabled.
///
/// # Safety
/// The CPU supports AVX2 and FMA.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2,fma")]
unsafe fn avx2<R>(f: impl FnOnce() -> R) -> R {
    f()
}

/// `f()` with AVX-512F enabled.
///
/// # Safety
/// The CPU supports AVX-512F.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f")]
unsafe fn avx512<R>(f: impl FnOnce() -> R) -> R {
    f()
}
