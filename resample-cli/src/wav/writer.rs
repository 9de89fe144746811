//! Streaming WAV writer: requantizes floating-point frames (full scale ±1.0) to the output
//! encoding with TPDF dither, counts overs and clips, and writes through a temporary file
//! that becomes the final file only on [`WavWriter::finish`].

use std::fs::File;
use std::io::BufWriter;
use std::path::Path;

use resample_core::Sample;

use super::dither::Dither;
use super::encoding::Encoding;
use super::error::WavError;
use super::limits::check_riff_size;
use super::quantize::{LevelStats, Quantizer};
use crate::staged::StagedFile;

/// Write buffer size.
const WRITE_BUFFER: usize = 256 << 10;

/// How to write a WAV file.
#[derive(Debug, Clone, PartialEq)]
pub struct WriterOptions {
    /// Sample rate, Hz.
    pub sample_rate: u32,
    /// Channels.
    pub channels: u16,
    /// Output encoding.
    pub encoding: Encoding,
    /// Dither for integer output (applies to 24 bits or fewer).
    pub dither: Dither,
    /// Replace an existing file.
    pub force: bool,
    /// Frames that will be written, if known: checked against the RIFF size limit before
    /// anything is created.
    pub expected_frames: Option<u64>,
}

impl WriterOptions {
    /// Options with TPDF dither, no overwrite, unknown length.
    pub fn new(sample_rate: u32, channels: u16, encoding: Encoding) -> Self {
        Self {
            sample_rate,
            channels,
            encoding,
            dither: Dither::Tpdf,
            force: false,
            expected_frames: None,
        }
    }
}

/// A WAV file being written.
pub struct WavWriter {
    inner: Option<hound::WavWriter<BufWriter<File>>>,
    staged: StagedFile,
    quant: Quantizer,
    channels: u16,
    frames: u64,
}

impl std::fmt::Debug for WavWriter {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("WavWriter")
            .field("staged", &self.staged)
            .field("frames", &self.frames)
            .finish_non_exhaustive()
    }
}

fn map_write(e: hound::Error) -> WavError {
    match e {
        hound::Error::IoError(io) => WavError::io("cannot write", io),
        other => WavError::Malformed(other.to_string()),
    }
}

impl WavWriter {
    /// Start writing `path` (through a temporary file beside it).
    pub fn create(path: &Path, opts: &WriterOptions) -> Result<Self, WavError> {
        if opts.channels == 0 {
            return Err(WavError::Malformed("0 channels".into()));
        }
        if let Some(frames) = opts.expected_frames {
            check_riff_size(frames, opts.channels, opts.encoding)?;
        }
        let (staged, file) = StagedFile::create(path, opts.force)?;
        let spec = opts.encoding.spec(opts.sample_rate, opts.channels);
        let inner = hound::WavWriter::new(BufWriter::with_capacity(WRITE_BUFFER, file), spec)
            .map_err(map_write)?;
        Ok(Self {
            inner: Some(inner),
            staged,
            quant: Quantizer::new(opts.encoding, opts.dither),
            channels: opts.channels,
            frames: 0,
        })
    }

    /// Whether dither is being added.
    pub fn dithers(&self) -> bool {
        self.quant.dithers()
    }

    /// Frames written so far.
    pub fn frames(&self) -> u64 {
        self.frames
    }

    /// Write interleaved frames.
    pub fn write_frames<T: Sample>(&mut self, samples: &[T]) -> Result<(), WavError> {
        let ch = usize::from(self.channels);
        if samples.len() % ch != 0 {
            return Err(WavError::PartialFrame {
                len: samples.len(),
                channels: self.channels,
            });
        }
        let Some(w) = self.inner.as_mut() else {
            return Err(WavError::Malformed("writer already finished".into()));
        };
        match self.quant.encoding() {
            Encoding::Float32 => {
                for &s in samples {
                    w.write_sample(self.quant.to_float(s.to_f64_exact()))
                        .map_err(map_write)?;
                }
            }
            Encoding::Int(_) => {
                for &s in samples {
                    w.write_sample(self.quant.to_code(s.to_f64_exact()))
                        .map_err(map_write)?;
                }
            }
        }
        self.frames += (samples.len() / ch) as u64;
        Ok(())
    }

    /// Level figures so far.
    pub fn stats(&self) -> LevelStats {
        self.quant.stats()
    }

    /// Complete the header, make the file durable and move it to its final name.
    pub fn finish(mut self) -> Result<LevelStats, WavError> {
        if let Some(w) = self.inner.take() {
            w.finalize().map_err(map_write)?;
        }
        let stats = self.quant.stats();
        self.staged.commit()?;
        Ok(stats)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::wav::{NonFinite, WavReader};

    #[test]
    fn round_trip_every_encoding() {
        let dir = tempfile::tempdir().unwrap();
        for enc in [
            Encoding::Int(8),
            Encoding::Int(16),
            Encoding::Int(24),
            Encoding::Int(32),
            Encoding::Float32,
        ] {
            for channels in [1u16, 2, 6] {
                let path = dir.path().join(format!("{enc}-{channels}.wav"));
                let mut opts = WriterOptions::new(8000, channels, enc);
                opts.dither = Dither::None;
                let mut w = WavWriter::create(&path, &opts).unwrap();
                let frames = 1000;
                let x: Vec<f64> = (0..frames * usize::from(channels))
                    .map(|i| ((i * 7919) % 2001) as f64 / 1000.0 - 1.0)
                    .collect();
                w.write_frames(&x).unwrap();
                w.finish().unwrap();
                let mut r = WavReader::open(&path).unwrap();
                assert_eq!(r.info().encoding, enc);
                assert_eq!(r.info().channels, channels);
                assert_eq!(r.info().frames, frames as u64);
                let mut y = vec![0.0_f64; x.len()];
                assert_eq!(r.read_frames(&mut y, NonFinite::Refuse).unwrap(), frames);
                let lsb = 1.0 / enc.scale();
                let tol = if enc.is_float() { 1e-7 } else { lsb };
                for (a, b) in x.iter().zip(&y) {
                    // Positive full scale is one LSB short of +1.0.
                    assert!((a - b).abs() <= tol + 1e-12, "{enc}: {a} vs {b}");
                }
            }
        }
    }
}
