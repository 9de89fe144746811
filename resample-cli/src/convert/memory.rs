//! A signal held in memory through the streaming converter, in blocks, exactly as
//! [`super::convert_file`] runs it: what `verify` and `tradeoff` measure (the fixed-ratio
//! engine, or the any-ratio engine for a clock correction).

use anyhow::Result;
use resample_core::{ChainConverter, GlideConverter, GlideDesign, Kernel, Sample, StagePlan};

/// Run `x` through the stages of `plan` (one, or two) in `T`, in blocks, as `convert`
/// does: the structure `verify` measures.
pub fn run_plan<T: Sample>(plan: &StagePlan, x: &[f64]) -> Result<Vec<f64>> {
    const BLOCK: usize = 4096;
    let mut conv = ChainConverter::<T>::new(plan, 1)?;
    let total = plan.pair().output_len(x.len() as u64) as usize;
    let mut out = vec![T::zero(); total];
    let input: Vec<T> = x.iter().map(|&v| T::from_f64_lossy(v)).collect();
    let (mut read, mut written) = (0, 0);
    while read < input.len() {
        let end = (read + BLOCK).min(input.len());
        let p = conv.process_planar(&[&input[read..end]], &mut [&mut out[written..]])?;
        read += p.frames_read;
        written += p.frames_written;
        if p.frames_read == 0 && p.frames_written == 0 {
            break;
        }
    }
    loop {
        let k = conv.flush_planar(&mut [&mut out[written..]])?;
        written += k;
        if k == 0 {
            break;
        }
    }
    out.truncate(written);
    Ok(out.iter().map(|v| v.to_f64_exact()).collect())
}

/// Run `x` through the any-ratio engine in `T` at `ratio` (output rate / true input rate),
/// in blocks, as `convert` does: zero added delay, every output whose time falls before the
/// end of the input (the look-ahead filled with zeros by the flush).
pub fn run_glide<T: Sample>(design: &GlideDesign, ratio: f64, x: &[f64]) -> Result<Vec<f64>> {
    const BLOCK: usize = 4096;
    let mut conv = GlideConverter::<T>::with_kernel(design, 1, ratio, Kernel::detect())?;
    let input: Vec<T> = x.iter().map(|&v| T::from_f64_lossy(v)).collect();
    let mut out = Vec::new();
    let mut buf = vec![T::zero(); conv.max_output_frames(BLOCK).max(1)];
    let mut read = 0;
    while read < input.len() {
        let end = (read + BLOCK).min(input.len());
        let p = conv.process_interleaved(&input[read..end], &mut buf)?;
        out.extend_from_slice(&buf[..p.frames_written]);
        read += p.frames_read;
        if p.frames_read == 0 && p.frames_written == 0 {
            break;
        }
    }
    loop {
        let k = conv.flush_interleaved(&mut buf)?;
        out.extend_from_slice(&buf[..k]);
        if k == 0 {
            break;
        }
    }
    Ok(out.iter().map(|v| v.to_f64_exact()).collect())
}
