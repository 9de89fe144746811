//! Cutting one conversion into segments that can be converted at the same time on several
//! cores, each by a converter of its own, with the same result as one converter run over
//! the whole file.
//!
//! Output frame `m` depends only on the input frames under the filter around input time
//! `m M / L`. A segment covers the outputs of the input frames `[a, b)`, `a` and `b`
//! multiples of M (so `a L / M` is a whole output index and the phase pattern starts as
//! at the beginning of the file). Its converter starts from silence at frame
//! `a - P` (`P` a multiple of M at least one filter span), so the history it sees before
//! its first kept output is the file's own; the first `P L / M` outputs, made partly from
//! that silence, are dropped.
//!
//! Two stages ([`SegmentPlan::for_plan`], [`convert_chain_segment`]): the cuts fall on
//! multiples of 2 M input frames, so the half-band stage sees its even and odd frames as
//! at the beginning of the file and the middle rate's frame index is a multiple of the
//! second stage's M (or, up-sampling, the first stage's output index is whole); the
//! re-read covers both stages' spans (the second's brought to input frames), so every
//! kept output is made from the file's own input at every stage.

use super::chain::ChainConverter;
use super::stream::{Progress, StreamConverter};
use crate::ratio::newest_input;
use crate::{Design, Error, Result, Sample, StagePlan};

/// Input samples (frames times channels) per segment, aimed at.
const SEGMENT_SAMPLES: usize = 1 << 16;
/// A segment is at least this many times as long as the input it re-reads before it.
const MIN_SEGMENT_TO_PRIME: usize = 16;
/// Segments longer than this many times the aim are not made (the engine then converts in
/// one piece).
const MAX_OVER_AIM: u64 = 16;

/// How a file of `frames_in` frames is cut.
#[derive(Debug, Clone, Copy)]
pub struct SegmentPlan {
    up: u64,
    down: u64,
    delay: u64,
    frames_in: u64,
    /// Input frames per segment (a multiple of M).
    seg: u64,
    /// Input frames re-read before a segment (a multiple of M).
    prime: u64,
    /// Cut for a two-stage chain: a segment reads `prime` frames past its end too.
    chain: bool,
}

/// One segment: the input it reads and the output it keeps.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[non_exhaustive]
pub struct Segment {
    /// First input frame read.
    pub start: u64,
    /// One past the last input frame read.
    pub end: u64,
    /// Outputs made and dropped first.
    pub skip: usize,
    /// Outputs kept.
    pub keep: usize,
    /// The input reaches the end of the file: the converter is flushed.
    pub last: bool,
}

impl SegmentPlan {
    /// Cuts for `design` over `frames_in` frames of `channels` channels, or `None` when
    /// segments would be too short to be worth it (very many channels, or a filter very
    /// long against the segment).
    pub fn new(design: &Design, frames_in: u64, channels: usize) -> Option<Self> {
        let pair = design.pair();
        let (up, down) = (u64::from(pair.up()), u64::from(pair.down()));
        let span = (design.taps().len() as u64).div_ceil(up) + 1;
        let prime = span.div_ceil(down) * down;
        let aim = (SEGMENT_SAMPLES / channels.max(1)) as u64;
        // Long enough against the re-read, but never many times the aim (memory).
        let seg = aim.max(MIN_SEGMENT_TO_PRIME as u64 * prime).div_ceil(down) * down;
        if seg > MAX_OVER_AIM * aim.max(1) {
            return None;
        }
        Some(Self {
            up,
            down,
            delay: design.delay(),
            frames_in,
            seg,
            prime,
            chain: false,
        })
    }

    /// Cuts for the conversion `plan` runs ([`ChainConverter`]): for one stage exactly
    /// [`SegmentPlan::new`] of that stage; for two, cuts on multiples of 2 M input frames
    /// and a re-read (before and after each segment) of both stages' spans.
    pub fn for_plan(plan: &StagePlan, frames_in: u64, channels: usize) -> Option<Self> {
        if let Some(d) = plan.single() {
            return Self::new(d, frames_in, channels);
        }
        let pair = plan.pair();
        let (up, down) = (u64::from(pair.up()), u64::from(pair.down()));
        let in_rate = u64::from(pair.in_rate());
        // Each stage's span in its own input frames, brought to the overall input rate
        // (rounded up), plus one frame for each.
        let span: u64 = plan
            .stages()
            .iter()
            .map(|d| {
                let p = d.pair();
                let own = (d.taps().len() as u64).div_ceil(u64::from(p.up())) + 1;
                (own * in_rate).div_ceil(u64::from(p.in_rate())) + 1
            })
            .sum();
        let quantum = 2 * down;
        let prime = span.div_ceil(quantum) * quantum;
        let aim = (SEGMENT_SAMPLES / channels.max(1)) as u64;
        let seg = aim
            .max(MIN_SEGMENT_TO_PRIME as u64 * prime)
            .div_ceil(quantum)
            * quantum;
        if seg > MAX_OVER_AIM * aim.max(1) {
            return None;
        }
        Some(Self {
            up,
            down,
            delay: 0,
            frames_in,
            seg,
            prime,
            chain: true,
        })
    }

    /// Number of segments.
    pub fn count(&self) -> u64 {
        self.frames_in.div_ceil(self.seg)
    }

    /// Input frames covered by segment `j` (its share of the file, without the re-read).
    pub fn covered(&self, j: u64) -> u64 {
        let Some(a) = j.checked_mul(self.seg) else {
            return 0;
        };
        (a + self.seg).min(self.frames_in).saturating_sub(a)
    }

    /// Segment `j`, or `None` when `j >= count()`.
    pub fn segment(&self, j: u64) -> Option<Segment> {
        if j >= self.count() {
            return None;
        }
        let a = j * self.seg;
        let b = (a + self.seg).min(self.frames_in);
        let start = a.saturating_sub(self.prime);
        // `start` and `a` are multiples of M: whole output indices.
        let skip = (a - start) * self.up / self.down;
        let out_end = crate::ratio::output_len(b, self.up, self.down);
        let keep = out_end - a * self.up / self.down;
        // Input needed for local output `skip + keep - 1`: the newest input it reads, plus
        // one (the stream's readiness rule).
        let need = if self.chain {
            // The chain's look-ahead is within the re-read's span of every stage.
            b + self.prime - start
        } else if skip + keep == 0 {
            0
        } else {
            newest_input(skip + keep - 1, self.up, self.down, self.delay) as u64 + 1
        };
        let end = (start + need).min(self.frames_in);
        Some(Segment {
            start,
            end,
            skip: skip as usize,
            keep: keep as usize,
            last: end == self.frames_in,
        })
    }
}

/// Convert one segment: `pieces` hold its input frames `[start, end)`, interleaved, in
/// order; `out` gets the kept outputs, interleaved. `conv` is reset first.
pub fn convert_segment<T: Sample>(
    conv: &mut StreamConverter<T>,
    seg: &Segment,
    pieces: &[&[T]],
    out: &mut Vec<T>,
) -> Result<()> {
    run_segment(conv, seg, pieces, out)
}

/// [`convert_segment`] for the converter of a [`StagePlan`] (one stage or two): `pieces`
/// hold its input frames `[start, end)`, interleaved, in order; `out` gets the kept
/// outputs, interleaved. `conv` is reset first.
pub fn convert_chain_segment<T: Sample>(
    conv: &mut ChainConverter<T>,
    seg: &Segment,
    pieces: &[&[T]],
    out: &mut Vec<T>,
) -> Result<()> {
    run_segment(conv, seg, pieces, out)
}

/// [`convert_chain_segment`] handing the kept outputs over as they are made rather than
/// all at the end: `emit` gets them in order, interleaved, in pieces of `piece_frames`
/// frames (the last one shorter), each from `buf` (grown or cut to one piece's size), so
/// that they can be used while still in the cache. `conv` is reset first.
///
/// A converter that takes its runs in whole periods of its group table gets pieces of
/// whole periods: `piece_frames` is rounded down to a multiple of the period when it
/// holds at least one, so that where the kept outputs start on a period no run cuts one.
pub fn convert_chain_segment_pieces<T: Sample>(
    conv: &mut ChainConverter<T>,
    seg: &Segment,
    pieces: &[&[T]],
    piece_frames: usize,
    buf: &mut Vec<T>,
    emit: impl FnMut(&[T]),
) -> Result<()> {
    let piece_frames = match conv.period_frames() {
        Some(p) if p > 0 && piece_frames >= p => piece_frames / p * p,
        _ => piece_frames,
    };
    run_segment_pieces(conv, seg, pieces, piece_frames, buf, emit)
}

/// What a segment needs of a streaming converter (both engines have it).
trait Streaming<T> {
    fn channels(&self) -> usize;
    fn reset(&mut self);
    fn process_interleaved(&mut self, input: &[T], output: &mut [T]) -> Result<Progress>;
    fn flush_interleaved(&mut self, output: &mut [T]) -> Result<usize>;
}

/// Implement [`Streaming`] by the converter's own methods of the same names.
macro_rules! streaming {
    ($c:ident) => {
        impl<T: Sample> Streaming<T> for $c<T> {
            fn channels(&self) -> usize {
                $c::channels(self)
            }
            fn reset(&mut self) {
                $c::reset(self)
            }
            fn process_interleaved(&mut self, input: &[T], output: &mut [T]) -> Result<Progress> {
                $c::process_interleaved(self, input, output)
            }
            fn flush_interleaved(&mut self, output: &mut [T]) -> Result<usize> {
                $c::flush_interleaved(self, output)
            }
        }
    };
}
streaming!(StreamConverter);
streaming!(ChainConverter);

/// The body of [`convert_segment`] and [`convert_chain_segment`].
fn run_segment<T: Sample>(
    conv: &mut impl Streaming<T>,
    seg: &Segment,
    pieces: &[&[T]],
    out: &mut Vec<T>,
) -> Result<()> {
    // One piece as long as the kept outputs: they are written straight into `out`, the
    // dropped ones at its start each over the one before, so nothing is moved afterwards.
    run_segment_pieces(conv, seg, pieces, seg.keep, out, |_| {})?;
    out.truncate(seg.keep * conv.channels());
    Ok(())
}

/// The body of [`convert_chain_segment_pieces`].
fn run_segment_pieces<T: Sample>(
    conv: &mut impl Streaming<T>,
    seg: &Segment,
    pieces: &[&[T]],
    piece_frames: usize,
    buf: &mut Vec<T>,
    mut emit: impl FnMut(&[T]),
) -> Result<()> {
    let ch = conv.channels();
    conv.reset();
    let total = seg.skip + seg.keep;
    let room = piece_frames.max(1);
    if buf.len() >= room * ch {
        buf.truncate(room * ch);
    } else {
        buf.resize(room * ch, T::zero());
    }
    // Outputs made so far (dropped ones counted), and kept ones waiting in `buf`. The
    // outputs to drop are written at the start of `buf`, each over the one before.
    let (mut written, mut held) = (0, 0);
    let dest = |written: usize, held: usize| {
        if written < seg.skip {
            0..(seg.skip - written).min(room) * ch
        } else {
            held * ch..(held + (total - written)).min(room) * ch
        }
    };
    let mut made = |k: usize, written: &mut usize, held: &mut usize, buf: &[T]| {
        if *written >= seg.skip {
            *held += k;
            if *held == room {
                emit(&buf[..room * ch]);
                *held = 0;
            }
        }
        *written += k;
    };
    for piece in pieces {
        let mut read = 0;
        // Past the piece's end too, with no input, while outputs made ready by its input
        // are still waiting for room (a call takes up to a block of input whatever room
        // it has for the outputs).
        while written < total {
            let p = conv.process_interleaved(&piece[read * ch..], &mut buf[dest(written, held)])?;
            read += p.frames_read;
            made(p.frames_written, &mut written, &mut held, buf);
            if p.frames_read == 0 && p.frames_written == 0 {
                break;
            }
        }
    }
    while seg.last && written < total {
        let k = conv.flush_interleaved(&mut buf[dest(written, held)])?;
        if k == 0 {
            break;
        }
        made(k, &mut written, &mut held, buf);
    }
    if written != total {
        return Err(Error::BufferShape {
            what: "output frames of a segment",
            expected: total,
            got: written,
        });
    }
    if held > 0 {
        emit(&buf[..held * ch]);
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::{FilterSpec, Phase};

    /// One converter over everything, in blocks, then flushed.
    fn straight<T: Sample>(design: &Design, x: &[T], ch: usize) -> Vec<T> {
        let mut conv = StreamConverter::<T>::new(design, ch).unwrap();
        let mut y = Vec::new();
        let mut out = vec![T::zero(); 4096 * ch];
        for block in x.chunks(1000 * ch) {
            let mut off = 0;
            while off < block.len() / ch {
                let p = conv
                    .process_interleaved(&block[off * ch..], &mut out)
                    .unwrap();
                y.extend_from_slice(&out[..p.frames_written * ch]);
                off += p.frames_read;
            }
        }
        loop {
            let k = conv.flush_interleaved(&mut out).unwrap();
            if k == 0 {
                break;
            }
            y.extend_from_slice(&out[..k * ch]);
        }
        y
    }

    fn segmented<T: Sample>(design: &Design, x: &[T], ch: usize) -> Option<Vec<T>> {
        let frames = (x.len() / ch) as u64;
        let cuts = SegmentPlan::new(design, frames, ch)?;
        let mut conv = StreamConverter::<T>::new(design, ch).unwrap();
        let mut y = Vec::new();
        let mut out = Vec::new();
        // Backwards, to show the segments do not depend on each other.
        let mut pieces = Vec::new();
        for j in (0..cuts.count()).rev() {
            let s = cuts.segment(j).unwrap();
            // In two pieces, cut anywhere.
            let input = &x[s.start as usize * ch..s.end as usize * ch];
            let cut = (input.len() / ch / 3) * ch;
            let (p, q) = input.split_at(cut);
            convert_segment(&mut conv, &s, &[p, q], &mut out).unwrap();
            pieces.push(out.clone());
        }
        for p in pieces.iter().rev() {
            y.extend_from_slice(p);
        }
        Some(y)
    }

    fn check<T: Sample>(in_rate: u32, out_rate: u32, db: f64, ch: usize, frames: usize) {
        check_phase::<T>(in_rate, out_rate, db, ch, frames, Phase::Linear);
    }

    fn check_phase<T: Sample>(
        in_rate: u32,
        out_rate: u32,
        db: f64,
        ch: usize,
        frames: usize,
        phase: Phase,
    ) {
        let design = FilterSpec::new(in_rate, out_rate)
            .stopband_db(db)
            .phase(phase)
            .design()
            .unwrap();
        let x: Vec<T> = (0..frames * ch)
            .map(|i| {
                let t = (i / ch) as f64;
                T::from_f64_lossy(0.7 * (t * 0.013 * (1 + i % ch) as f64).sin() + 1e-3)
            })
            .collect();
        let a = straight(&design, &x, ch);
        let b = segmented(&design, &x, ch).expect("segments");
        assert_eq!(a.len(), b.len(), "{in_rate}->{out_rate} x{ch}");
        assert_eq!(
            a.len() as u64,
            design.pair().output_len(frames as u64) * ch as u64
        );
        for (i, (p, q)) in a.iter().zip(&b).enumerate() {
            assert_eq!(
                p.to_f64_exact().to_bits(),
                q.to_f64_exact().to_bits(),
                "{in_rate}->{out_rate} x{ch}: sample {i}"
            );
        }
    }

    #[test]
    fn segments_give_the_straight_result_bit_for_bit() {
        check::<f64>(44_100, 48_000, 140.0, 2, 200_000);
        check::<f32>(44_100, 48_000, 110.0, 2, 150_001);
        check::<f64>(48_000, 44_100, 160.0, 1, 150_000);
        check::<f32>(96_000, 44_100, 120.0, 2, 120_007);
        check::<f64>(8_000, 44_100, 100.0, 6, 40_000);
        check::<f32>(44_100, 16_000, 110.0, 2, 100_000);
        check::<f64>(44_056, 48_000, 100.0, 2, 200_000);
        // Small L: the converters' group period is several times L outputs.
        check::<f32>(96_000, 48_000, 120.0, 2, 100_003);
        check::<f64>(48_000, 32_000, 140.0, 1, 150_000);
        check::<f32>(48_000, 16_000, 100.0, 2, 100_000);
        // Many channels: segments shorter than a converter's input block, so that a call
        // takes a segment's whole input while its outputs wait for room.
        check::<f32>(44_100, 48_000, 100.0, 24, 30_000);
        // Shorter than one segment, and exactly one segment long.
        check::<f64>(44_100, 48_000, 100.0, 2, 5_000);
        check::<f64>(44_100, 48_000, 100.0, 2, 32_781);
    }

    #[test]
    fn minimum_phase_segments_give_the_straight_result_bit_for_bit() {
        let min = Phase::Minimum;
        check_phase::<f64>(44_100, 48_000, 140.0, 2, 200_000, min);
        check_phase::<f32>(48_000, 44_100, 120.0, 1, 150_001, min);
        check_phase::<f32>(44_100, 16_000, 110.0, 2, 100_000, min);
        check_phase::<f64>(96_000, 48_000, 120.0, 2, 100_003, min);
        check_phase::<f64>(44_100, 48_000, 100.0, 2, 5_000, min);
    }
}

#[cfg(test)]
mod chain_tests {
    use super::*;
    use crate::{FilterSpec, StageChoice};

    /// One chain over everything, in blocks, then flushed.
    fn straight<T: Sample>(plan: &StagePlan, x: &[T], ch: usize) -> Vec<T> {
        let mut conv = ChainConverter::<T>::new(plan, ch).unwrap();
        let mut y = Vec::new();
        let mut out = vec![T::zero(); conv.max_output_frames(1000).max(1) * ch];
        for block in x.chunks(1000 * ch) {
            let mut off = 0;
            while off < block.len() / ch {
                let p = conv
                    .process_interleaved(&block[off * ch..], &mut out)
                    .unwrap();
                y.extend_from_slice(&out[..p.frames_written * ch]);
                off += p.frames_read;
            }
        }
        loop {
            let k = conv.flush_interleaved(&mut out).unwrap();
            if k == 0 {
                break;
            }
            y.extend_from_slice(&out[..k * ch]);
        }
        y
    }

    fn check<T: Sample>(a: u32, b: u32, db: f64, ch: usize, frames: usize, stages: StageChoice) {
        let plan = FilterSpec::new(a, b)
            .stopband_db(db)
            .stage_choice(stages)
            .plan()
            .unwrap();
        let x: Vec<T> = (0..frames * ch)
            .map(|i| {
                let t = (i / ch) as f64;
                T::from_f64_lossy(0.7 * (t * 0.0131 * (1 + i % ch) as f64).sin() + 1e-3)
            })
            .collect();
        let want = straight(&plan, &x, ch);
        assert_eq!(
            want.len() as u64,
            plan.pair().output_len(frames as u64) * ch as u64
        );
        let cuts = SegmentPlan::for_plan(&plan, frames as u64, ch).expect("segments");
        assert!(cuts.count() > 1 || frames < 70_000, "{a}->{b}: one segment");
        let mut conv = ChainConverter::<T>::new(&plan, ch).unwrap();
        let mut got = Vec::new();
        let mut out = Vec::new();
        let mut parts = Vec::new();
        // Backwards, to show the segments do not depend on each other.
        for j in (0..cuts.count()).rev() {
            let s = cuts.segment(j).unwrap();
            let input = &x[s.start as usize * ch..s.end as usize * ch];
            let cut = (input.len() / ch / 3) * ch;
            let (p, q) = input.split_at(cut);
            convert_chain_segment(&mut conv, &s, &[p, q], &mut out).unwrap();
            // In pieces as they are made: the same outputs.
            let mut joined = Vec::new();
            let mut buf = Vec::new();
            for piece_frames in [1, 777, 4096] {
                joined.clear();
                convert_chain_segment_pieces(&mut conv, &s, &[p, q], piece_frames, &mut buf, |x| {
                    assert!(x.len() <= piece_frames * ch);
                    joined.extend_from_slice(x)
                })
                .unwrap();
                assert!(
                    joined == out,
                    "{a}->{b} segment {j}: pieces of {piece_frames}"
                );
            }
            parts.push(out.clone());
        }
        for p in parts.iter().rev() {
            got.extend_from_slice(p);
        }
        assert_eq!(want.len(), got.len(), "{a}->{b} x{ch}");
        for (i, (p, q)) in want.iter().zip(&got).enumerate() {
            assert_eq!(
                p.to_f64_exact().to_bits(),
                q.to_f64_exact().to_bits(),
                "{a}->{b} x{ch}: sample {i}"
            );
        }
    }

    #[test]
    fn chain_segments_give_the_straight_chain_bit_for_bit() {
        let two = StageChoice::Two;
        check::<f64>(192_000, 44_100, 140.0, 2, 400_000, two);
        check::<f32>(192_000, 44_100, 110.0, 1, 300_007, two);
        check::<f64>(48_000, 8_000, 140.0, 2, 200_001, two);
        check::<f32>(48_000, 16_000, 100.0, 3, 150_000, two);
        check::<f64>(8_000, 48_000, 120.0, 2, 60_000, two);
        check::<f64>(11_025, 48_000, 120.0, 1, 80_003, two);
        // Shorter than one segment.
        check::<f64>(192_000, 44_100, 120.0, 2, 5_000, two);
        // One stage: the single stage's cuts.
        check::<f64>(44_100, 48_000, 140.0, 2, 100_000, StageChoice::Single);
        check::<f32>(44_100, 48_000, 100.0, 24, 30_000, StageChoice::Single);
    }
}
