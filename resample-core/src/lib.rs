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
//! * [`FilterSpec::plan`] → [`StagePlan`] → [`ChainConverter`]: for large ratios two stages
//!   (a short 2:1 stage before the polyphase stage, or 1:2 after it) when the cost model
//!   says they are cheaper; [`offline::convert_plan_planar`] for whole signals.
//! * [`GlideDesign`] → [`GlideConverter`]: any real ratio, changed while it runs by a
//!   linear glide, for drifting clocks (interpolated coefficient table); [`DriftFollower`]
//!   steers that ratio from the fill of the FIFO between two clock domains.
//! * [`offline`]: whole-signal conversion, delay compensated, exact length; [`segments`]:
//!   one long conversion cut into pieces for several cores, with the same result.
//! * [`Kernel`]: the SIMD kernel a converter uses, detected once at construction (or forced,
//!   e.g. to the scalar reference).
//! * [`limits`]: the accepted ranges and the defaults.
//! * `measure` (feature `measure`): the sweep-through test and its analysis, and the
//!   baseline methods (sample hold, linear interpolation, ...) it is validated on.
//!
//! Designs and whole-signal conversions use rayon's current thread pool (feature `rayon`,
//! on by default). Built with `default-features = false` the crate does not depend on
//! rayon and runs the same loops in sequence, with bit-identical results.
//!
//! ## Adding it to a project
//!
//! The crate is not on a registry; depend on it by path or by git (the repository's URL),
//! with or without the `measure` feature:
//!
//! ```toml
//! [dependencies]
//! resample-core = { path = "../rerate/resample-core" }
//! # or: resample-core = { git = "<repository URL>", features = ["measure"] }
//! ```
//!
//! ## Features
//!
//! * `measure` (off by default): the `measure`
//!   module, the sweep-through test `rerate verify` and `rerate grade` run. It makes an
//!   exponential sweep (`measure::Sweep`), runs any converter on it or
//!   takes another program's output of it, and reports the rejection of unwanted output,
//!   the passband ripple, the -0.1 dB and -3 dB bandwidths and the latency
//!   (`measure::Measurement`); `measure::Baseline` holds the simple methods (sample hold,
//!   linear interpolation, ...) the analysis is validated on. Build with
//!   `--features measure` (or `features = ["measure"]` in the dependency) and see the
//!   example below.
//! * `internals`: the tap tables and kernel entry points, for the project's own benchmarks.
//!   Not a stable API: applications should not enable it.
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
//!
//! ## Streaming (a live audio callback)
//!
//! Everything that allocates or takes time happens once, outside the audio callback: the
//! design (it measures its own prototype, which takes longer the longer the filter), the
//! converter (it allocates its tap table, history and scratch) and the buffers, sized with
//! [`StreamConverter::max_output_frames`] for the largest chunk the host will ever pass.
//! Inside the callback only `process_interleaved` / `process_planar` run: they do not
//! allocate, lock or panic, and with that much room each call reads its whole chunk.
//! The number of frames out varies from call to call: none until the filter's look-ahead
//! ([`StreamConverter::latency_input_frames`]) has arrived, then about `chunk × L / M`, one
//! more or less; a device that wants a fixed number of frames per callback takes them
//! through a FIFO (or asks [`StreamConverter::input_frames_for_output`] how much to feed). At the end
//! of the stream, `flush_*` until it returns 0 delivers the tail; `reset` starts a new
//! stream with the same converter without allocating.
//!
//! ```
//! use resample_core::{FilterSpec, StreamConverter};
//!
//! const CHANNELS: usize = 2;
//! const MAX_CHUNK: usize = 480; // the most frames the host passes per callback
//!
//! // Outside the callback: design, converter, buffers.
//! let design = FilterSpec::new(48_000, 44_100).stopband_db(110.0).design()?;
//! let mut conv = StreamConverter::<f32>::new(&design, CHANNELS)?;
//! let mut out = vec![0.0_f32; conv.max_output_frames(MAX_CHUNK) * CHANNELS];
//!
//! // Inside the callback: one call per chunk of interleaved input, whatever its size.
//! let mut delivered: Vec<f32> = Vec::new(); // stands for the device's FIFO
//! let mut callback = |conv: &mut StreamConverter<f32>, chunk: &[f32]| {
//!     let p = conv.process_interleaved(chunk, &mut out)?;
//!     debug_assert_eq!(p.frames_read * CHANNELS, chunk.len()); // room was enough
//!     delivered.extend_from_slice(&out[..p.frames_written * CHANNELS]);
//!     Ok::<(), resample_core::Error>(())
//! };
//! let input = vec![0.25_f32; 48_000 * CHANNELS]; // one second (demo signal)
//! let mut pos = 0;
//! for size in [480, 64, 1, 300, 480].iter().cycle() {
//!     if pos == input.len() {
//!         break;
//!     }
//!     let end = (pos + size * CHANNELS).min(input.len());
//!     callback(&mut conv, &input[pos..end])?;
//!     pos = end;
//! }
//!
//! // End of stream (outside the callback, or in it once the source has ended).
//! let mut tail = vec![0.0_f32; 256 * CHANNELS];
//! loop {
//!     let n = conv.flush_interleaved(&mut tail)?;
//!     if n == 0 {
//!         break;
//!     }
//!     delivered.extend_from_slice(&tail[..n * CHANNELS]);
//! }
//! assert!(conv.is_finished());
//! // Exactly ceil(n L / M) frames, the same bits as `offline` whatever the chunking.
//! assert_eq!(delivered.len(), 44_100 * CHANNELS);
//! conv.reset(); // ready for the next stream
//! # Ok::<(), resample_core::Error>(())
//! ```
//!
//! ## Measuring (feature `measure`)
//!
//! ```
//! # #[cfg(feature = "measure")]
//! # {
//! use resample_core::measure::{measure_converter, Settings, Sweep};
//! use resample_core::{offline, FilterSpec};
//!
//! let design = FilterSpec::new(48_000, 16_000).stopband_db(100.0).design()?;
//! let sweep = Sweep::new(48_000).seconds(2.0);
//! let m = measure_converter(&sweep, 16_000, &Settings::default(), |x| {
//!     offline::convert(&design, x)
//! })?;
//! assert!(m.rejection_db > 95.0, "{}", m.rejection_db);
//! assert!(m.latency_samples.abs() < 0.01); // offline conversion adds no delay
//! # }
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
mod par;
mod ratio;
mod table;

#[cfg(feature = "internals")]
#[cfg_attr(docsrs, doc(cfg(feature = "internals")))]
pub mod internals;

pub use engine::{
    offline, segments, ChainConverter, DriftFollower, GlideConverter, Progress, StreamConverter,
};
pub use error::{Error, Result};
pub use filter::{
    Design, DesignReport, FilterSpec, GlideBand, GlideDesign, GlideReport, Interpolation, Phase,
    StageChoice, GROUP_DELAY_REF_HZ,
};
pub use filter::{
    StagePlan, HALF_BAND_OVERHEAD_TAPS, HALF_BAND_UP_OVERHEAD_TAPS, OUTPUT_OVERHEAD_TAPS,
    SHORT_STAGE_MARGIN_DB, TWO_STAGE_MAX_COST_FRACTION,
};
pub use kernel::{Kernel, Sample};
pub use limits::{MAX_CHANNELS, MAX_RATE};
pub use ratio::RatePair;
