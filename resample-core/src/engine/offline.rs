//! Whole-signal conversion: delay compensated, exact length `ceil(n L / M)`, output sample
//! `m` at input time `m M / L`, zero outside the input.

use crate::par::*;

use super::render::{reach, render, History};
use crate::kernel::{Kernel, KernelFns, Sample};
use crate::table::GroupTable;
use crate::{Design, Error, Result, StagePlan};

#[cfg(doc)]
use crate::StreamConverter;

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
pub fn convert_planar<T: Sample, I: AsRef<[T]> + Sync>(
    design: &Design,
    input: &[I],
) -> Result<Vec<Vec<T>>> {
    convert_planar_with(design, input, Kernel::detect())
}

/// [`convert_planar`] with a chosen kernel.
///
/// The output is cut into segments of [`SEGMENT_FRAMES`] frames and channels into pairs;
/// the pieces are computed in parallel on rayon's current thread pool (install a pool to
/// limit the threads; in sequence without the feature `rayon`). Each piece reads the input it needs (its segment's span plus the
/// filter's history, zero outside the signal), so the result is bit-identical to one
/// [`StreamConverter`] run over the whole signal with the same kernel, whatever the
/// number of threads.
pub fn convert_planar_with<T: Sample, I: AsRef<[T]> + Sync>(
    design: &Design,
    input: &[I],
    kernel: Kernel,
) -> Result<Vec<Vec<T>>> {
    let channels = input.len();
    if channels == 0 || channels > crate::MAX_CHANNELS {
        return Err(Error::ChannelsOutOfRange { channels });
    }
    let fns = KernelFns::<T>::new(kernel)?;
    let n = input[0].as_ref().len();
    for c in input {
        if c.as_ref().len() != n {
            return Err(Error::BufferShape {
                what: "planar input channel length",
                expected: n,
                got: c.as_ref().len(),
            });
        }
    }
    let total = design.pair().output_len(n as u64);
    let total = usize::try_from(total).map_err(|_| Error::BufferShape {
        what: "output length (fits in memory)",
        expected: usize::MAX,
        got: usize::MAX,
    })?;
    let table = GroupTable::<T>::for_design(design, fns.lanes())?;
    let mut out = vec![vec![T::zero(); total]; channels];
    // One task per (channel pair, segment of output frames).
    let mut tasks: Vec<(usize, usize, Vec<&mut [T]>)> = Vec::new();
    let mut rest: &mut [Vec<T>] = &mut out;
    let mut c0 = 0;
    while !rest.is_empty() {
        let take = rest.len().min(2);
        let (group, tail) = rest.split_at_mut(take);
        rest = tail;
        let mut iters: Vec<_> = group
            .iter_mut()
            .map(|v| v.chunks_mut(SEGMENT_FRAMES))
            .collect();
        let mut seg = 0;
        loop {
            let parts: Vec<&mut [T]> = iters.iter_mut().filter_map(Iterator::next).collect();
            if parts.len() != take {
                break;
            }
            tasks.push((c0, seg * SEGMENT_FRAMES, parts));
            seg += 1;
        }
        c0 += take;
    }
    tasks
        .into_par_iter()
        .try_for_each(|(c, first, mut parts)| {
            let ins: Vec<&[T]> = input[c..c + parts.len()]
                .iter()
                .map(AsRef::as_ref)
                .collect();
            segment(&table, &fns, &ins, first as u64, &mut parts)
        })?;
    Ok(out)
}

/// Output frames per parallel piece of [`convert_planar_with`].
pub const SEGMENT_FRAMES: usize = 1 << 15;

/// Outputs `first..first + outs[0].len()` of the channels `ins`, into `outs`.
fn segment<T: Sample>(
    table: &GroupTable<T>,
    fns: &KernelFns<T>,
    ins: &[&[T]],
    first: u64,
    outs: &mut [&mut [T]],
) -> Result<()> {
    let frames = outs.first().map_or(0, |o| o.len());
    if frames == 0 {
        return Ok(());
    }
    // What the groups of the segment read, whole periods at its ends included.
    let (start, stop) = reach(table, first, frames);
    let stride = (stop - start) as usize;
    let n = ins.first().map_or(0, |i| i.len()) as i64;
    let mut hist = vec![T::zero(); stride * ins.len()];
    // Copy the part of the input inside the signal; the rest stays zero.
    let (lo, hi) = (start.max(0), stop.min(n));
    if lo < hi {
        for (h, x) in hist.chunks_exact_mut(stride).zip(ins) {
            let (a, b) = ((lo - start) as usize, (hi - start) as usize);
            h[a..b].copy_from_slice(&x[lo as usize..hi as usize]);
        }
    }
    let history = History {
        data: &hist,
        stride,
        channels: ins.len(),
        base: start,
    };
    let mut planar = vec![T::zero(); frames * ins.len()];
    let mut tmp = vec![T::zero(); super::render::TMP];
    render(table, fns, &history, first, frames, &mut planar, &mut tmp)?;
    for (o, src) in outs.iter_mut().zip(planar.chunks_exact(frames)) {
        o.copy_from_slice(src);
    }
    Ok(())
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

/// Convert planar channels through every stage of a [`StagePlan`], one after the other
/// over the whole signal, and keep exactly `ceil(n L / M)` frames of the overall pair
/// (the last stage's tail may run one frame past it). Each stage compensates its own
/// delay, so the output is aligned as a single stage's is; bit-identical to a
/// [`crate::ChainConverter`] run over the whole signal with the same kernel.
pub fn convert_plan_planar<T: Sample, I: AsRef<[T]> + Sync>(
    plan: &StagePlan,
    input: &[I],
) -> Result<Vec<Vec<T>>> {
    convert_plan_planar_with(plan, input, Kernel::detect())
}

/// [`convert_plan_planar`] with a chosen kernel.
pub fn convert_plan_planar_with<T: Sample, I: AsRef<[T]> + Sync>(
    plan: &StagePlan,
    input: &[I],
    kernel: Kernel,
) -> Result<Vec<Vec<T>>> {
    let channels = input.len();
    if channels == 0 || channels > crate::MAX_CHANNELS {
        return Err(Error::ChannelsOutOfRange { channels });
    }
    let n = input[0].as_ref().len();
    if let Some(c) = input.iter().find(|c| c.as_ref().len() != n) {
        return Err(Error::BufferShape {
            what: "planar input channel length",
            expected: n,
            got: c.as_ref().len(),
        });
    }
    let stage = |i: usize, x: &[&[T]]| -> Result<Vec<Vec<T>>> {
        let d = &plan.stages()[i];
        if plan.half_band_stage() == Some(i) {
            Ok(super::halfband::HalfBand::convert_whole(d, x))
        } else {
            convert_planar_with(d, x, kernel)
        }
    };
    // Two stages run over the signal with `edge_frames` zeros either side, and the
    // outputs of the leading zeros are dropped (see `StagePlan::edge_frames`).
    let pad = usize::try_from(plan.edge_frames()).unwrap_or(usize::MAX);
    let padded: Vec<Vec<T>> = if pad > 0 {
        input
            .iter()
            .map(|c| {
                let mut v = Vec::with_capacity(n + 2 * pad);
                v.resize(pad, T::zero());
                v.extend_from_slice(c.as_ref());
                v.resize(n + 2 * pad, T::zero());
                v
            })
            .collect()
    } else {
        Vec::new()
    };
    let x: Vec<&[T]> = if pad > 0 {
        padded.iter().map(Vec::as_slice).collect()
    } else {
        input.iter().map(AsRef::as_ref).collect()
    };
    let mut y = stage(0, &x)?;
    drop(padded);
    for i in 1..plan.stages().len() {
        let x: Vec<&[T]> = y.iter().map(Vec::as_slice).collect();
        y = stage(i, &x)?;
    }
    let lead = usize::try_from(plan.edge_output_frames()).unwrap_or(usize::MAX);
    let keep = plan.pair().output_len(n as u64) as usize;
    for c in &mut y {
        c.drain(..lead.min(c.len()));
        c.truncate(keep);
    }
    Ok(y)
}

/// Stage `stage` of a [`StagePlan`] alone over planar channels, by the engine the plan's
/// conversion uses for it (the half-band engine for the half-band stage): for checking the
/// stages one by one. `None` when the plan has no such stage.
pub fn convert_stage_planar<T: Sample, I: AsRef<[T]> + Sync>(
    plan: &StagePlan,
    stage: usize,
    input: &[I],
) -> Option<Result<Vec<Vec<T>>>> {
    let d = plan.stages().get(stage)?;
    Some(if plan.half_band_stage() == Some(stage) {
        let x: Vec<&[T]> = input.iter().map(AsRef::as_ref).collect();
        if x.is_empty() || x.len() > crate::MAX_CHANNELS {
            Err(Error::ChannelsOutOfRange { channels: x.len() })
        } else if let Some(c) = x.iter().find(|c| c.len() != x[0].len()) {
            Err(Error::BufferShape {
                what: "planar input channel length",
                expected: x[0].len(),
                got: c.len(),
            })
        } else {
            Ok(super::halfband::HalfBand::convert_whole(d, &x))
        }
    } else {
        convert_planar(d, input)
    })
}

/// One channel through a [`StagePlan`] (see [`convert_plan_planar`]).
pub fn convert_plan<T: Sample>(plan: &StagePlan, input: &[T]) -> Vec<T> {
    match convert_plan_planar(plan, &[input]) {
        Ok(mut v) => v.pop().unwrap_or_default(),
        Err(_) => Vec::new(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::{FilterSpec, StreamConverter};

    /// Deterministic noise in [-1, 1).
    fn noise<T: Sample>(n: usize, seed: u64) -> Vec<T> {
        let mut s = seed | 1;
        (0..n)
            .map(|_| {
                s ^= s << 13;
                s ^= s >> 7;
                s ^= s << 17;
                T::from_f64_lossy((s >> 11) as f64 / (1u64 << 52) as f64 - 1.0)
            })
            .collect()
    }

    /// The sequential reference: one stream converter, odd chunk sizes, then flush.
    fn sequential<T: Sample>(design: &Design, input: &[Vec<T>], kernel: Kernel) -> Vec<Vec<T>> {
        let ch = input.len();
        let mut conv = StreamConverter::<T>::with_kernel(design, ch, kernel).unwrap();
        let n = input[0].len();
        let total = design.pair().output_len(n as u64) as usize;
        let mut out = vec![vec![T::zero(); total]; ch];
        let (mut read, mut written, mut step) = (0, 0, 1);
        while read < n {
            let end = (read + step).min(n);
            let ins: Vec<&[T]> = input.iter().map(|c| &c[read..end]).collect();
            let mut outs: Vec<&mut [T]> = out.iter_mut().map(|c| &mut c[written..]).collect();
            let p = conv.process_planar(&ins, &mut outs).unwrap();
            read += p.frames_read;
            written += p.frames_written;
            step = step * 7 % 5003 + 1;
        }
        loop {
            let mut outs: Vec<&mut [T]> = out.iter_mut().map(|c| &mut c[written..]).collect();
            let k = conv.flush_planar(&mut outs).unwrap();
            if k == 0 {
                break;
            }
            written += k;
        }
        assert_eq!(written, total);
        out
    }

    fn bits<T: Sample>(v: &[Vec<T>]) -> Vec<Vec<u64>> {
        v.iter()
            .map(|c| c.iter().map(|x| x.to_f64_exact().to_bits()).collect())
            .collect()
    }

    fn parallel_matches_sequential<T: Sample>() {
        for &(a, b, db) in &[
            (44_100, 48_000, 100.0),
            (48_000, 44_100, 60.0),
            (44_100, 16_000, 80.0),
        ] {
            let design = FilterSpec::new(a, b).stopband_db(db).design().unwrap();
            for &(channels, frames) in &[
                (1, 3 * SEGMENT_FRAMES + 1234),
                (2, 70_001),
                (3, 40_000),
                (1, 5),
            ] {
                let input: Vec<Vec<T>> = (0..channels)
                    .map(|c| noise(frames, 11 + c as u64))
                    .collect();
                for kernel in Kernel::available() {
                    let par = convert_planar_with(&design, &input, kernel).unwrap();
                    let seq = sequential(&design, &input, kernel);
                    assert!(
                        bits(&par) == bits(&seq),
                        "{a}->{b} {channels} ch {frames} frames, {}",
                        kernel.name()
                    );
                }
            }
        }
    }

    #[test]
    fn parallel_offline_is_bit_identical_to_one_stream_f32() {
        parallel_matches_sequential::<f32>();
    }

    #[test]
    fn parallel_offline_is_bit_identical_to_one_stream_f64() {
        parallel_matches_sequential::<f64>();
    }

    #[cfg(feature = "rayon")]
    #[test]
    fn thread_count_does_not_change_a_bit() {
        let design = FilterSpec::new(48_000, 44_100)
            .stopband_db(120.0)
            .design()
            .unwrap();
        let input: Vec<Vec<f32>> = (0..2).map(|c| noise(150_000, 5 + c)).collect();
        let one = rayon::ThreadPoolBuilder::new()
            .num_threads(1)
            .build()
            .unwrap()
            .install(|| convert_planar(&design, &input).unwrap());
        let many = rayon::ThreadPoolBuilder::new()
            .num_threads(4)
            .build()
            .unwrap()
            .install(|| convert_planar(&design, &input).unwrap());
        assert!(bits(&one) == bits(&many));
    }

    #[test]
    fn empty_and_bad_inputs() {
        let design = FilterSpec::new(44_100, 48_000).design().unwrap();
        let out = convert_planar::<f32, Vec<f32>>(&design, &[vec![], vec![]]).unwrap();
        assert_eq!(out, vec![Vec::<f32>::new(), Vec::new()]);
        assert!(convert_planar::<f32, Vec<f32>>(&design, &[]).is_err());
        assert!(convert_planar(&design, &[vec![0.0_f32; 3], vec![0.0; 4]]).is_err());
    }
}
