//! WAV files: a streaming reader that checks what the header claims before trusting it and
//! decodes every layout by the specifications' rules (its own header parsing), a streaming
//! writer that requantizes (with TPDF dither) and counts what had to be clipped, and the
//! pieces they share.
//!
//! Samples travel as floating point with full scale at ±1.0: an integer code `c` of an
//! `N`-bit file is `c / 2^(N-1)`.
//!
//! ```no_run
//! use resample_cli::audio::wav::{NonFinite, WavReader, WavWriter, WriterOptions};
//! let mut reader = WavReader::open("in.wav".as_ref())?;
//! let info = reader.info().clone();
//! let opts = WriterOptions::new(info.sample_rate, info.channels, info.encoding);
//! let mut writer = WavWriter::create("out.wav".as_ref(), &opts)?;
//! let mut block = vec![0.0_f64; 4096 * usize::from(info.channels)];
//! loop {
//!     let frames = reader.read_frames(&mut block, NonFinite::Refuse)?;
//!     if frames == 0 {
//!         break;
//!     }
//!     writer.write_frames(&block[..frames * usize::from(info.channels)])?;
//! }
//! let stats = writer.finish()?;
//! println!("peak {:.2} dBFS, {} clipped", stats.peak_dbfs(), stats.clipped);
//! # Ok::<(), Box<dyn std::error::Error>>(())
//! ```

mod chunks;
mod dither;
mod encoding;
mod error;
pub mod metadata;
mod quantize;
mod reader;
mod rf64;
mod source;
mod writeback;
mod writer;

pub use dither::{Dither, Tpdf, DITHER_SEED};
pub use encoding::Encoding;
pub use error::WavError;
pub use metadata::{Chunk, MetadataPolicy, MetadataSummary, Retiming};
pub use quantize::{LevelStats, Quantizer};
pub use reader::{NonFinite, WavInfo, WavReader};
pub(crate) use writer::encode_samples;
pub use writer::{WavWriter, WriterOptions};
