//! Minimal WAV reading and writing for `sweep` and `grade` (hound), until the shared WAV
//! layer is used here: mono or multichannel PCM 16/24/32-bit and 32-bit float.

use std::path::Path;

use anyhow::{bail, Context, Result};

use crate::output::temp_path_for;

/// How samples are stored.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    /// Signed integers of this many bits (16, 24 or 32), rounded to nearest.
    Int(u16),
    /// 32-bit float.
    Float,
}

/// Write mono `samples` (full scale = 1.0) at `rate` to `path`, through a temporary file.
pub fn write_mono(
    path: &Path,
    rate: u32,
    samples: &[f64],
    format: Format,
    force: bool,
) -> Result<()> {
    if path.exists() && !force {
        bail!(
            "{}: already exists (use --force to overwrite)",
            path.display()
        );
    }
    let (bits, kind) = match format {
        Format::Int(b) => (b, hound::SampleFormat::Int),
        Format::Float => (32, hound::SampleFormat::Float),
    };
    let spec = hound::WavSpec {
        channels: 1,
        sample_rate: rate,
        bits_per_sample: bits,
        sample_format: kind,
    };
    let tmp = temp_path_for(path);
    let result = (|| -> Result<()> {
        let mut w = hound::WavWriter::create(&tmp, spec)
            .with_context(|| format!("{}: cannot create", tmp.display()))?;
        match format {
            Format::Float => {
                for &v in samples {
                    w.write_sample(v as f32)?;
                }
            }
            Format::Int(b) => {
                let scale = f64::from(1u32 << (b - 1));
                let (lo, hi) = (-scale, scale - 1.0);
                for &v in samples {
                    let q = (v * scale).round().clamp(lo, hi) as i32;
                    w.write_sample(q)?;
                }
            }
        }
        w.finalize()?;
        std::fs::rename(&tmp, path).with_context(|| format!("{}: cannot write", path.display()))
    })();
    if result.is_err() {
        let _ = std::fs::remove_file(&tmp);
    }
    result
}

/// A decoded WAV file: rate and planar channels in `f64` (full scale = 1.0).
#[derive(Debug)]
pub struct Decoded {
    /// Sample rate, Hz.
    pub rate: u32,
    /// One vector per channel.
    pub channels: Vec<Vec<f64>>,
}

/// Read a whole WAV file.
pub fn read(path: &Path) -> Result<Decoded> {
    let name = path.display();
    let mut r =
        hound::WavReader::open(path).with_context(|| format!("{name}: cannot read as WAV"))?;
    let spec = r.spec();
    if spec.channels == 0 || spec.sample_rate == 0 {
        bail!(
            "{name}: the header gives {} channels at {} Hz",
            spec.channels,
            spec.sample_rate
        );
    }
    let n = usize::from(spec.channels);
    let mut channels = vec![Vec::with_capacity(r.len() as usize / n); n];
    match spec.sample_format {
        hound::SampleFormat::Float => {
            for (i, s) in r.samples::<f32>().enumerate() {
                let v = f64::from(s.with_context(|| format!("{name}: truncated or corrupt"))?);
                if !v.is_finite() {
                    bail!("{name}: sample {} is not a finite number", i / n);
                }
                channels[i % n].push(v);
            }
        }
        hound::SampleFormat::Int => {
            if !(8..=32).contains(&spec.bits_per_sample) {
                bail!(
                    "{name}: {}-bit integer samples are not supported",
                    spec.bits_per_sample
                );
            }
            let scale = 1.0 / f64::from(1u32 << (spec.bits_per_sample - 1));
            for (i, s) in r.samples::<i32>().enumerate() {
                let v = s.with_context(|| format!("{name}: truncated or corrupt"))?;
                channels[i % n].push(f64::from(v) * scale);
            }
        }
    }
    Ok(Decoded {
        rate: spec.sample_rate,
        channels,
    })
}
