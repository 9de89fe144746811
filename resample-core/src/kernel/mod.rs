//! The kernels: the scalar reference that every other kernel is tested against,
//! SIMD versions for x86_64 (AVX2 + FMA, AVX-512F) and aarch64 (NEON), and the choice of
//! kernel, made once when a converter is built and stored with it as function pointers.
//!
//! A kernel has three entry points for each sample type:
//!
//! * a single dot product ([`DotFn`]),
//! * the any-ratio engine's *runs* ([`KernelFns::glide_run`], `glide.rs`): for each of
//!   several outputs its taps interpolated once from a table of polynomial coefficients,
//!   then shared by every channel's dot product, and
//! * *groups*: consecutive groups of a [`crate::table::GroupTable`] (a vector of taps per
//!   input sample, one lane per output) against several inputs ([`KernelFns::span`], the
//!   converters' inner loop; [`KernelFns::groups`] for one group). Each input sample is
//!   broadcast to all lanes, so a group of outputs costs one multiply-add per input sample,
//!   with aligned loads and no horizontal sums, and each loaded vector of taps serves
//!   several inputs from registers (channels, or periods of the same group: eight with
//!   AVX-512 and NEON, four with AVX2). The inputs' pointers are set up once per call for
//!   all the groups of the span; with one to three inputs, two or four groups run side by
//!   side.
//!
//! Every output is computed by the same sequence of operations whatever inputs and groups it
//! was computed with, so a converter gives bit-identical results for any chunking of its
//! input.
//!
//! All `unsafe` code of the crate is confined to this module tree; every block says why it is
//! sound in a `// Safety:` comment.

#[cfg(target_arch = "aarch64")]
mod arm {
    //! Kernels for aarch64.
    pub(super) mod neon;
}
// The any-ratio engine's run kernel (interpolated taps shared by the channels).
pub(crate) mod glide;
// The half-band stage's kernel (scalar reference, AVX2 + FMA, AVX-512F).
pub(crate) mod halfband;
#[cfg(feature = "internals")]
pub mod peak;
// Plain loops of the design and its measurement built for wider vectors (same bits).
pub mod scalar;
mod simd;
pub(crate) mod wide;
#[cfg(target_arch = "x86_64")]
mod x86 {
    //! Kernels for x86_64.
    pub(super) mod avx2;
    pub(super) mod avx512;
}

use num_traits::{Float, FromPrimitive};

pub use glide::{glide_block_len, glide_chunk, GlideRun};

use crate::{Error, Result};

/// A dot product of two slices (taps, samples); extra elements of the longer one are ignored.
pub type DotFn<T> = fn(&[T], &[T]) -> T;

/// A span of groups against several inputs (see [`KernelFns::span`]). Only ever called
/// through that method, which checks the sizes first.
pub(crate) type GroupsFn<T> = fn(&GroupSpan<'_, T>, &[&[T]], &mut [T]);

/// The any-ratio engine's runs of outputs (see [`KernelFns::glide_run`]).
/// Returns whether the run fit (`GlideRun::fits`) and was computed; nothing is written
/// otherwise.
pub(crate) type GlideRunFn<T> = fn(&GlideRun<'_, T>, &mut [T]) -> bool;

/// Consecutive groups of a [`crate::table::GroupTable`] as one kernel call takes them
/// ([`KernelFns::span`]): group `g` has taps `taps[g rows lanes..][..rows lanes]` (row `r`,
/// lane `l` at `r lanes + l`) and reads an input from offset `shifts[g] - shifts[0]` on.
#[derive(Debug, Clone, Copy)]
pub struct GroupSpan<'a, T> {
    /// The groups' taps, one group after another.
    pub taps: &'a [T],
    /// Outputs per group.
    pub lanes: usize,
    /// Rows (input samples) each group reads.
    pub rows: usize,
    /// Input index of each group's first row, non-decreasing; only differences matter.
    pub shifts: &'a [usize],
}

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
#[derive(Clone, Copy)]
pub struct KernelFns<T> {
    kernel: Kernel,
    // The single dot product is not used by the fixed-ratio engines (they run spans of
    // groups); the any-ratio engine, whose outputs each fall at a phase of their own, uses it.
    dot: DotFn<T>,
    groups: GroupsFn<T>,
    glide_run: GlideRunFn<T>,
    lanes: usize,
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
            groups: T::groups_fn(kernel),
            glide_run: T::glide_run_fn(kernel),
            lanes: T::lanes(kernel),
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

    /// The any-ratio engine's outputs of a run ([`GlideRun`]): for output `k`, the taps
    /// interpolated from its block of the coefficient table at its position (Horner's
    /// rule, in the order of [`GlideRun::order`]), then for each channel `c` the dot
    /// product with its inputs, `out[k channels + c]`. Each row's sum is taken as two
    /// partial sums (even and odd vectors in SIMD kernels; left to right in the scalar
    /// reference); an output's value depends neither on the other outputs of the run nor
    /// on the other channels. [`Error::BufferShape`] if the order is not 1 or 3, the per-output slices differ in length, a block
    /// or an input reaches past its slice, or `out` holds fewer than `outputs channels`
    /// values.
    #[inline]
    pub fn glide_run(&self, g: &GlideRun<'_, T>, out: &mut [T]) -> Result<()> {
        // The kernel checks the run once (`GlideRun::fits`) before it reads or writes.
        if !(self.glide_run)(g, out) {
            return Err(Error::BufferShape {
                what: "glide run (order 1 or 3, blocks and inputs inside their slices, one output per output and channel)",
                expected: g.blocks.len() * g.channels,
                got: out.len(),
            });
        }
        Ok(())
    }

    /// Lanes (outputs per group) this kernel's vectors hold: the width to build a
    /// [`crate::table::GroupTable`] with.
    pub fn lanes(&self) -> usize {
        self.lanes
    }

    /// One group of outputs for several inputs: `taps` holds `rows` vectors of `lanes` taps
    /// (`taps.len() = rows lanes`), every input at least `rows` samples; writes
    /// `out[i lanes + l] = sum_r taps[r lanes + l] inputs[i][r]`. The sum is taken as two
    /// partial sums, even and odd rows, each in row order, then added (with fused
    /// multiply-adds in SIMD kernels). Tables of another width than [`KernelFns::lanes`]
    /// fall back to the scalar reference. [`Error::BufferShape`] if `lanes` is zero or does
    /// not divide `taps.len()`, an input is too short or `out` holds fewer than
    /// `inputs.len() lanes` values.
    ///
    #[inline]
    #[cfg_attr(not(any(test, feature = "internals")), allow(dead_code))]
    pub fn groups(&self, taps: &[T], lanes: usize, inputs: &[&[T]], out: &mut [T]) -> Result<()> {
        let rows = taps.len() / lanes.max(1);
        if lanes == 0 || rows * lanes != taps.len() {
            return Err(Error::BufferShape {
                what: "group taps (whole rows of lanes)",
                expected: (rows + 1) * lanes.max(1),
                got: taps.len(),
            });
        }
        let span = GroupSpan {
            taps,
            lanes,
            rows,
            shifts: &[0],
        };
        self.span(&span, inputs, out)
    }

    /// The converters' inner loop: every group of `span` against every input,
    /// `out[(i G + g) lanes + l]` for input `i`, group `g` of `G = span.shifts.len()` and
    /// lane `l`; group `g` reads `inputs[i][shifts[g] - shifts[0]..][..rows]`, summed as
    /// [`KernelFns::groups`] sums, so each group's outputs have the bits they have on their
    /// own. The inputs' pointers are set up once per batch for all the groups, so short
    /// filters do not pay that set-up per group. [`Error::BufferShape`] if `lanes` or `rows`
    /// is zero, `shifts` empty or decreasing, the taps short of `G rows lanes`, an input
    /// short of the last group's reach or `out` short of `inputs.len() G lanes` values.
    ///
    #[inline]
    pub fn span(&self, span: &GroupSpan<'_, T>, inputs: &[&[T]], out: &mut [T]) -> Result<()> {
        let GroupSpan {
            taps,
            lanes,
            rows,
            shifts,
        } = *span;
        let bad = |what: &'static str, expected: usize, got: usize| Error::BufferShape {
            what,
            expected,
            got,
        };
        if lanes == 0 || rows == 0 {
            return Err(bad("group span shape (lanes and rows)", 1, 0));
        }
        let (Some(&s0), Some(&last)) = (shifts.first(), shifts.last()) else {
            return Err(bad("group span shifts (at least one group)", 1, 0));
        };
        if shifts.windows(2).any(|w| w[1] < w[0]) {
            return Err(bad("group span shifts (non-decreasing)", 0, 1));
        }
        let need = shifts.len() * rows * lanes;
        if taps.len() < need {
            return Err(bad(
                "group span taps (rows x lanes per group)",
                need,
                taps.len(),
            ));
        }
        let reach = last - s0 + rows;
        if let Some(x) = inputs.iter().find(|x| x.len() < reach) {
            return Err(bad("group input (one sample per row)", reach, x.len()));
        }
        let need = inputs.len() * shifts.len() * lanes;
        if out.len() < need {
            return Err(bad(
                "group output (lanes per group and input)",
                need,
                out.len(),
            ));
        }
        (self.groups)(span, inputs, out);
        Ok(())
    }
}

mod sealed {
    /// Group functions are reached only through [`super::KernelFns::groups`], which checks
    /// the sizes first; this trait cannot be named outside the crate.
    pub trait GroupKernels: Sized {
        /// The group function of a kernel for this type (scalar fallback if unavailable).
        fn groups_fn(kernel: super::Kernel) -> super::GroupsFn<Self>;

        /// Lanes of that kernel's vectors for this type (32 bytes' worth for the scalar
        /// reference).
        fn lanes(kernel: super::Kernel) -> usize;

        /// The any-ratio run function of a kernel for this type (scalar fallback).
        fn glide_run_fn(kernel: super::Kernel) -> super::GlideRunFn<Self>;
    }
}

/// A sample type the converters work in: `f32` or `f64`.
pub trait Sample:
    Float
    + FromPrimitive
    + Default
    + core::fmt::Debug
    + Send
    + Sync
    + 'static
    + sealed::GroupKernels
    + halfband::HalfBandKernels
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
    ($t:ty, $dot:ident, $groups:ident, $run:ident, $from:expr, $to:expr) => {
        impl Sample for $t {
            fn dot_fn(kernel: Kernel) -> DotFn<Self> {
                match kernel {
                    #[cfg(target_arch = "x86_64")]
                    Kernel::Avx2Fma if kernel.is_available() => x86::avx2::$dot,
                    #[cfg(target_arch = "x86_64")]
                    Kernel::Avx512 if kernel.is_available() => x86::avx512::$dot,
                    #[cfg(target_arch = "aarch64")]
                    Kernel::Neon if kernel.is_available() => arm::neon::$dot,
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

        impl sealed::GroupKernels for $t {
            fn groups_fn(kernel: Kernel) -> GroupsFn<Self> {
                match kernel {
                    #[cfg(target_arch = "x86_64")]
                    Kernel::Avx2Fma if kernel.is_available() => x86::avx2::$groups,
                    #[cfg(target_arch = "x86_64")]
                    Kernel::Avx512 if kernel.is_available() => x86::avx512::$groups,
                    #[cfg(target_arch = "aarch64")]
                    Kernel::Neon if kernel.is_available() => arm::neon::$groups,
                    _ => scalar::span::<$t>,
                }
            }

            fn glide_run_fn(kernel: Kernel) -> GlideRunFn<Self> {
                match kernel {
                    #[cfg(target_arch = "x86_64")]
                    Kernel::Avx2Fma if kernel.is_available() => x86::avx2::$run,
                    #[cfg(target_arch = "x86_64")]
                    Kernel::Avx512 if kernel.is_available() => x86::avx512::$run,
                    #[cfg(target_arch = "aarch64")]
                    Kernel::Neon if kernel.is_available() => arm::neon::$run,
                    _ => glide::glide_run::<$t>,
                }
            }

            fn lanes(kernel: Kernel) -> usize {
                let bytes = match kernel {
                    Kernel::Avx2Fma if kernel.is_available() => 32,
                    Kernel::Avx512 if kernel.is_available() => 64,
                    Kernel::Neon if kernel.is_available() => 16,
                    _ => 32,
                };
                bytes / core::mem::size_of::<$t>()
            }
        }
    };
}

impl_sample!(
    f32,
    dot_f32,
    groups_f32,
    glide_run_f32,
    |v: f64| v as f32,
    f64::from
);
impl_sample!(
    f64,
    dot_f64,
    groups_f64,
    glide_run_f64,
    |v: f64| v,
    |v: f64| v
);

#[cfg(test)]
mod tests;
