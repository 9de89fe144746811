//! The crate's internals, for the project's own benchmarks and tests (feature `internals`):
//! the kernels' tap layout and entry points, the peak-rate probe, and the response
//! measurement of the design search. Not a stable API; applications never need it.

pub use crate::filter::minphase;
pub use crate::filter::response;
pub use crate::filter::window;
pub use crate::kernel::{
    glide_block_len, glide_chunk, peak, scalar, DotFn, GlideRun, GroupSpan, KernelFns,
};
pub use crate::table::{GroupTable, Layout};
