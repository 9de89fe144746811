//! Dot-product kernels: the scalar reference that every other kernel is tested against, and
//! the choice of kernel, made once when a converter is built and stored with it.
//!
//! Instruction-set specific kernels live in their own modules beside `scalar`; all `unsafe`
//! code of the crate is confined to this module tree.

pub mod scalar;

use num_traits::{Float, FromPrimitive};

/// A dot product of two equally long slices (taps, samples).
pub type DotFn<T> = fn(&[T], &[T]) -> T;

/// Which dot-product implementation a converter uses.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum Kernel {
    /// Portable scalar reference: one accumulator, taps in order.
    Scalar,
}

impl Kernel {
    /// The fastest kernel this CPU supports (detected at run time).
    pub fn detect() -> Self {
        Kernel::Scalar
    }

    /// Every kernel this CPU can run, the scalar reference first.
    pub fn available() -> Vec<Kernel> {
        vec![Kernel::Scalar]
    }

    /// Whether this CPU can run the kernel.
    pub fn is_available(self) -> bool {
        Self::available().contains(&self)
    }

    /// Short name, for reports and benches.
    pub fn name(self) -> &'static str {
        match self {
            Kernel::Scalar => "scalar",
        }
    }
}

/// A sample type the converters work in: `f32` or `f64`.
pub trait Sample:
    Float + FromPrimitive + Default + core::fmt::Debug + Send + Sync + 'static
{
    /// The dot product of `kernel` for this type. Only called with available kernels;
    /// falls back to the scalar reference otherwise.
    fn dot_fn(kernel: Kernel) -> DotFn<Self>;

    /// Convert from `f64` (rounding to nearest for `f32`).
    fn from_f64_lossy(v: f64) -> Self;

    /// Convert to `f64` (exact).
    fn to_f64_exact(self) -> f64;
}

impl Sample for f32 {
    fn dot_fn(kernel: Kernel) -> DotFn<Self> {
        match kernel {
            Kernel::Scalar => scalar::dot::<f32>,
        }
    }

    fn from_f64_lossy(v: f64) -> Self {
        v as f32
    }

    fn to_f64_exact(self) -> f64 {
        f64::from(self)
    }
}

impl Sample for f64 {
    fn dot_fn(kernel: Kernel) -> DotFn<Self> {
        match kernel {
            Kernel::Scalar => scalar::dot::<f64>,
        }
    }

    fn from_f64_lossy(v: f64) -> Self {
        v
    }

    fn to_f64_exact(self) -> f64 {
        self
    }
}
