//! The engines that run a design's table over audio: the render loop they share, the
//! chunked [`StreamConverter`] for live audio, whole-signal [`offline`] conversion, and the
//! [`segments`] plan that cuts one long conversion into pieces converted on several cores
//! with the same result. (An any-ratio engine for drifting clocks belongs beside them.)

pub mod offline;
mod render;
pub mod segments;
mod stream;

pub use stream::{Progress, StreamConverter};
