//! The streaming converter for a [`StagePlan`]: one [`StreamConverter`], or two in a row
//! with small planar queues between them (allocated once), under the same contract as a
//! single one: any chunk sizes, bit-identical to the offline result, no allocation in the
//! processing calls, exact frame queries, flush.

use super::halfband::HalfBand;
use super::stream::{check_interleaved, Progress, StreamConverter};
use crate::kernel::{Kernel, Sample};
use crate::{Error, RatePair, Result, StagePlan};

/// Frames per channel of each queue (input copy, between the stages, output copy).
const QUEUE: usize = 4096;

/// One channel of a queue: valid samples at `buf[start..end]`, room at `buf[end..]`. As a
/// slice it is the valid samples (input side of a stage) or the room (output side).
#[derive(Debug, Clone)]
struct Lane<T> {
    buf: Vec<T>,
    start: usize,
    end: usize,
}

impl<T> AsRef<[T]> for Lane<T> {
    fn as_ref(&self) -> &[T] {
        &self.buf[self.start..self.end]
    }
}

impl<T> AsMut<[T]> for Lane<T> {
    fn as_mut(&mut self) -> &mut [T] {
        let e = self.end;
        &mut self.buf[e..]
    }
}

/// A queue of frames, one lane per channel (all lanes move together).
#[derive(Debug, Clone)]
struct Queue<T> {
    lanes: Vec<Lane<T>>,
}

impl<T: Sample> Queue<T> {
    fn new(channels: usize) -> Self {
        Self {
            lanes: (0..channels)
                .map(|_| Lane {
                    buf: vec![T::zero(); QUEUE],
                    start: 0,
                    end: 0,
                })
                .collect(),
        }
    }

    fn pending(&self) -> usize {
        self.lanes[0].end - self.lanes[0].start
    }

    fn room(&self) -> usize {
        QUEUE - self.lanes[0].end
    }

    fn take(&mut self, n: usize) {
        for l in &mut self.lanes {
            l.start += n;
            if l.start == l.end {
                l.start = 0;
                l.end = 0;
            }
        }
    }

    fn put(&mut self, n: usize) {
        for l in &mut self.lanes {
            l.end += n;
        }
    }

    /// Move the valid samples to the front, so that all the room is at the end.
    fn compact(&mut self) {
        for l in &mut self.lanes {
            if l.start > 0 {
                l.buf.copy_within(l.start..l.end, 0);
                l.end -= l.start;
                l.start = 0;
            }
        }
    }

    fn clear(&mut self) {
        for l in &mut self.lanes {
            l.start = 0;
            l.end = 0;
        }
    }
}

/// One stage of two: the polyphase engine, or the half-band one.
// A chain holds at most two stages, made once; boxing the larger one would only add a
// pointer to follow on every call.
#[allow(clippy::large_enum_variant)]
#[derive(Debug, Clone)]
enum Stage<T> {
    Poly(StreamConverter<T>),
    Half(HalfBand<T>),
}

impl<T: Sample> Stage<T> {
    fn new(plan: &StagePlan, i: usize, channels: usize, kernel: Kernel) -> Result<Self> {
        let d = &plan.stages()[i];
        Ok(if plan.half_band_stage() == Some(i) {
            Stage::Half(HalfBand::new(d, channels, kernel))
        } else {
            Stage::Poly(StreamConverter::with_kernel(d, channels, kernel)?)
        })
    }

    fn process(&mut self, input: &[Lane<T>], output: &mut [Lane<T>]) -> Result<Progress> {
        match self {
            Stage::Poly(c) => c.process_planar(input, output),
            Stage::Half(h) => Ok(h.process(input, output)),
        }
    }

    fn flush(&mut self, output: &mut [Lane<T>]) -> Result<usize> {
        match self {
            Stage::Poly(c) => c.flush_planar(output),
            Stage::Half(h) => Ok(h.flush(output)),
        }
    }

    fn reset(&mut self) {
        match self {
            Stage::Poly(c) => c.reset(),
            Stage::Half(h) => h.reset(),
        }
    }

    fn is_finished(&self) -> bool {
        match self {
            Stage::Poly(c) => c.is_finished(),
            Stage::Half(h) => h.is_finished(),
        }
    }

    fn output_frames_for_input(&self, n: u64) -> u64 {
        match self {
            Stage::Poly(c) => c.output_frames_for_input(n),
            Stage::Half(h) => h.output_frames_for_input(n),
        }
    }

    fn input_frames_for_output(&self, n: u64) -> u64 {
        match self {
            Stage::Poly(c) => c.input_frames_for_output(n),
            Stage::Half(h) => h.input_frames_for_output(n),
        }
    }

    fn max_output_frames(&self, n: usize) -> usize {
        match self {
            Stage::Poly(c) => c.max_output_frames(n),
            Stage::Half(h) => h.max_output_frames(n),
        }
    }
}

/// Two stages with the queues around them.
#[derive(Debug, Clone)]
struct Two<T> {
    a: Stage<T>,
    b: Stage<T>,
    input: Queue<T>,
    mid: Queue<T>,
    output: Queue<T>,
    kernel: Kernel,
    n_in: u64,
    n_out: u64,
    flushing: bool,
    /// Whether each stage has been told to flush (it takes no more input then).
    a_flushing: bool,
    b_flushing: bool,
    /// Zero frames run before the input and after it ([`StagePlan::edge_frames`]).
    edge: usize,
    /// Outputs of the leading zeros still to drop.
    lead_drop: u64,
    /// Outputs of the leading zeros in all ([`StagePlan::edge_output_frames`]).
    lead_outputs: u64,
    /// Trailing zero frames still to run through the first stage at the flush.
    tail_left: usize,
}

#[derive(Debug, Clone)]
enum Inner<T> {
    One(Box<StreamConverter<T>>),
    Two(Box<Two<T>>),
}

/// A streaming multichannel converter for a [`StagePlan`] of one stage or two.
///
/// It keeps the contract of [`StreamConverter`]: the concatenated output of any sequence
/// of `process_*` calls followed by `flush_*` calls is bit-identical to
/// [`crate::offline::convert_plan_planar`] (the stages run one after the other over the
/// whole signal), whatever the chunk sizes; exactly `ceil(n L / M)` frames in all; output
/// `m` at input time `m M / L`; no allocation, lock or panic in the processing calls. With
/// one stage it is that stage's [`StreamConverter`]. With two, a call takes the input
/// through small planar queues (copies, 4096 frames a channel, allocated at construction)
/// between the stages (planar input to a first half-band stage goes straight into its own
/// even and odd planes); frames read may wait in the queues until their outputs are ready.
/// The first stage also runs over [`StagePlan::edge_frames`] zeros before the input (at
/// construction and reset) and after it (at the flush), whose outputs are dropped, so that
/// its ringing around the ends of the signal reaches the second stage: the output agrees
/// with one stage's within the stopband level at the ends too.
///
/// ```
/// use resample_core::{ChainConverter, FilterSpec, StageChoice};
/// let plan = FilterSpec::new(48_000, 16_000)
///     .stopband_db(100.0)
///     .stage_choice(StageChoice::Two)
///     .plan()?;
/// assert!(plan.is_two_stage());
/// let mut conv = ChainConverter::<f32>::new(&plan, 2)?;
/// let input = vec![0.0_f32; 2 * 480];
/// let mut output = vec![0.0_f32; 2 * conv.max_output_frames(480)];
/// let p = conv.process_interleaved(&input, &mut output)?;
/// assert_eq!(p.frames_read, 480);
/// # Ok::<(), resample_core::Error>(())
/// ```
#[derive(Debug, Clone)]
pub struct ChainConverter<T> {
    inner: Inner<T>,
    pair: RatePair,
    channels: usize,
    latency_input_frames: f64,
}

impl<T: Sample> ChainConverter<T> {
    /// A converter for `channels` channels using the fastest kernel this CPU has.
    pub fn new(plan: &StagePlan, channels: usize) -> Result<Self> {
        Self::with_kernel(plan, channels, Kernel::detect())
    }

    /// A converter using a given kernel for every stage: the polyphase stage(s) run its
    /// group kernels, the half-band stage its half-band kernel (`Kernel::Scalar` forces the
    /// scalar reference for both).
    pub fn with_kernel(plan: &StagePlan, channels: usize, kernel: Kernel) -> Result<Self> {
        if channels == 0 || channels > crate::MAX_CHANNELS {
            return Err(Error::ChannelsOutOfRange { channels });
        }
        let inner = if plan.stages().len() == 1 {
            Inner::One(Box::new(StreamConverter::with_kernel(
                &plan.stages()[0],
                channels,
                kernel,
            )?))
        } else {
            Inner::Two(Box::new(Two {
                a: Stage::new(plan, 0, channels, kernel)?,
                b: Stage::new(plan, 1, channels, kernel)?,
                input: Queue::new(channels),
                mid: Queue::new(channels),
                output: Queue::new(channels),
                kernel: if kernel.is_available() {
                    kernel
                } else {
                    Kernel::Scalar
                },
                n_in: 0,
                n_out: 0,
                flushing: false,
                a_flushing: false,
                b_flushing: false,
                edge: usize::try_from(plan.edge_frames()).unwrap_or(usize::MAX),
                lead_drop: plan.edge_output_frames(),
                lead_outputs: plan.edge_output_frames(),
                tail_left: 0,
            }))
        };
        let mut conv = Self {
            inner,
            pair: plan.pair(),
            channels,
            latency_input_frames: plan.latency_input_frames(),
        };
        if let Inner::Two(t) = &mut conv.inner {
            t.lead()?;
        }
        Ok(conv)
    }

    /// The single stage's outputs per period when it takes its runs in whole periods
    /// ([`StreamConverter`]'s `produce`); `None` for two stages.
    pub(crate) fn period_frames(&self) -> Option<usize> {
        match &self.inner {
            Inner::One(c) => c.period_frames(),
            Inner::Two(_) => None,
        }
    }

    /// Forget all input: back to the state right after construction. Does not allocate.
    pub fn reset(&mut self) {
        match &mut self.inner {
            Inner::One(c) => c.reset(),
            Inner::Two(t) => {
                t.a.reset();
                t.b.reset();
                t.input.clear();
                t.mid.clear();
                t.output.clear();
                t.n_in = 0;
                t.n_out = 0;
                t.flushing = false;
                t.a_flushing = false;
                t.b_flushing = false;
                t.lead_drop = t.lead_outputs;
                // The same leading zeros as at construction (internal buffers only: the
                // stages cannot refuse them, and nothing is allocated).
                let _ = t.lead();
            }
        }
    }

    /// Number of stages (1 or 2).
    pub fn stages(&self) -> usize {
        match self.inner {
            Inner::One(_) => 1,
            Inner::Two(_) => 2,
        }
    }

    /// Number of channels.
    pub fn channels(&self) -> usize {
        self.channels
    }

    /// The overall rate pair.
    pub fn pair(&self) -> RatePair {
        self.pair
    }

    /// The kernel of the polyphase stage(s).
    pub fn kernel(&self) -> Kernel {
        match &self.inner {
            Inner::One(c) => c.kernel(),
            Inner::Two(t) => t.kernel,
        }
    }

    /// Look-ahead of the whole conversion in input frames
    /// ([`StagePlan::latency_input_frames`]).
    pub fn latency_input_frames(&self) -> f64 {
        self.latency_input_frames
    }

    /// Look-ahead in seconds.
    pub fn latency_seconds(&self) -> f64 {
        self.latency_input_frames / f64::from(self.pair.in_rate())
    }

    /// Input frames received.
    pub fn frames_in(&self) -> u64 {
        match &self.inner {
            Inner::One(c) => c.frames_in(),
            Inner::Two(t) => t.n_in,
        }
    }

    /// Output frames delivered.
    pub fn frames_out(&self) -> u64 {
        match &self.inner {
            Inner::One(c) => c.frames_out(),
            Inner::Two(t) => t.n_out,
        }
    }

    /// Exact number of output frames that become available if `input_frames` more frames
    /// are given (before any flush).
    pub fn output_frames_for_input(&self, input_frames: u64) -> u64 {
        match &self.inner {
            Inner::One(c) => c.output_frames_for_input(input_frames),
            Inner::Two(t) => {
                let mid =
                    t.a.output_frames_for_input(t.input.pending() as u64 + input_frames);
                (t.output.pending() as u64
                    + t.b.output_frames_for_input(t.mid.pending() as u64 + mid))
                .saturating_sub(t.lead_drop)
            }
        }
    }

    /// The most output frames one processing call can write when given `input_frames`
    /// input frames: size the output buffer with it for the largest chunk (see
    /// [`StreamConverter::max_output_frames`]; for two stages the second stage's bound for
    /// the most the first can make).
    pub fn max_output_frames(&self, input_frames: usize) -> usize {
        match &self.inner {
            Inner::One(c) => c.max_output_frames(input_frames),
            Inner::Two(t) => t.b.max_output_frames(t.a.max_output_frames(input_frames)),
        }
    }

    /// Smallest number of further input frames after which `output_frames` more output
    /// frames can be produced (before any flush).
    pub fn input_frames_for_output(&self, output_frames: u64) -> u64 {
        match &self.inner {
            Inner::One(c) => c.input_frames_for_output(output_frames),
            Inner::Two(t) => {
                // The leading zeros' outputs still to come are dropped first.
                let want = output_frames + t.lead_drop;
                let have = t.output.pending() as u64;
                if want <= have {
                    return 0;
                }
                let mid = t.b.input_frames_for_output(want - have);
                let held = t.mid.pending() as u64;
                if mid <= held {
                    return 0;
                }
                t.a.input_frames_for_output(mid - held)
                    .saturating_sub(t.input.pending() as u64)
            }
        }
    }

    /// Output frames still to come from flushing if it started now: the total is
    /// `ceil(n_in L / M)` for the overall pair.
    pub fn flush_frames(&self) -> u64 {
        match &self.inner {
            Inner::One(c) => c.flush_frames(),
            Inner::Two(t) => self.pair.output_len(t.n_in).saturating_sub(t.n_out),
        }
    }

    /// True once flushing has delivered every output frame.
    pub fn is_finished(&self) -> bool {
        match &self.inner {
            Inner::One(c) => c.is_finished(),
            Inner::Two(t) => t.flushing && self.flush_frames() == 0,
        }
    }

    /// Convert interleaved input into interleaved output.
    pub fn process_interleaved(&mut self, input: &[T], output: &mut [T]) -> Result<Progress> {
        let ch = self.channels;
        let t = match &mut self.inner {
            Inner::One(c) => return c.process_interleaved(input, output),
            Inner::Two(t) => t,
        };
        check_interleaved(
            input.len(),
            ch,
            "interleaved input length (multiple of channels)",
        )?;
        check_interleaved(
            output.len(),
            ch,
            "interleaved output length (multiple of channels)",
        )?;
        if t.flushing {
            return Err(Error::InputAfterFlush);
        }
        t.run(
            input.len() / ch,
            output.len() / ch,
            |q, from, n| {
                for (c, l) in q.lanes.iter_mut().enumerate() {
                    let e = l.end;
                    for (v, f) in l.buf[e..e + n]
                        .iter_mut()
                        .zip(input[from * ch..].chunks_exact(ch))
                    {
                        *v = f[c];
                    }
                }
            },
            |q, at, n| store_interleaved(q, output, ch, at, n),
        )
    }

    /// Convert planar input (one slice per channel, all the same length) into planar output
    /// (one slice per channel, all the same length).
    pub fn process_planar<I, O>(&mut self, input: &[I], output: &mut [O]) -> Result<Progress>
    where
        I: AsRef<[T]>,
        O: AsMut<[T]>,
    {
        let ch = self.channels;
        let t = match &mut self.inner {
            Inner::One(c) => return c.process_planar(input, output),
            Inner::Two(t) => t,
        };
        let frames_in = planar_len(input.iter().map(AsRef::as_ref), ch, true)?;
        let frames_out = planar_len(output.iter_mut().map(|o| &*o.as_mut()), ch, false)?;
        if t.flushing {
            return Err(Error::InputAfterFlush);
        }
        if matches!(t.a, Stage::Half(_)) {
            // A first half-band stage takes the caller's planes itself (it splits them into
            // its even and odd planes as it reads): no copy through the input queue.
            return t.run_direct(input, frames_in, frames_out, |q, at, n| {
                store_planar(q, output, at, n)
            });
        }
        t.run(
            frames_in,
            frames_out,
            |q, from, n| {
                for (l, src) in q.lanes.iter_mut().zip(input) {
                    let e = l.end;
                    l.buf[e..e + n].copy_from_slice(&src.as_ref()[from..from + n]);
                }
            },
            |q, at, n| store_planar(q, output, at, n),
        )
    }

    /// Finish the stream: write the remaining output (the tail, computed with zeros after
    /// the last input frame) into interleaved `output`. Returns the frames written; call
    /// again until it returns 0 ([`ChainConverter::is_finished`]).
    pub fn flush_interleaved(&mut self, output: &mut [T]) -> Result<usize> {
        let ch = self.channels;
        let total_of = |n: u64| self.pair.output_len(n);
        let t = match &mut self.inner {
            Inner::One(c) => return c.flush_interleaved(output),
            Inner::Two(t) => t,
        };
        check_interleaved(
            output.len(),
            ch,
            "interleaved output length (multiple of channels)",
        )?;
        t.flushing = true;
        let total = total_of(t.n_in);
        t.drain(total, output.len() / ch, |q, at, n| {
            store_interleaved(q, output, ch, at, n)
        })
    }

    /// Planar twin of [`ChainConverter::flush_interleaved`].
    pub fn flush_planar<O: AsMut<[T]>>(&mut self, output: &mut [O]) -> Result<usize> {
        let ch = self.channels;
        let total_of = |n: u64| self.pair.output_len(n);
        let t = match &mut self.inner {
            Inner::One(c) => return c.flush_planar(output),
            Inner::Two(t) => t,
        };
        let frames_out = planar_len(output.iter_mut().map(|o| &*o.as_mut()), ch, false)?;
        t.flushing = true;
        let total = total_of(t.n_in);
        t.drain(total, frames_out, |q, at, n| store_planar(q, output, at, n))
    }
}

fn store_interleaved<T: Copy>(q: &Queue<T>, output: &mut [T], ch: usize, at: usize, n: usize) {
    for (c, l) in q.lanes.iter().enumerate() {
        for (f, &v) in output[at * ch..(at + n) * ch]
            .chunks_exact_mut(ch)
            .zip(&l.buf[l.start..l.start + n])
        {
            f[c] = v;
        }
    }
}

fn store_planar<T: Copy, O: AsMut<[T]>>(q: &Queue<T>, output: &mut [O], at: usize, n: usize) {
    for (l, dst) in q.lanes.iter().zip(output.iter_mut()) {
        dst.as_mut()[at..at + n].copy_from_slice(&l.buf[l.start..l.start + n]);
    }
}

impl<T: Sample> Two<T> {
    /// Deliver from the output queue into the caller's buffer (at most `room` frames, and
    /// never past `limit` frames in all). Returns frames delivered.
    fn deliver(
        &mut self,
        limit: u64,
        room: usize,
        at: usize,
        store: &mut impl FnMut(&Queue<T>, usize, usize),
    ) -> usize {
        self.drop_lead();
        let left = usize::try_from(limit.saturating_sub(self.n_out)).unwrap_or(usize::MAX);
        let k = self.output.pending().min(room).min(left);
        if k > 0 {
            store(&self.output, at, k);
            self.output.take(k);
            self.n_out += k as u64;
        }
        k
    }

    /// Drop what the output queue holds of the leading zeros' outputs.
    fn drop_lead(&mut self) {
        let k = self
            .output
            .pending()
            .min(usize::try_from(self.lead_drop).unwrap_or(usize::MAX));
        if k > 0 {
            self.output.take(k);
            self.lead_drop -= k as u64;
        }
    }

    /// Put `n` zero frames into the input queue (`n` at most its room).
    fn load_zeros(&mut self, n: usize) {
        for l in &mut self.input.lanes {
            let e = l.end;
            l.buf[e..e + n].fill(T::zero());
        }
        self.input.put(n);
    }

    /// Run the leading zero frames through the chain (at construction and reset), dropping
    /// their outputs as they come; the tail's zeros are set to run at the flush. The input
    /// queue is empty again afterwards.
    fn lead(&mut self) -> Result<()> {
        self.tail_left = self.edge;
        let mut left = self.edge;
        loop {
            let mut moved = false;
            if left > 0 {
                self.input.compact();
                let k = self.input.room().min(left);
                self.load_zeros(k);
                left -= k;
                moved = k > 0;
            }
            while self.step()? {
                self.drop_lead();
                moved = true;
            }
            self.drop_lead();
            // Done when every zero went in and through; stop too if nothing can move (the
            // zeros' outputs never outnumber the ones to drop, so that does not happen).
            if (left == 0 && self.input.pending() == 0) || !moved {
                break;
            }
        }
        Ok(())
    }

    /// Move frames one step along the chain; true if anything moved.
    fn step(&mut self) -> Result<bool> {
        // A stage may hold ready outputs it had no room for: it is called for them too.
        let b_ready = self.b.output_frames_for_input(0) > 0;
        if !self.b_flushing && (self.mid.pending() > 0 || b_ready) && self.output.pending() == 0 {
            self.output.clear();
            let p = self.b.process(&self.mid.lanes, &mut self.output.lanes)?;
            self.mid.take(p.frames_read);
            self.output.put(p.frames_written);
            if p.frames_read + p.frames_written > 0 {
                return Ok(true);
            }
        }
        if !self.a_flushing && (self.input.pending() > 0 || self.a.output_frames_for_input(0) > 0) {
            self.mid.compact();
            if self.mid.room() > 0 {
                let p = self.a.process(&self.input.lanes, &mut self.mid.lanes)?;
                self.input.take(p.frames_read);
                self.mid.put(p.frames_written);
                if p.frames_read + p.frames_written > 0 {
                    return Ok(true);
                }
            }
        }
        Ok(false)
    }

    fn run(
        &mut self,
        frames_in: usize,
        frames_out: usize,
        mut load: impl FnMut(&mut Queue<T>, usize, usize),
        mut store: impl FnMut(&Queue<T>, usize, usize),
    ) -> Result<Progress> {
        let mut read = 0;
        let mut written = 0;
        loop {
            written += self.deliver(u64::MAX, frames_out - written, written, &mut store);
            if self.output.pending() > 0 {
                break; // the caller's buffer is full
            }
            if self.step()? {
                continue;
            }
            if read < frames_in {
                self.input.compact();
                let take = self.input.room().min(frames_in - read);
                if take > 0 {
                    load(&mut self.input, read, take);
                    self.input.put(take);
                    read += take;
                    self.n_in += take as u64;
                    continue;
                }
            }
            break;
        }
        Ok(Progress {
            frames_read: read,
            frames_written: written,
        })
    }

    /// [`Two::run`] for a first half-band stage fed straight from the caller's planar
    /// `input` (the input queue stays empty).
    fn run_direct<I: AsRef<[T]>>(
        &mut self,
        input: &[I],
        frames_in: usize,
        frames_out: usize,
        mut store: impl FnMut(&Queue<T>, usize, usize),
    ) -> Result<Progress> {
        let mut read = 0;
        let mut written = 0;
        loop {
            written += self.deliver(u64::MAX, frames_out - written, written, &mut store);
            if self.output.pending() > 0 {
                break; // the caller's buffer is full
            }
            if self.step()? {
                continue;
            }
            if read < frames_in {
                self.mid.compact();
                if self.mid.room() > 0 {
                    if let Stage::Half(h) = &mut self.a {
                        let p = h.process_from(input, read, &mut self.mid.lanes);
                        self.mid.put(p.frames_written);
                        read += p.frames_read;
                        self.n_in += p.frames_read as u64;
                        if p.frames_read + p.frames_written > 0 {
                            continue;
                        }
                    }
                }
            }
            break;
        }
        Ok(Progress {
            frames_read: read,
            frames_written: written,
        })
    }

    fn drain(
        &mut self,
        total: u64,
        frames_out: usize,
        mut store: impl FnMut(&Queue<T>, usize, usize),
    ) -> Result<usize> {
        let mut written = 0;
        loop {
            written += self.deliver(total, frames_out - written, written, &mut store);
            if self.n_out >= total {
                // The second stage's tail may run past the exact length: dropped.
                self.output.clear();
                break;
            }
            if self.output.pending() > 0 {
                break;
            }
            if self.step()? {
                continue;
            }
            if self.tail_left > 0 && !self.a_flushing {
                // The trailing zeros go in after the last input frame.
                self.input.compact();
                let k = self.input.room().min(self.tail_left);
                if k > 0 {
                    self.load_zeros(k);
                    self.tail_left -= k;
                    continue;
                }
            }
            if self.input.pending() == 0 && self.tail_left == 0 && !self.a.is_finished() {
                self.mid.compact();
                self.a_flushing = true;
                let k = self.a.flush(&mut self.mid.lanes)?;
                self.mid.put(k);
                if k > 0 {
                    continue;
                }
            }
            if self.mid.pending() == 0 && self.a.is_finished() && !self.b.is_finished() {
                self.output.clear();
                self.b_flushing = true;
                let k = self.b.flush(&mut self.output.lanes)?;
                self.output.put(k);
                if k > 0 {
                    continue;
                }
            }
            break;
        }
        Ok(written)
    }
}

/// Frames per channel of planar buffers, checked: `channels` slices of one length.
fn planar_len<'a, T: 'a>(
    mut slices: impl ExactSizeIterator<Item = &'a [T]>,
    channels: usize,
    input: bool,
) -> Result<usize> {
    let count = slices.len();
    if count != channels {
        return Err(Error::BufferShape {
            what: if input {
                "planar input channel count"
            } else {
                "planar output channel count"
            },
            expected: channels,
            got: count,
        });
    }
    let Some(first) = slices.next() else {
        return Ok(0);
    };
    let n = first.len();
    for c in slices {
        if c.len() != n {
            return Err(Error::BufferShape {
                what: if input {
                    "planar input channel length"
                } else {
                    "planar output channel length"
                },
                expected: n,
                got: c.len(),
            });
        }
    }
    Ok(n)
}
