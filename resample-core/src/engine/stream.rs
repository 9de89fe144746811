//! The streaming converter: per-channel history, any chunk size in, exactly the offline
//! result out, without allocating or locking once built.

use super::render::{reach, render, whole_periods, History};
use crate::kernel::{Kernel, KernelFns, Sample};
use crate::table::GroupTable;
use crate::{Design, Error, RatePair, Result};

/// Input frames buffered per channel beyond the filter's history.
const BLOCK: usize = 4096;

/// Output frames per channel computed by one run of the groups (several periods of the
/// group table for common ratios, so that each group's taps serve many outputs).
const OUT_BLOCK: usize = 4096;

/// How much one processing call read and wrote.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[non_exhaustive]
pub struct Progress {
    /// Input frames consumed (taken into the converter's history).
    pub frames_read: usize,
    /// Output frames written.
    pub frames_written: usize,
}

/// A streaming multichannel converter for one design.
///
/// Output sample `m` is the input signal at time `m M / L` input samples (zero added delay),
/// exactly as [`crate::offline`] computes it: the concatenated output of any sequence of
/// `process_*` calls followed by `flush_*` calls is bit-identical to the offline result,
/// whatever the chunk sizes. Because each output needs input up to
/// [`StreamConverter::latency_input_frames`] ahead of it, the first outputs appear only once
/// that much input has arrived; [`StreamConverter::input_frames_for_output`] says how much
/// input a given number of output frames needs.
///
/// A call consumes input only while there is room for the output it makes possible; it
/// returns how many frames it read and wrote, and the caller passes the rest again.
///
/// Input should be finite: a NaN or infinite sample makes every output whose filter window
/// reaches it non-finite, and also the other outputs of the same groups (up to 15 more
/// frames each side: the tap table is laid out in groups), since a zero tap times an
/// infinity is NaN.
///
/// ```
/// use resample_core::{FilterSpec, StreamConverter};
/// let design = FilterSpec::new(48_000, 44_100).stopband_db(100.0).design()?;
/// let mut conv = StreamConverter::<f32>::new(&design, 2)?;
/// let input = vec![0.0_f32; 2 * 480]; // 10 ms, interleaved stereo
/// let mut output = vec![0.0_f32; 2 * 1024];
/// let progress = conv.process_interleaved(&input, &mut output)?;
/// assert_eq!(progress.frames_read, 480);
/// # Ok::<(), resample_core::Error>(())
/// ```
#[derive(Debug, Clone)]
pub struct StreamConverter<T> {
    table: GroupTable<T>,
    pair: RatePair,
    channels: usize,
    fns: KernelFns<T>,
    /// Planar history: channel `c` at `hist[c * stride..]`, `cap` samples of history and
    /// input followed by room for one group's reads past the newest input (kept zero) and,
    /// with `periods`, for the rest of the last period's reads (their outputs are dropped).
    hist: Vec<T>,
    cap: usize,
    stride: usize,
    /// Kernel output, channel `c` at `scratch[c * n..(c + 1) * n]` for a block of `n`.
    scratch: Vec<T>,
    /// The kernel's own output buffer for one call (see `render`).
    tmp: Vec<T>,
    /// History kept from the start of a period rather than of a group (see `with_kernel`).
    periods: bool,
    /// Input index of `bufs[c][0]` (negative for the zero history before the start).
    base: i64,
    /// Valid samples per channel buffer.
    fill: usize,
    /// Samples `fill..zeroed` of every channel buffer are known to be zero (the room past
    /// the newest input that groups read is cleared only where it is not).
    zeroed: usize,
    /// Input frames received.
    n_in: u64,
    /// Output frames produced.
    n_out: u64,
    /// Newest input index and phase row of output `n_out`.
    next_i: u64,
    next_p: u64,
    flushing: bool,
}

impl<T: Sample> StreamConverter<T> {
    /// A converter for `channels` channels using the fastest kernel this CPU has.
    pub fn new(design: &Design, channels: usize) -> Result<Self> {
        Self::with_kernel(design, channels, Kernel::detect())
    }

    /// A converter using a given kernel (e.g. [`Kernel::Scalar`] to force the reference).
    pub fn with_kernel(design: &Design, channels: usize, kernel: Kernel) -> Result<Self> {
        if channels == 0 || channels > crate::MAX_CHANNELS {
            return Err(Error::ChannelsOutOfRange { channels });
        }
        let fns = KernelFns::new(kernel)?;
        let table = GroupTable::for_design(design, fns.lanes())?;
        let cap = table.rows() + BLOCK;
        // Keep the inputs of whole periods when a period is short next to a block, so that
        // the periods cut by a run's ends are computed whole with the others (see
        // `render::reach`): history from the start of the period of the next output, and
        // room past the newest input for the rest of its last period.
        let spread = (table.first_input(table.groups() - 1) - table.first_input(0)) as usize;
        let periods = whole_periods(&table) && spread + table.rows() <= BLOCK / 2;
        let stride = cap + table.rows() + if periods { spread } else { 0 };
        let mut conv = Self {
            pair: design.pair(),
            channels,
            fns,
            hist: vec![T::zero(); stride * channels],
            cap,
            stride,
            scratch: vec![T::zero(); OUT_BLOCK * channels],
            tmp: vec![T::zero(); super::render::TMP],
            table,
            periods,
            base: 0,
            fill: 0,
            zeroed: 0,
            n_in: 0,
            n_out: 0,
            next_i: 0,
            next_p: 0,
            flushing: false,
        };
        conv.reset();
        Ok(conv)
    }

    /// Outputs per period of the group table when runs are taken in whole periods (see
    /// `produce`), so that a caller can hand over output room in whole periods too.
    pub(crate) fn period_frames(&self) -> Option<usize> {
        self.periods
            .then(|| usize::try_from(self.table.period()).ok())
            .flatten()
    }

    /// Forget all input: back to the state right after construction. Does not allocate.
    pub fn reset(&mut self) {
        let hist = self.table.taps() - 1;
        for b in self.hist.chunks_exact_mut(self.stride) {
            b[..hist].fill(T::zero());
        }
        self.base = -(hist as i64);
        self.fill = hist;
        self.zeroed = hist;
        self.n_in = 0;
        self.n_out = 0;
        self.next_i = self.table.delay() / self.table.up();
        self.next_p = self.table.delay() % self.table.up();
        self.flushing = false;
    }

    /// Number of channels.
    pub fn channels(&self) -> usize {
        self.channels
    }

    /// The kernel in use.
    pub fn kernel(&self) -> Kernel {
        self.fns.kernel()
    }

    /// Bytes of the tap table this converter holds (arranged for its kernel's vectors).
    pub fn table_bytes(&self) -> usize {
        self.table.bytes()
    }

    /// The rate pair.
    pub fn pair(&self) -> RatePair {
        self.pair
    }

    /// How far ahead of an output's time its input reaches, in input frames (`half / L`).
    pub fn latency_input_frames(&self) -> f64 {
        self.table.delay() as f64 / self.table.up() as f64
    }

    /// The same delay in output frames (`half / M`).
    pub fn latency_output_frames(&self) -> f64 {
        self.table.delay() as f64 / self.table.down() as f64
    }

    /// The same delay in seconds.
    pub fn latency_seconds(&self) -> f64 {
        self.latency_input_frames() / f64::from(self.pair.in_rate())
    }

    /// Input frames received so far.
    pub fn frames_in(&self) -> u64 {
        self.n_in
    }

    /// Output frames produced so far.
    pub fn frames_out(&self) -> u64 {
        self.n_out
    }

    /// Exact number of output frames that become available if `input_frames` more frames
    /// are given (before any flush).
    pub fn output_frames_for_input(&self, input_frames: u64) -> u64 {
        // Output m is ready when floor((m M + half) / L) < n_in, i.e. m M + half < n_in L.
        let total = u128::from(self.n_in + input_frames) * u128::from(self.table.up());
        let half = u128::from(self.table.delay());
        let ready = if total > half {
            (total - half).div_ceil(u128::from(self.table.down()))
        } else {
            0
        };
        (ready as u64).saturating_sub(self.n_out)
    }

    /// The most output frames one processing call can write when given `input_frames`
    /// input frames, whatever came before: `ceil(input_frames L / M)`. Size the output
    /// buffer with it, once, for the largest chunk the stream will ever pass.
    ///
    /// The guarantee: if every `process_*` call gets room for `max_output_frames` of its
    /// input's length, every call reads all of its input and writes every output that input
    /// made ready, so the converter never falls behind. Do not size the buffer from
    /// [`StreamConverter::output_frames_for_input`] of the first chunk: that count is
    /// smaller than later ones, because the first outputs wait for the filter's look-ahead
    /// ([`StreamConverter::latency_input_frames`]).
    ///
    /// Why it holds: after `n` input frames, outputs `m` with `m M + half < n L` are ready,
    /// `R(n) = max(0, ceil((n L - half) / M))` of them, and `R(n + k) - R(n) <= ceil(k L / M)`
    /// because `ceil(a + b) <= ceil(a) + ceil(b)`. The bound is exact: in steady state, when
    /// `n L - half` is a multiple of `M`, a call of `k` frames writes exactly
    /// `ceil(k L / M)`. A call whose output buffer was filled may leave ready output behind,
    /// and the next call then writes it first (up to the room it is given).
    ///
    /// ```
    /// use resample_core::{FilterSpec, StreamConverter};
    /// let design = FilterSpec::new(44_100, 48_000).design()?;
    /// let conv = StreamConverter::<f32>::new(&design, 2)?;
    /// // 512 frames at 44.1 kHz make at most ceil(512 * 160 / 147) = 558 frames at 48 kHz.
    /// assert_eq!(conv.max_output_frames(512), 558);
    /// // The first chunk makes far fewer (the filter's look-ahead), later ones up to 558.
    /// assert!(conv.output_frames_for_input(512) < 558);
    /// # Ok::<(), resample_core::Error>(())
    /// ```
    pub fn max_output_frames(&self, input_frames: usize) -> usize {
        let n = self.pair.output_len(input_frames as u64);
        usize::try_from(n).unwrap_or(usize::MAX)
    }

    /// Smallest number of further input frames after which `output_frames` more output
    /// frames can be produced (before any flush).
    pub fn input_frames_for_output(&self, output_frames: u64) -> u64 {
        if output_frames == 0 {
            return 0;
        }
        let m = u128::from(self.n_out + output_frames - 1);
        let i = (m * u128::from(self.table.down()) + u128::from(self.table.delay()))
            / u128::from(self.table.up());
        (i as u64 + 1).saturating_sub(self.n_in)
    }

    /// Output frames still to come from [`StreamConverter::flush_interleaved`] if flushing
    /// started now: the total is `ceil(n_in L / M)`.
    pub fn flush_frames(&self) -> u64 {
        self.pair.output_len(self.n_in).saturating_sub(self.n_out)
    }

    /// True once flushing has delivered every output frame.
    pub fn is_finished(&self) -> bool {
        self.flushing && self.flush_frames() == 0
    }

    /// Convert interleaved input into interleaved output.
    pub fn process_interleaved(&mut self, input: &[T], output: &mut [T]) -> Result<Progress> {
        let ch = self.channels;
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
        if self.flushing {
            return Err(Error::InputAfterFlush);
        }
        let frames_in = input.len() / ch;
        let frames_out = output.len() / ch;
        Ok(self.run(
            frames_in,
            frames_out,
            |hist, stride, at, from, n| {
                load_interleaved(hist, stride, ch, at, &input[from * ch..(from + n) * ch]);
            },
            |frame, planar, n| store_interleaved(output, ch, frame, planar, n),
        ))
    }

    /// Convert planar input (one slice per channel, all the same length) into planar output
    /// (one slice per channel, all the same length).
    pub fn process_planar<I, O>(&mut self, input: &[I], output: &mut [O]) -> Result<Progress>
    where
        I: AsRef<[T]>,
        O: AsMut<[T]>,
    {
        let frames_in = self.check_planar_in(input)?;
        let frames_out = self.check_planar_out(output)?;
        if self.flushing {
            return Err(Error::InputAfterFlush);
        }
        Ok(self.run(
            frames_in,
            frames_out,
            |hist, stride, at, from, n| {
                for (buf, src) in hist.chunks_exact_mut(stride).zip(input) {
                    buf[at..at + n].copy_from_slice(&src.as_ref()[from..from + n]);
                }
            },
            |frame, planar, n| store_planar(output, frame, planar, n),
        ))
    }

    /// Finish the stream: write the remaining output (the signal's tail, computed with zeros
    /// after the last input frame) into interleaved `output`. Returns the frames written;
    /// call again until it returns 0 ([`StreamConverter::is_finished`]).
    pub fn flush_interleaved(&mut self, output: &mut [T]) -> Result<usize> {
        let ch = self.channels;
        check_interleaved(
            output.len(),
            ch,
            "interleaved output length (multiple of channels)",
        )?;
        self.flushing = true;
        let frames_out = output.len() / ch;
        Ok(self.produce(frames_out, false, |frame, planar, n| {
            store_interleaved(output, ch, frame, planar, n)
        }))
    }

    /// Planar twin of [`StreamConverter::flush_interleaved`].
    pub fn flush_planar<O: AsMut<[T]>>(&mut self, output: &mut [O]) -> Result<usize> {
        let frames_out = self.check_planar_out(output)?;
        self.flushing = true;
        Ok(self.produce(frames_out, false, |frame, planar, n| {
            store_planar(output, frame, planar, n)
        }))
    }

    fn check_planar_in<I: AsRef<[T]>>(&self, input: &[I]) -> Result<usize> {
        if input.len() != self.channels {
            return Err(Error::BufferShape {
                what: "planar input channel count",
                expected: self.channels,
                got: input.len(),
            });
        }
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
        Ok(n)
    }

    fn check_planar_out<O: AsMut<[T]>>(&self, output: &mut [O]) -> Result<usize> {
        if output.len() != self.channels {
            return Err(Error::BufferShape {
                what: "planar output channel count",
                expected: self.channels,
                got: output.len(),
            });
        }
        let n = output[0].as_mut().len();
        for c in output.iter_mut() {
            let len = c.as_mut().len();
            if len != n {
                return Err(Error::BufferShape {
                    what: "planar output channel length",
                    expected: n,
                    got: len,
                });
            }
        }
        Ok(n)
    }

    /// The main loop: make all ready output, take more input, repeat.
    fn run(
        &mut self,
        frames_in: usize,
        frames_out: usize,
        mut load: impl FnMut(&mut [T], usize, usize, usize, usize),
        mut store: impl FnMut(usize, &[T], usize),
    ) -> Progress {
        let mut read = 0;
        let mut written = 0;
        loop {
            let at = written;
            let more = read < frames_in;
            written += self.produce(frames_out - written, more, |f, p, n| store(at + f, p, n));
            if written == frames_out || read == frames_in {
                break;
            }
            // Input that falls before the oldest sample still needed is skipped.
            let end = self.base + self.fill as i64;
            if (self.n_in as i64) < end {
                let skip = ((end - self.n_in as i64) as usize).min(frames_in - read);
                read += skip;
                self.n_in += skip as u64;
                continue;
            }
            if self.fill == self.cap {
                let before = (self.base, self.fill);
                self.make_room();
                if before == (self.base, self.fill) {
                    break; // cannot happen: the next output never needs a whole buffer
                }
                continue;
            }
            let take = (self.cap - self.fill).min(frames_in - read);
            if take == 0 {
                break;
            }
            load(&mut self.hist, self.stride, self.fill, read, take);
            self.fill += take;
            self.zeroed = self.zeroed.max(self.fill);
            self.n_in += take as u64;
            read += take;
        }
        Progress {
            frames_read: read,
            frames_written: written,
        }
    }

    /// Drop history older than the group of the next output reads.
    fn make_room(&mut self) {
        let start = if self.periods {
            reach(&self.table, self.n_out, 1).0
        } else {
            self.table.first_input_of(self.n_out)
        };
        let rel = start - self.base;
        if rel <= 0 {
            return;
        }
        let drop = (rel as usize).min(self.fill);
        // The known zeros past the input move along with it.
        let zeroed = self.zeroed.max(self.fill);
        for b in self.hist.chunks_exact_mut(self.stride) {
            b.copy_within(drop..zeroed, 0);
        }
        self.fill -= drop;
        self.zeroed = zeroed - drop;
        self.base += drop as i64;
        if self.fill == 0 {
            self.base = start;
        }
    }

    /// Compute outputs while their input is present (or, when flushing, while any remain),
    /// at most `max` frames. Returns frames produced.
    /// `store(frame, planar, n)` receives each block of `n` new outputs per channel (channel
    /// `c` at `planar[c * n..][..n]`), the first at output `frame`.
    ///
    /// With whole periods kept (`periods`), a run that would stop inside a period for want
    /// of input (while `more_input` is coming in this call) or at the longest run stops at
    /// the period's start instead: the rest of that period then comes with the next run,
    /// rather than the period being computed whole twice, each time for a part of its
    /// outputs (see `render`). Only the caller's room or the input's end cut a run
    /// elsewhere. Which outputs are computed together does not change their values.
    fn produce(
        &mut self,
        max: usize,
        more_input: bool,
        mut store: impl FnMut(usize, &[T], usize),
    ) -> usize {
        let up = self.table.up();
        let down = self.table.down();
        let total = if self.flushing {
            self.pair.output_len(self.n_in)
        } else {
            u64::MAX
        };
        let mut done = 0;
        while done < max && self.n_out < total {
            let end = self.base + self.fill as i64;
            if self.next_i as i64 >= end {
                if !self.flushing {
                    break;
                }
                // Past the last input: the signal is zero there.
                if self.fill == self.cap {
                    self.make_room();
                }
                let end = self.base + self.fill as i64;
                let need = (self.next_i as i64 + 1 - end).max(0) as usize;
                let k = need.min(self.cap - self.fill);
                let from = self.zeroed.max(self.fill);
                for b in self.hist.chunks_exact_mut(self.stride) {
                    b[from.min(self.fill + k)..self.fill + k].fill(T::zero());
                }
                self.fill += k;
                self.zeroed = self.zeroed.max(self.fill);
                continue;
            }
            // Outputs whose newest input is present: next_p + k M < (end - next_i) L.
            let span = (end - self.next_i as i64) as u128 * u128::from(up);
            let ready = (span - u128::from(self.next_p)).div_ceil(u128::from(down));
            let room = (max - done) as u128;
            let left = room.min(OUT_BLOCK as u128);
            let left = left.min(u128::from(total - self.n_out));
            let mut n = ready.min(left) as usize;
            if self.periods && !self.flushing && (n as u128) < room {
                let by_input = n as u128 == ready && more_input;
                let by_block = n == OUT_BLOCK && (n as u128) < ready;
                if by_input || by_block {
                    let tail = ((self.n_out + n as u64) % self.table.period()) as usize;
                    n = n.saturating_sub(tail);
                    if n == 0 {
                        // Wait for the input that completes the period.
                        break;
                    }
                }
            }
            if n == 0 {
                break; // cannot happen: next_i < end and max > done
            }
            // Groups that stick out past the newest input read zeros there (cleared where
            // not known to be zero already).
            let (fill, rows) = (self.fill, self.table.rows());
            if self.zeroed < fill + rows {
                let from = self.zeroed.max(fill);
                for b in self.hist.chunks_exact_mut(self.stride) {
                    b[from..fill + rows].fill(T::zero());
                }
                self.zeroed = fill + rows;
            }
            let hist = History {
                data: &self.hist,
                stride: self.stride,
                channels: self.channels,
                base: self.base,
            };
            let ok = render(
                &self.table,
                &self.fns,
                &hist,
                self.n_out,
                n,
                &mut self.scratch,
                &mut self.tmp,
            );
            if ok.is_err() {
                break; // cannot happen: the history holds every group of the run
            }
            store(done, &self.scratch[..n * self.channels], n);
            done += n;
            self.n_out += n as u64;
            let pos = self.next_p + n as u64 * down;
            self.next_i += pos / up;
            self.next_p = pos % up;
        }
        done
    }
}

/// Interleave `n` frames of `planar` (channel `c` at `planar[c * n..]`) into `output` of `ch`
/// channels from `frame` on, one pass over the output.
#[inline]
fn store_interleaved<T: Copy>(output: &mut [T], ch: usize, frame: usize, planar: &[T], n: usize) {
    let frames = &mut output[frame * ch..(frame + n) * ch];
    if ch == 2 {
        let (l, r) = planar.split_at(n);
        for ((f, &a), &b) in frames.chunks_exact_mut(2).zip(l).zip(r) {
            f[0] = a;
            f[1] = b;
        }
        return;
    }
    for (k, f) in frames.chunks_exact_mut(ch).enumerate() {
        for (c, v) in f.iter_mut().enumerate() {
            *v = planar[c * n + k];
        }
    }
}

/// Split interleaved frames `src` into the planar history `hist` (channel `c` at
/// `hist[c * stride..]`) from index `at` on.
#[inline]
pub(super) fn load_interleaved<T: Copy>(
    hist: &mut [T],
    stride: usize,
    ch: usize,
    at: usize,
    src: &[T],
) {
    let n = src.len() / ch;
    if ch == 2 {
        // Both channels in one pass, with the channel count known to the compiler.
        let (l, r) = hist.split_at_mut(stride);
        for ((a, b), f) in l[at..at + n]
            .iter_mut()
            .zip(&mut r[at..at + n])
            .zip(src.chunks_exact(2))
        {
            *a = f[0];
            *b = f[1];
        }
        return;
    }
    for (c, buf) in hist.chunks_exact_mut(stride).enumerate() {
        for (d, frame) in buf[at..at + n].iter_mut().zip(src.chunks_exact(ch)) {
            *d = frame[c];
        }
    }
}

/// Copy `n` frames of `planar` (channel `c` at `planar[c * n..]`) into planar `output` from
/// `frame` on.
#[inline]
fn store_planar<T: Copy, O: AsMut<[T]>>(output: &mut [O], frame: usize, planar: &[T], n: usize) {
    if n == 0 {
        return;
    }
    for (o, src) in output.iter_mut().zip(planar.chunks_exact(n)) {
        o.as_mut()[frame..frame + n].copy_from_slice(src);
    }
}

pub(super) fn check_interleaved(len: usize, channels: usize, what: &'static str) -> Result<()> {
    if !len.is_multiple_of(channels) {
        return Err(Error::BufferShape {
            what,
            expected: len - len % channels,
            got: len,
        });
    }
    Ok(())
}
