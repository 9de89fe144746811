//! Whole-signal conversion: delay compensated, exact length `ceil(n L / M)`, output sample
//! `m` at input time `m M / L`, zero outside the input.

use crate::kernel::{Kernel, Sample};
use crate::{Design, Error, Result, StreamConverter};

/// Convert one channel.
///
/// ```
/// use resample_core::{offline, FilterSpec};
/// let design = FilterSpec::new(22_050, 44_100).stopband_db(80.0).design()?;
/// let y = offline::convert(&design, &[0.5_f64; 100]);
/// assert_eq!(y.len(), 200);
/// assert!((y[100] - 0.5).abs() < 1e-3);
/// # Ok::<(), resample_core::Error>(())
/// ```
pub fn convert<T: Sample>(design: &Design, input: &[T]) -> Vec<T> {
    convert_with(design, input, Kernel::detect())
}

/// [`convert`] with a chosen kernel.
pub fn convert_with<T: Sample>(design: &Design, input: &[T], kernel: Kernel) -> Vec<T> {
    let kernel = if kernel.is_available() {
        kernel
    } else {
        Kernel::Scalar
    };
    // One channel and an available kernel: construction cannot fail.
    match convert_planar_with(design, &[input], kernel) {
        Ok(mut v) => v.pop().unwrap_or_default(),
        Err(_) => Vec::new(),
    }
}

/// Convert planar channels (all the same length).
pub fn convert_planar<T: Sample, I: AsRef<[T]>>(
    design: &Design,
    input: &[I],
) -> Result<Vec<Vec<T>>> {
    convert_planar_with(design, input, Kernel::detect())
}

/// [`convert_planar`] with a chosen kernel.
pub fn convert_planar_with<T: Sample, I: AsRef<[T]>>(
    design: &Design,
    input: &[I],
    kernel: Kernel,
) -> Result<Vec<Vec<T>>> {
    let mut conv = StreamConverter::<T>::with_kernel(design, input.len(), kernel)?;
    let n = input.first().map_or(0, |c| c.as_ref().len());
    let total = design.pair().output_len(n as u64);
    let total = usize::try_from(total).map_err(|_| Error::BufferShape {
        what: "output length (fits in memory)",
        expected: usize::MAX,
        got: usize::MAX,
    })?;
    let mut out = vec![vec![T::zero(); total]; input.len()];
    let mut read = 0;
    let mut written = 0;
    while read < n {
        let ins: Vec<&[T]> = input.iter().map(|c| &c.as_ref()[read..]).collect();
        let mut outs: Vec<&mut [T]> = out.iter_mut().map(|c| &mut c[written..]).collect();
        let p = conv.process_planar(&ins, &mut outs)?;
        read += p.frames_read;
        written += p.frames_written;
        if p.frames_read == 0 && p.frames_written == 0 {
            break;
        }
    }
    loop {
        let mut outs: Vec<&mut [T]> = out.iter_mut().map(|c| &mut c[written..]).collect();
        let k = conv.flush_planar(&mut outs)?;
        written += k;
        if k == 0 {
            break;
        }
    }
    Ok(out)
}

/// Convert interleaved frames of `channels` channels.
pub fn convert_interleaved<T: Sample>(
    design: &Design,
    channels: usize,
    input: &[T],
) -> Result<Vec<T>> {
    convert_interleaved_with(design, channels, input, Kernel::detect())
}

/// [`convert_interleaved`] with a chosen kernel.
pub fn convert_interleaved_with<T: Sample>(
    design: &Design,
    channels: usize,
    input: &[T],
    kernel: Kernel,
) -> Result<Vec<T>> {
    if channels == 0 || channels > crate::MAX_CHANNELS {
        return Err(Error::ChannelsOutOfRange { channels });
    }
    if !input.len().is_multiple_of(channels) {
        return Err(Error::BufferShape {
            what: "interleaved input length (multiple of channels)",
            expected: input.len() - input.len() % channels,
            got: input.len(),
        });
    }
    let planar: Vec<Vec<T>> = (0..channels)
        .map(|c| input.iter().skip(c).step_by(channels).copied().collect())
        .collect();
    let out = convert_planar_with(design, &planar, kernel)?;
    let frames = out.first().map_or(0, Vec::len);
    let mut inter = vec![T::zero(); frames * channels];
    for (c, chan) in out.iter().enumerate() {
        for (f, &v) in chan.iter().enumerate() {
            inter[f * channels + c] = v;
        }
    }
    Ok(inter)
}
