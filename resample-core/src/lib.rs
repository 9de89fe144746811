//! # resample-core
//!
//! Sample-rate conversion by a Kaiser-windowed-sinc polyphase filter that designs itself from
//! the rate pair and the stopband attenuation asked for, measures its own prototype until
//! the request is met, and streams audio through a per-phase tap table.
//!
//! * [`RatePair`]: two rates reduced to up/down factors L/M.
//! * [`FilterSpec`] → [`Design`]: the prototype and its [`DesignReport`].
//! * [`PhaseTable`]: the prototype split into L phases; [`groups::GroupTable`]: the same taps
//!   arranged for wide vectors, one vector per input sample and one lane per output.
//! * [`StreamConverter`]: chunked, allocation-free, multichannel (planar or interleaved).
//! * [`offline`]: whole-signal conversion, delay compensated, exact length.
//! * [`kernel`]: the SIMD kernels and the run-time choice between them.
//!
//! ```
//! use resample_core::{offline, FilterSpec};
//!
//! // 44.1 kHz -> 48 kHz with at least 120 dB of image rejection.
//! let design = FilterSpec::new(44_100, 48_000).stopband_db(120.0).design()?;
//! assert!(design.report().measured_stopband_db >= 120.0);
//!
//! // A 1 kHz tone, one second long.
//! let tone: Vec<f64> = (0..44_100)
//!     .map(|n| (2.0 * std::f64::consts::PI * 1000.0 * n as f64 / 44_100.0).sin())
//!     .collect();
//! let out = offline::convert(&design, &tone);
//! assert_eq!(out.len(), 48_000);
//! // Output sample 24 000 is the tone at t = 0.5 s.
//! let expect = (2.0 * std::f64::consts::PI * 1000.0 * 0.5_f64).sin();
//! assert!((out[24_000] - expect).abs() < 1e-5);
//! # Ok::<(), resample_core::Error>(())
//! ```
#![deny(missing_docs)]
#![warn(missing_debug_implementations)]

pub mod baseline;
pub mod design;
mod error;
pub mod groups;
pub mod kernel;
#[cfg(feature = "measure")]
pub mod measure;
pub mod offline;
pub mod polyphase;
mod ratio;
mod render;
pub mod response;
pub mod stream;
pub mod window;

pub use design::{Design, DesignReport, FilterSpec};
pub use error::{Error, Result};
pub use kernel::{Kernel, Sample};
pub use polyphase::PhaseTable;
pub use ratio::RatePair;
pub use stream::{Progress, StreamConverter};

/// Highest sample rate accepted, Hz (10 MHz).
pub const MAX_RATE: u32 = 10_000_000;

/// Most channels a converter accepts.
pub const MAX_CHANNELS: usize = 1024;
