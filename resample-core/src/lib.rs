//! # resample-core
//!
//! Sample-rate conversion by a Kaiser-windowed-sinc polyphase filter that designs itself from
//! the rate pair and the stopband attenuation asked for, measures its own prototype until
//! the request is met, and streams audio through a per-phase tap table.
//!
//! * [`RatePair`]: two rates reduced to up/down factors L/M.
//! * [`FilterSpec`] → [`Design`]: the prototype, its delay ([`Design::delay`]) and its
//!   [`DesignReport`]; [`FilterSpec::with_taps`] checks and measures a prototype of your own;
//!   [`FilterSpec::phase`] asks for linear phase (the default) or minimum phase ([`Phase`]).
//! * [`StreamConverter`]: chunked, allocation-free, multichannel (planar or interleaved).
//! * [`offline`]: whole-signal conversion, delay compensated, exact length; [`segments`]:
//!   one long conversion cut into pieces for several cores, with the same result.
//! * [`Kernel`]: the SIMD kernel a converter uses, detected once at construction (or forced,
//!   e.g. to the scalar reference).
//! * [`limits`]: the accepted ranges and the defaults.
//! * `measure` (feature `measure`): the sweep-through test and its analysis, and the
//!   baseline methods (sample hold, linear interpolation, ...) it is validated on.
//!
//! Features: `measure` adds the `measure` module; `internals` exposes the tap tables and
//! kernel entry points to the project's own benchmarks (not a stable API). Designs and
//! whole-signal conversions use rayon's current thread pool.
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
// All unsafe code lives in the kernels (`kernel/`, allowed there alone).
#![deny(unsafe_code)]
#![cfg_attr(docsrs, feature(doc_cfg))]

mod engine;
mod error;
mod filter;
#[allow(unsafe_code)]
mod kernel;
pub mod limits;
#[cfg(feature = "measure")]
#[cfg_attr(docsrs, doc(cfg(feature = "measure")))]
pub mod measure;
mod ratio;
mod table;

#[cfg(feature = "internals")]
#[cfg_attr(docsrs, doc(cfg(feature = "internals")))]
pub mod internals;

pub use engine::{offline, segments, Progress, StreamConverter};
pub use error::{Error, Result};
pub use filter::{Design, DesignReport, FilterSpec, Phase, GROUP_DELAY_REF_HZ};
pub use kernel::{Kernel, Sample};
pub use limits::{MAX_CHANNELS, MAX_RATE};
pub use ratio::RatePair;
