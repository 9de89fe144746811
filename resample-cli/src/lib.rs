//! The reusable parts of `rerate`, shared by its commands: WAV reading and writing
//! ([`wav`]), files written under a temporary name and moved into place when complete
//! ([`staged`]), the quality defaults that follow the output format ([`quality`]), and the
//! streaming conversion of one WAV file ([`convert`]).
//!
//! The `rerate` binary parses flags, calls these and prints.
#![deny(missing_docs)]
#![forbid(unsafe_code)]

pub mod batch;
pub mod convert;
pub mod demo;
pub mod quality;
pub mod staged;
pub mod wav;
