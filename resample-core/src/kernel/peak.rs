//! The core's peak multiply-add rate, measured by a loop that never touches memory: many
//! independent accumulators, each updated by a fused multiply-add per step. Benches divide a
//! kernel's achieved rate by this to report the fraction of peak.

use super::Kernel;

/// Independent accumulator chains: enough to cover FMA latency times issue width on current
/// cores (4 cycles x 2 pipes = 8; 12 leaves room).
pub const CHAINS: usize = 12;

/// Run `steps` steps of [`CHAINS`] independent `f32` multiply-adds in the vectors of
/// `kernel` (or, for the scalar kernel, separate multiplies and adds, as it computes). Returns the multiply-accumulates done and a value that depends on
/// all of them (so the loop cannot be optimised away).
pub fn fma_loop_f32(kernel: Kernel, steps: u64) -> (u64, f32) {
    match kernel {
        #[cfg(target_arch = "x86_64")]
        Kernel::Avx512 if kernel.is_available() => {
            // Safety: AVX-512F (and AVX2, FMA) detected just above.
            let v = unsafe { x86::avx512_f32(steps) };
            (steps * CHAINS as u64 * 16, v)
        }
        #[cfg(target_arch = "x86_64")]
        Kernel::Avx2Fma if kernel.is_available() => {
            // Safety: AVX2 and FMA detected just above.
            let v = unsafe { x86::avx2_f32(steps) };
            (steps * CHAINS as u64 * 8, v)
        }
        _ => {
            let mut acc = [0.0_f32; CHAINS];
            let m = core::hint::black_box(0.999_f32);
            let a = core::hint::black_box(1e-3_f32);
            for _ in 0..steps {
                for x in &mut acc {
                    *x = *x * m + a;
                }
            }
            (steps * CHAINS as u64, acc.iter().sum())
        }
    }
}

/// The `f64` twin of [`fma_loop_f32`].
pub fn fma_loop_f64(kernel: Kernel, steps: u64) -> (u64, f64) {
    match kernel {
        #[cfg(target_arch = "x86_64")]
        Kernel::Avx512 if kernel.is_available() => {
            // Safety: AVX-512F (and AVX2, FMA) detected just above.
            let v = unsafe { x86::avx512_f64(steps) };
            (steps * CHAINS as u64 * 8, v)
        }
        #[cfg(target_arch = "x86_64")]
        Kernel::Avx2Fma if kernel.is_available() => {
            // Safety: AVX2 and FMA detected just above.
            let v = unsafe { x86::avx2_f64(steps) };
            (steps * CHAINS as u64 * 4, v)
        }
        _ => {
            let mut acc = [0.0_f64; CHAINS];
            let m = core::hint::black_box(0.999_f64);
            let a = core::hint::black_box(1e-3_f64);
            for _ in 0..steps {
                for x in &mut acc {
                    *x = *x * m + a;
                }
            }
            (steps * CHAINS as u64, acc.iter().sum())
        }
    }
}

#[cfg(target_arch = "x86_64")]
mod x86 {
    use super::CHAINS;
    use core::arch::x86_64::*;

    macro_rules! peak_loop {
        ($name:ident, $feat:literal, $t:ty, $set1:ident, $fma:ident, $add:ident, $hsum:path) => {
            /// # Safety
            /// The CPU supports the enabled features.
            #[target_feature(enable = $feat)]
            pub(super) unsafe fn $name(steps: u64) -> $t {
                let m = $set1(core::hint::black_box(0.999));
                let a = $set1(core::hint::black_box(1e-3));
                let mut acc = [$set1(0.0); CHAINS];
                for _ in 0..steps {
                    for x in &mut acc {
                        *x = $fma(*x, m, a);
                    }
                }
                let mut s = acc[0];
                for x in &acc[1..] {
                    s = $add(s, *x);
                }
                $hsum(s)
            }
        };
    }

    #[target_feature(enable = "avx512f,avx2,fma")]
    fn hsum512_ps(v: __m512) -> f32 {
        let lo = _mm512_castps512_ps256(v);
        let hi = _mm256_castpd_ps(_mm512_extractf64x4_pd(_mm512_castps_pd(v), 1));
        crate::kernel::x86::avx2::hsum256_ps(_mm256_add_ps(lo, hi))
    }

    #[target_feature(enable = "avx512f,avx2,fma")]
    fn hsum512_pd(v: __m512d) -> f64 {
        let lo = _mm512_castpd512_pd256(v);
        let hi = _mm512_extractf64x4_pd(v, 1);
        crate::kernel::x86::avx2::hsum256_pd(_mm256_add_pd(lo, hi))
    }

    peak_loop!(
        avx512_f32,
        "avx512f,avx2,fma",
        f32,
        _mm512_set1_ps,
        _mm512_fmadd_ps,
        _mm512_add_ps,
        hsum512_ps
    );
    peak_loop!(
        avx512_f64,
        "avx512f,avx2,fma",
        f64,
        _mm512_set1_pd,
        _mm512_fmadd_pd,
        _mm512_add_pd,
        hsum512_pd
    );
    peak_loop!(
        avx2_f32,
        "avx2,fma",
        f32,
        _mm256_set1_ps,
        _mm256_fmadd_ps,
        _mm256_add_ps,
        crate::kernel::x86::avx2::hsum256_ps
    );
    peak_loop!(
        avx2_f64,
        "avx2,fma",
        f64,
        _mm256_set1_pd,
        _mm256_fmadd_pd,
        _mm256_add_pd,
        crate::kernel::x86::avx2::hsum256_pd
    );
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn loops_count_and_compute() {
        for k in Kernel::available() {
            let (macs, v) = fma_loop_f32(k, 100);
            assert!(macs >= 100 * CHAINS as u64);
            assert!(v.is_finite() && v > 0.0);
            let (macs, v) = fma_loop_f64(k, 100);
            assert!(macs >= 100 * CHAINS as u64);
            assert!(v.is_finite() && v > 0.0);
        }
    }
}
