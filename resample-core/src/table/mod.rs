//! The taps laid out for the kernels: a design's prototype rearranged in groups of
//! consecutive outputs, one vector of taps per input sample ([`GroupTable`]), in one
//! 64-byte-aligned buffer, and its shape computed without building it ([`Layout`]).

mod groups;

pub use groups::{GroupTable, Layout};
