//! Dot-product kernels: the scalar reference that every other kernel is tested against,
//! SIMD versions for x86_64 (AVX2 + FMA, AVX-512F) and aarch64 (NEON), and the choice of
//! kernel, made once when a converter is built and stored with it as function pointers.
//!
//! A kernel has two entry points for each sample type:
//!
//! * a single dot product ([`DotFn`]), and
//! * a *block* ([`Block`]): many consecutive outputs of a polyphase converter for several
//!   channels in one call. The kernel steps through the phases itself, so there is one
//!   indirect call per block instead of one per output, and channels are taken in pairs
//!   so that each vector of taps loaded from the phase table serves two channels.
//!
//! Every output of a block is computed by the same sequence of operations whatever its
//! position in the block and whatever the block size, so a converter gives bit-identical
//! results for any chunking of its input.
//!
//! All `unsafe` code of the crate is confined to this module tree; every block says why it is
//! sound in a `// Safety:` comment.

mod block;
#[cfg(target_arch = "aarch64")]
mod neon;
pub mod peak;
pub mod scalar;
mod simd;
#[cfg(target_arch = "x86_64")]
mod x86_avx2;
#[cfg(target_arch = "x86_64")]
mod x86_avx512;

pub use block::Block;

use num_traits::{Float, FromPrimitive};

use crate::{Error, Result};

/// A dot product of two slices (taps, samples); extra elements of the longer one are ignored.
pub type DotFn<T> = fn(&[T], &[T]) -> T;

/// A block of converter outputs: writes output `k` of channel `c` to `out[c * frames + k]`.
/// Only ever called (through [`KernelFns::block`]) with `out.len() >= block.channels() * block.frames()`.
pub(crate) type BlockFn<T> = fn(&Block<'_, T>, &mut [T]);

/// Which dot-product implementation a converter uses.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum Kernel {
    /// Portable scalar reference: one accumulator, taps in order.
    Scalar,
    /// x86_64 AVX2 with fused multiply-add: 256-bit vectors, several accumulators.
    Avx2Fma,
    /// x86_64 AVX-512F: 512-bit vectors, several accumulators.
    Avx512,
    /// aarch64 NEON (Advanced SIMD): 128-bit vectors, several accumulators.
    Neon,
}

impl Kernel {
    /// Every kernel this crate knows, whether or not this build or CPU can run it.
    pub const ALL: [Kernel; 4] = [
        Kernel::Scalar,
        Kernel::Avx2Fma,
        Kernel::Avx512,
        Kernel::Neon,
    ];

    /// The fastest kernel this CPU supports (detected at run time).
    pub fn detect() -> Self {
        // Preference order: widest vectors first.
        [Kernel::Avx512, Kernel::Avx2Fma, Kernel::Neon]
            .into_iter()
            .find(|k| k.is_available())
            .unwrap_or(Kernel::Scalar)
    }

    /// Every kernel this build and CPU can run, the scalar reference first.
    pub fn available() -> Vec<Kernel> {
        Self::ALL.into_iter().filter(|k| k.is_available()).collect()
    }

    /// Whether this build and CPU can run the kernel.
    pub fn is_available(self) -> bool {
        match self {
            Kernel::Scalar => true,
            Kernel::Avx2Fma => avx2_fma_detected(),
            Kernel::Avx512 => avx512_detected(),
            Kernel::Neon => neon_detected(),
        }
    }

    /// Short name, for reports and benches.
    pub fn name(self) -> &'static str {
        match self {
            Kernel::Scalar => "scalar",
            Kernel::Avx2Fma => "avx2-fma",
            Kernel::Avx512 => "avx512f",
            Kernel::Neon => "neon",
        }
    }

    /// The kernel with this [`Kernel::name`], if any.
    pub fn from_name(name: &str) -> Option<Kernel> {
        Self::ALL.into_iter().find(|k| k.name() == name)
    }
}

#[cfg(target_arch = "x86_64")]
pub(crate) fn avx2_fma_detected() -> bool {
    std::arch::is_x86_feature_detected!("avx2") && std::arch::is_x86_feature_detected!("fma")
}

#[cfg(not(target_arch = "x86_64"))]
pub(crate) fn avx2_fma_detected() -> bool {
    false
}

#[cfg(target_arch = "x86_64")]
pub(crate) fn avx512_detected() -> bool {
    std::arch::is_x86_feature_detected!("avx512f") && avx2_fma_detected()
}

#[cfg(not(target_arch = "x86_64"))]
pub(crate) fn avx512_detected() -> bool {
    false
}

#[cfg(target_arch = "aarch64")]
pub(crate) fn neon_detected() -> bool {
    std::arch::is_aarch64_feature_detected!("neon")
}

#[cfg(not(target_arch = "aarch64"))]
pub(crate) fn neon_detected() -> bool {
    false
}

/// A kernel resolved for one sample type: its function pointers, looked up once.
///
/// ```
/// use resample_core::kernel::{Kernel, KernelFns};
/// let k = KernelFns::<f32>::new(Kernel::detect())?;
/// assert_eq!(k.dot(&[1.0; 8], &[2.0; 8]), 16.0);
/// # Ok::<(), resample_core::Error>(())
/// ```
#[derive(Clone, Copy)]
pub struct KernelFns<T> {
    kernel: Kernel,
    dot: DotFn<T>,
    block: BlockFn<T>,
}

impl<T> core::fmt::Debug for KernelFns<T> {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        f.debug_struct("KernelFns")
            .field("kernel", &self.kernel)
            .finish_non_exhaustive()
    }
}

impl<T: Sample> KernelFns<T> {
    /// Resolve `kernel`; [`Error::KernelUnavailable`] if this build or CPU cannot run it.
    pub fn new(kernel: Kernel) -> Result<Self> {
        if !kernel.is_available() {
            return Err(Error::KernelUnavailable {
                name: kernel.name(),
            });
        }
        Ok(Self {
            kernel,
            dot: T::dot_fn(kernel),
            block: T::block_fn(kernel),
        })
    }

    /// The kernel these functions belong to.
    pub fn kernel(&self) -> Kernel {
        self.kernel
    }

    /// `sum_i taps[i] * x[i]` over the shorter of the two lengths.
    #[inline]
    pub fn dot(&self, taps: &[T], x: &[T]) -> T {
        (self.dot)(taps, x)
    }

    /// Compute a block of outputs: output `k` of channel `c` goes to `out[c * frames + k]`.
    /// [`Error::BufferShape`] if `out` is shorter than `channels * frames`.
    #[inline]
    pub fn block(&self, block: &Block<'_, T>, out: &mut [T]) -> Result<()> {
        let need = block.channels() * block.frames();
        if out.len() < need {
            return Err(Error::BufferShape {
                what: "block output length (channels x frames)",
                expected: need,
                got: out.len(),
            });
        }
        (self.block)(block, out);
        Ok(())
    }
}

mod sealed {
    /// Block functions are reached only through [`super::KernelFns::block`], which checks
    /// the output length first; this trait cannot be named outside the crate.
    pub trait BlockKernels: Sized {
        /// The block function of a kernel for this type (scalar fallback if unavailable).
        fn block_fn(kernel: super::Kernel) -> super::BlockFn<Self>;
    }
}

/// A sample type the converters work in: `f32` or `f64`.
pub trait Sample:
    Float + FromPrimitive + Default + core::fmt::Debug + Send + Sync + 'static + sealed::BlockKernels
{
    /// The dot product of `kernel` for this type. Falls back to the scalar reference if the
    /// kernel is not available on this CPU.
    fn dot_fn(kernel: Kernel) -> DotFn<Self>;

    /// Convert from `f64` (rounding to nearest for `f32`).
    fn from_f64_lossy(v: f64) -> Self;

    /// Convert to `f64` (exact).
    fn to_f64_exact(self) -> f64;
}

macro_rules! impl_sample {
    ($t:ty, $dot:ident, $block:ident, $from:expr, $to:expr) => {
        impl Sample for $t {
            fn dot_fn(kernel: Kernel) -> DotFn<Self> {
                match kernel {
                    #[cfg(target_arch = "x86_64")]
                    Kernel::Avx2Fma if kernel.is_available() => x86_avx2::$dot,
                    #[cfg(target_arch = "x86_64")]
                    Kernel::Avx512 if kernel.is_available() => x86_avx512::$dot,
                    #[cfg(target_arch = "aarch64")]
                    Kernel::Neon if kernel.is_available() => neon::$dot,
                    _ => scalar::dot::<$t>,
                }
            }

            fn from_f64_lossy(v: f64) -> Self {
                $from(v)
            }

            fn to_f64_exact(self) -> f64 {
                $to(self)
            }
        }

        impl sealed::BlockKernels for $t {
            fn block_fn(kernel: Kernel) -> BlockFn<Self> {
                match kernel {
                    #[cfg(target_arch = "x86_64")]
                    Kernel::Avx2Fma if kernel.is_available() => x86_avx2::$block,
                    #[cfg(target_arch = "x86_64")]
                    Kernel::Avx512 if kernel.is_available() => x86_avx512::$block,
                    #[cfg(target_arch = "aarch64")]
                    Kernel::Neon if kernel.is_available() => neon::$block,
                    _ => scalar::block::<$t>,
                }
            }
        }
    };
}

impl_sample!(f32, dot_f32, block_f32, |v: f64| v as f32, f64::from);
impl_sample!(f64, dot_f64, block_f64, |v: f64| v, |v: f64| v);

#[cfg(test)]
mod tests;
