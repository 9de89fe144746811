//! The any-ratio converter ([`GlideConverter`]): any real ratio in
//! [`MIN_GLIDE_RATIO`]..=[`MAX_GLIDE_RATIO`], changed between calls by a linear glide of the
//! phase increment, for live audio between drifting clocks; the taps of each output are
//! interpolated from a [`GlideDesign`]'s table (J. O. Smith and P. Gossett, "A flexible
//! sampling-rate conversion method", Proc. IEEE ICASSP 1984), with the same real-time
//! contract as [`crate::StreamConverter`].

use super::stream::{check_interleaved, load_interleaved};
use crate::kernel::glide::cubic_coefficients;
use crate::kernel::{glide_block_len, glide_chunk, GlideRun, Kernel, KernelFns, Sample};
use crate::limits::{MAX_GLIDE_RATIO, MIN_GLIDE_RATIO};
use crate::{Error, GlideDesign, Interpolation, Progress, Result};

/// Zeros around the prototype in `flat` (the stretched kernel reads from tap -2 to len + 1,
/// and cubic interpolation one more each side).
const FLAT_PAD: usize = 4;

/// Input frames buffered per channel beyond the kernel's widest span.
const BLOCK: usize = 4096;

/// Most outputs computed by one call of the kernels' run ([`KernelFns::glide_run`]); fewer
/// with many channels (see [`RUN_VALUES`]).
const RUN: usize = 1024;

/// Fewest outputs of a run's capacity, whatever the channel count.
const RUN_MIN: usize = 64;

/// Output values (outputs times channels) a run's buffer holds at most, unless [`RUN_MIN`]
/// outputs need more.
const RUN_VALUES: usize = 4096;

/// `2^-64`: the unit of the clock's fixed-point fractions.
const FRAC_UNIT: f64 = 1.0 / 18_446_744_073_709_551_616.0;

/// Where the next output falls on the input's time axis, and how fast it moves: the state
/// every output's position is computed from, advanced by the same operations whatever the
/// chunking. The position and the increment are held in fixed point (whole input samples
/// and a 64-bit fraction), so that an advance is an integer addition with carry and not a
/// chain of floating-point roundings and conversions from one output to the next.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Clock {
    /// Whole input samples of the next output's time.
    int: i64,
    /// Fraction of an input sample, units of `2^-64`.
    frac: u64,
    /// Input samples per output (the phase increment) of the next step.
    step: f64,
    /// `step` in fixed point: whole samples and fraction (units of `2^-64`).
    step_int: i64,
    step_frac: u64,
    /// Increment at the start of the glide in progress.
    from: f64,
    /// Increment at its end.
    to: f64,
    /// Steps taken of the glide, and its length in steps (0: no glide).
    done: u64,
    frames: u64,
}

/// An increment (`0 < step <= 16`) in fixed point: whole samples and fraction.
#[inline]
fn fixed(step: f64) -> (i64, u64) {
    let whole = trunc_floor(step);
    // `(step - whole) 2^64` is below 2^64 (saturating at the top for a fraction that
    // rounds up to it).
    (
        whole as i64,
        ((step - whole) * 18_446_744_073_709_551_616.0) as u64,
    )
}

impl Clock {
    fn new(step: f64) -> Self {
        let (step_int, step_frac) = fixed(step);
        Self {
            int: 0,
            frac: 0,
            step,
            step_int,
            step_frac,
            from: step,
            to: step,
            done: 0,
            frames: 0,
        }
    }

    /// Set the increment (and its fixed-point form).
    #[inline]
    fn set_step(&mut self, step: f64) {
        self.step = step;
        (self.step_int, self.step_frac) = fixed(step);
    }

    /// The fraction of an input sample as a float (0 to 1).
    #[inline]
    fn frac_f64(&self) -> f64 {
        self.frac as f64 * FRAC_UNIT
    }

    /// Move to the next output.
    #[inline]
    fn advance(&mut self) {
        let (frac, carry) = self.frac.overflowing_add(self.step_frac);
        self.frac = frac;
        self.int += self.step_int + i64::from(carry);
        if self.done < self.frames {
            self.done += 1;
            let step = if self.done == self.frames {
                self.to
            } else {
                self.from + (self.to - self.from) * (self.done as f64 / self.frames as f64)
            };
            self.set_step(step);
        }
    }

    /// The ratio the step corresponds to (output / input).
    fn ratio(&self) -> f64 {
        1.0 / self.step
    }
}

/// The geometry of the table as the converter reads it.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Shape {
    phases: usize,
    cols: usize,
    half: f64,
    len: f64,
    interp: Interpolation,
    /// `half` as whole input samples and phases: `half = half_q phases + half_r`.
    half_q: i64,
    half_r: usize,
}

impl Shape {
    /// The geometry of a table of `phases` phases, prototype `len` taps, centre tap `half`.
    fn new(phases: usize, cols: usize, half: usize, len: usize, interp: Interpolation) -> Self {
        Self {
            phases,
            cols,
            half: half as f64,
            len: len as f64,
            interp,
            half_q: (half / phases) as i64,
            half_r: half % phases,
        }
    }

    /// First input index and count of the inputs the output at `clock` reads from the rows
    /// (no stretching).
    #[inline]
    fn rows_span(&self, c: &Clock) -> (i64, usize) {
        let (whole, _, _) = self.position(c);
        (c.int + whole - (self.cols as i64 - 1), self.cols)
    }

    /// Where the output at `clock` falls in the table read without stretching: whole input
    /// samples past `clock.int` of its newest input, the phase interval (between phases
    /// `p` and `p + 1`) and the position in it (0 to 1).
    #[inline(always)]
    fn position(&self, c: &Clock) -> (i64, usize, f64) {
        // frac P + half: the product's high word is the phase below the position (below
        // P), its low word the position past it; then the centre tap added.
        let m = u128::from(c.frac) * self.phases as u128;
        let below = (m >> 64) as usize + self.half_r;
        let at = (m as u64) as f64 * FRAC_UNIT;
        if below >= self.phases {
            (self.half_q + 1, below - self.phases, at)
        } else {
            (self.half_q, below, at)
        }
    }

    /// First input index and count of the inputs the output at `clock` reads with the kernel
    /// stretched by `1 / ratio` (a ratio below 1).
    #[inline]
    fn stretched_span(&self, c: &Clock) -> (i64, usize) {
        let rho = c.ratio().min(1.0);
        // Taps where q = (t - i) rho P + half lies within (-2, len + 1).
        let scale = rho * self.phases as f64;
        // The first is negative (ceil = truncation), the second positive (floor =
        // truncation): no library call per output.
        let frac = c.frac_f64();
        let lo = (frac - (self.len + 1.0 - self.half) / scale) as i64;
        let hi = (frac + (self.half + 2.0) / scale) as i64;
        (c.int + lo, (hi - lo + 1).max(0) as usize)
    }
}

/// A table in `T` as the converter reads it: the coefficient layout of the kernels' runs
/// ([`GlideRun`]): phase interval `p` (between phases `p` and `p + 1`) at
/// `data[row0 + p block..][..block]`, polynomial coefficients in the position between the
/// two phases (linear: the phase's taps and the difference to the next; cubic: the
/// Lagrange cubic through phases `p - 1 .. p + 2` in powers of the position, C. W. Farrow,
/// "A continuously variable digital delay element", Proc. IEEE ISCAS 1988), each block
/// starting on a 64-byte boundary (when the allocation allows).
#[derive(Debug, Clone)]
struct Table<T> {
    data: Vec<T>,
    row0: usize,
    block: usize,
    shape: Shape,
}

impl<T: Sample> Table<T> {
    /// Lay out `rows` (`phases + 3` rows of `shape.cols` taps, row `r` holding phase `r - 1`)
    /// as blocks of coefficients.
    fn new(rows: &[f64], shape: Shape) -> Self {
        let cols = shape.cols;
        let order = shape.interp.order();
        let chunk = glide_chunk::<T>();
        let block = glide_block_len::<T>(cols, order);
        let mut data = vec![T::zero(); shape.phases * block + chunk];
        let misalign = (data.as_ptr() as usize % 64) / core::mem::size_of::<T>();
        let row0 = (chunk - misalign) % chunk;
        let row = |r: usize, w: usize| rows[r * cols + w];
        for (p, dst) in data[row0..]
            .chunks_exact_mut(block)
            .take(shape.phases)
            .enumerate()
        {
            for w in 0..cols {
                let at = (w / chunk) * (order + 1) * chunk + w % chunk;
                let c: [f64; 4] = match shape.interp {
                    // Rows p + 1 and p + 2 hold phases p and p + 1.
                    Interpolation::Linear => {
                        let (y0, y1) = (row(p + 1, w), row(p + 2, w));
                        [y0, y1 - y0, 0.0, 0.0]
                    }
                    Interpolation::Cubic => {
                        cubic_coefficients([row(p, w), row(p + 1, w), row(p + 2, w), row(p + 3, w)])
                    }
                };
                for (r, &v) in c.iter().enumerate().take(order + 1) {
                    dst[at + r * chunk] = T::from_f64_lossy(v);
                }
            }
        }
        Self {
            data,
            row0,
            block,
            shape,
        }
    }
}

/// A streaming multichannel converter for any real ratio, changed while it runs.
///
/// Output sample `m` is the input signal at time `t_m` input samples, `t_0 = 0` and
/// `t_{m+1} = t_m + s_m`, where the phase increment `s_m` is `1 / ratio`; after
/// [`GlideConverter::glide_to`] it moves linearly from the old to the new increment over the
/// given number of outputs (it never steps, unless a glide of 0 frames is asked for). Below
/// a ratio of 1 the kernel is stretched by `1 / ratio` (its stopband edge follows the
/// output's Nyquist frequency) and its gain scaled back to 1, except inside the design's
/// band table ([`crate::GlideBand`]: within 0.1 % of a starting ratio below 1), which is
/// read like the main table, without stretching. The output does not depend on
/// how the input is chunked, bit for bit; processing calls do not allocate, lock or panic.
///
/// Each output needs input up to the kernel's look-ahead past its time
/// ([`GlideConverter::latency_input_frames`]), so the first outputs appear only after that
/// much input; [`GlideConverter::input_frames_for_output`] and
/// [`GlideConverter::output_frames_for_input`] answer exactly for the current ratio and
/// glide.
///
/// ```
/// use resample_core::{FilterSpec, GlideConverter};
/// let design = FilterSpec::new(48_000, 48_000).stopband_db(100.0).design_glide()?;
/// let mut conv = GlideConverter::<f32>::new(&design, 2)?;
/// conv.glide_to(1.0 + 250e-6, 4800)?; // the output clock runs 250 ppm fast
/// let input = vec![0.0_f32; 2 * 480];
/// let mut output = vec![0.0_f32; 2 * conv.max_output_frames(480)];
/// let p = conv.process_interleaved(&input, &mut output)?;
/// assert_eq!(p.frames_read, 480);
/// # Ok::<(), resample_core::Error>(())
/// ```
#[derive(Debug, Clone)]
pub struct GlideConverter<T> {
    /// The table (see [`GlideDesign`]), read at ratios of 1 or more.
    main: Table<T>,
    /// The table of a band of ratios below 1 (lowest, highest ratio), read inside the band.
    band: Option<(Table<T>, f64, f64)>,
    /// The prototype in tap order (times P), `FLAT_PAD` zeros before and after: prototype
    /// tap `q` at `flat[q + FLAT_PAD]`, for the stretched kernel's per-tap reads.
    flat: Vec<T>,
    shape: Shape,
    channels: usize,
    fns: KernelFns<T>,
    /// Planar history, channel `c` at `hist[c * cap..]`; `hist[c * cap + k]` is input
    /// `base + k`.
    hist: Vec<T>,
    cap: usize,
    base: i64,
    fill: usize,
    /// History kept behind the next output's time (the widest span's back part).
    keep_back: i64,
    /// The taps of one output.
    taps: Vec<T>,
    /// The run in preparation, in the order of the table's blocks (the kernel reads each
    /// block once for all the run's outputs that fall in it, and the blocks in the order
    /// they are stored): per output its block in the table, its first input in `hist`, its
    /// position between the block's phases and its index in the run; and the run's
    /// outputs (`run_cap` of every channel), in the same order.
    run_blocks: Vec<usize>,
    run_starts: Vec<usize>,
    run_fracs: Vec<T>,
    run_order: Vec<u32>,
    run_out: Vec<T>,
    /// The run in output order before sorting: phase interval, first input, position.
    run_phase: Vec<u32>,
    run_start0: Vec<usize>,
    run_frac0: Vec<T>,
    /// Outputs per phase interval (counting sort), one more than the largest table's
    /// phases.
    run_counts: Vec<u32>,
    /// Outputs a run holds at most.
    run_cap: usize,
    clock: Clock,
    start_step: f64,
    n_in: u64,
    n_out: u64,
    flushing: bool,
}

fn check_ratio(ratio: f64) -> Result<()> {
    if !(MIN_GLIDE_RATIO..=MAX_GLIDE_RATIO).contains(&ratio) {
        return Err(Error::RatioOutOfRange { ratio });
    }
    Ok(())
}

impl<T: Sample> GlideConverter<T> {
    /// A converter for `channels` channels starting at the design's rate pair's ratio
    /// (`out_rate / in_rate`), using the fastest kernel this CPU has.
    pub fn new(design: &GlideDesign, channels: usize) -> Result<Self> {
        let spec = design.spec();
        let ratio = f64::from(spec.out_rate()) / f64::from(spec.in_rate());
        Self::with_kernel(design, channels, ratio, Kernel::detect())
    }

    /// A converter starting at `ratio` (output rate / input rate) with a given kernel (e.g.
    /// [`Kernel::Scalar`] for the reference dot product).
    pub fn with_kernel(
        design: &GlideDesign,
        channels: usize,
        ratio: f64,
        kernel: Kernel,
    ) -> Result<Self> {
        if channels == 0 || channels > crate::MAX_CHANNELS {
            return Err(Error::ChannelsOutOfRange { channels });
        }
        check_ratio(ratio)?;
        let fns = KernelFns::new(kernel)?;
        let shape = Shape::new(
            design.phases(),
            design.cols(),
            design.half(),
            design.len(),
            design.report().interpolation,
        );
        // The widest span, at the smallest ratio.
        let scale = MIN_GLIDE_RATIO * shape.phases as f64;
        let back = ((shape.len + 1.0 - shape.half) / scale).ceil() as usize + 2;
        let ahead = ((shape.half + 2.0) / scale).ceil() as usize + 2;
        let band_cols = design.band().map_or(0, |b| b.cols);
        let back = back.max(band_cols + 2);
        let widest = (back + ahead + shape.cols + 2).max(band_cols + 4);
        let cap = widest + BLOCK;
        let mut flat = vec![T::zero(); design.len() + 2 * FLAT_PAD];
        // Row r holds phase r - 1 of column j (reversed): prototype tap j P + r - 1.
        let (ph, cols) = (design.phases(), design.cols());
        for (r, row) in design
            .rows()
            .chunks_exact(cols)
            .enumerate()
            .skip(1)
            .take(ph)
        {
            for (w, &v) in row.iter().enumerate() {
                let q = (cols - 1 - w) * ph + r - 1;
                if q < design.len() {
                    flat[q + FLAT_PAD] = T::from_f64_lossy(v);
                }
            }
        }
        let main = Table::new(design.rows(), shape);
        let band = design.band().map(|b| {
            let shape = Shape::new(b.phases, b.cols, b.half, b.len, b.interp);
            (Table::new(&b.rows, shape), b.lowest, b.highest)
        });
        let max_phases = band
            .as_ref()
            .map_or(0, |b| b.0.shape.phases)
            .max(shape.phases);
        let run_cap = (RUN_VALUES / channels).clamp(RUN_MIN, RUN);
        let mut conv = Self {
            main,
            band,
            flat,
            shape,
            channels,
            fns,
            hist: vec![T::zero(); cap * channels],
            cap,
            base: 0,
            fill: 0,
            keep_back: back as i64 + 1,
            taps: vec![T::zero(); widest],
            run_blocks: vec![0; run_cap],
            run_starts: vec![0; run_cap],
            run_fracs: vec![T::zero(); run_cap],
            run_order: vec![0; run_cap],
            run_out: vec![T::zero(); run_cap * channels],
            run_phase: vec![0; run_cap],
            run_start0: vec![0; run_cap],
            run_frac0: vec![T::zero(); run_cap],
            run_counts: vec![0; max_phases + 1],
            run_cap,
            clock: Clock::new(1.0 / ratio),
            start_step: 1.0 / ratio,
            n_in: 0,
            n_out: 0,
            flushing: false,
        };
        conv.reset();
        Ok(conv)
    }

    /// Forget all input and return to the starting ratio. Does not allocate.
    pub fn reset(&mut self) {
        let keep = self.keep_back as usize;
        for b in self.hist.chunks_exact_mut(self.cap) {
            b[..keep].fill(T::zero());
        }
        self.base = -self.keep_back;
        self.fill = keep;
        self.clock = Clock::new(self.start_step);
        self.n_in = 0;
        self.n_out = 0;
        self.flushing = false;
    }

    /// Channels.
    pub fn channels(&self) -> usize {
        self.channels
    }

    /// The ratio (output rate / input rate) of the next output's step.
    pub fn ratio(&self) -> f64 {
        self.clock.ratio()
    }

    /// The ratio the converter is gliding to (the current one when no glide runs).
    pub fn target_ratio(&self) -> f64 {
        1.0 / self.clock.to
    }

    /// Outputs left of the glide in progress (0 when none runs).
    pub fn glide_frames_left(&self) -> u64 {
        self.clock.frames - self.clock.done
    }

    /// Move to `ratio` (output rate / input rate) over the next `frames` output frames: the
    /// phase increment (input samples per output, `1 / ratio`) moves linearly from its
    /// present value and reaches `1 / ratio` at the `frames`-th output. `frames = 0` sets
    /// the ratio at once. A glide in progress is replaced, starting from where it is.
    /// [`Error::RatioOutOfRange`] outside [`MIN_GLIDE_RATIO`]..=[`MAX_GLIDE_RATIO`].
    /// Does not allocate.
    pub fn glide_to(&mut self, ratio: f64, frames: u64) -> Result<()> {
        check_ratio(ratio)?;
        let to = 1.0 / ratio;
        let c = &mut self.clock;
        c.from = c.step;
        c.to = to;
        c.done = 0;
        c.frames = frames;
        if frames == 0 {
            c.set_step(to);
            c.from = to;
        }
        Ok(())
    }

    /// The kernel's look-ahead at the current ratio, input frames: an output needs input
    /// this far past its own time (at ratios below 1 it grows as `1 / ratio`).
    pub fn latency_input_frames(&self) -> f64 {
        self.look_ahead(self.clock.ratio())
    }

    /// The kernel's look-ahead at `ratio`, input frames.
    fn look_ahead(&self, ratio: f64) -> f64 {
        match self.table_for(ratio) {
            Some(t) => t.shape.half / t.shape.phases as f64,
            None => self.shape.half / (self.shape.phases as f64 * ratio.min(1.0)),
        }
    }

    /// The table read (without stretching) at `ratio`: the main one from 1 up, the band's
    /// inside its band; `None` below 1 elsewhere (the stretched kernel).
    #[inline]
    fn table_for(&self, ratio: f64) -> Option<&Table<T>> {
        pick(&self.main, &self.band, ratio)
    }

    /// First input index and count of the inputs the output at `c` reads.
    #[inline]
    fn span_at(&self, c: &Clock) -> (i64, usize) {
        match self.table_for(c.ratio()) {
            Some(t) => t.shape.rows_span(c),
            None => self.shape.stretched_span(c),
        }
    }

    /// Input frames taken so far.
    pub fn input_frames(&self) -> u64 {
        self.n_in
    }

    /// Output frames written so far.
    pub fn output_frames(&self) -> u64 {
        self.n_out
    }

    /// Time of the next output, in input frames since the first input frame.
    pub fn next_output_time(&self) -> f64 {
        self.clock.int as f64 + self.clock.frac_f64()
    }

    /// Output frames that `input_frames` more input frames would make ready (before any
    /// flush), following the current ratio and glide exactly.
    pub fn output_frames_for_input(&self, input_frames: u64) -> u64 {
        let avail = self.n_in.saturating_add(input_frames) as i64;
        let mut c = self.clock;
        let mut n = 0;
        loop {
            let (lo, count) = self.span_at(&c);
            if lo + count as i64 > avail {
                return n;
            }
            n += 1;
            c.advance();
        }
    }

    /// Smallest number of further input frames after which `output_frames` more output
    /// frames are ready (before any flush), following the current ratio and glide exactly.
    pub fn input_frames_for_output(&self, output_frames: u64) -> u64 {
        if output_frames == 0 {
            return 0;
        }
        let mut c = self.clock;
        let mut need = 0_i64;
        for _ in 0..output_frames {
            let (lo, count) = self.span_at(&c);
            need = need.max(lo + count as i64);
            c.advance();
        }
        (need.max(0) as u64).saturating_sub(self.n_in)
    }

    /// Room to give one processing call of `input_frames` frames so that it reads all of
    /// them: `ceil(input_frames r) + 2`, with `r` the larger of the current and target
    /// ratios, plus what a shrinking look-ahead releases when the ratio rises below 1.
    pub fn max_output_frames(&self, input_frames: usize) -> usize {
        let r = self.ratio().max(self.target_ratio());
        let look = |ratio: f64| self.look_ahead(ratio);
        let shrink = (look(self.ratio()) - look(self.target_ratio())).max(0.0);
        let n = ((input_frames as f64 + shrink) * r).ceil() + 2.0;
        if n >= usize::MAX as f64 {
            usize::MAX
        } else {
            n as usize
        }
    }

    /// Output frames still to come from flushing if it started now: every output whose time
    /// falls before the end of the input (the flushed tail follows the current glide).
    pub fn flush_frames(&self) -> u64 {
        let end = self.n_in as i64;
        let mut c = self.clock;
        let mut n = 0;
        while c.int < end {
            n += 1;
            c.advance();
        }
        n
    }

    /// True once flushing has delivered every output frame.
    pub fn is_finished(&self) -> bool {
        self.flushing && self.clock.int >= self.n_in as i64
    }

    /// Convert interleaved input into interleaved output. Reads input only while there is
    /// room for the output it makes ready; returns what was read and written.
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
            |hist, cap, at, from, n| {
                load_interleaved(hist, cap, ch, at, &input[from * ch..(from + n) * ch]);
            },
            |frame, c, v| output[frame * ch + c] = v,
        ))
    }

    /// Convert planar input (one slice per channel, all the same length) into planar output
    /// (one slice per channel, all the same length).
    pub fn process_planar<I, O>(&mut self, input: &[I], output: &mut [O]) -> Result<Progress>
    where
        I: AsRef<[T]>,
        O: AsMut<[T]>,
    {
        let frames_in = planar_len(
            input.iter().map(|c| c.as_ref().len()),
            self.channels,
            "planar input",
        )?;
        let frames_out = planar_len(
            output.iter_mut().map(|c| c.as_mut().len()),
            self.channels,
            "planar output",
        )?;
        if self.flushing {
            return Err(Error::InputAfterFlush);
        }
        Ok(self.run(
            frames_in,
            frames_out,
            |hist, cap, at, from, n| {
                for (buf, src) in hist.chunks_exact_mut(cap).zip(input) {
                    buf[at..at + n].copy_from_slice(&src.as_ref()[from..from + n]);
                }
            },
            |frame, c, v| output[c].as_mut()[frame] = v,
        ))
    }

    /// Finish the stream into interleaved `output`: the outputs whose times fall before the
    /// end of the input, computed with zeros after it. Returns the frames written; call
    /// again until it returns 0 ([`GlideConverter::is_finished`]).
    pub fn flush_interleaved(&mut self, output: &mut [T]) -> Result<usize> {
        let ch = self.channels;
        check_interleaved(
            output.len(),
            ch,
            "interleaved output length (multiple of channels)",
        )?;
        self.flushing = true;
        Ok(self.produce(output.len() / ch, |frame, c, v| output[frame * ch + c] = v))
    }

    /// Planar twin of [`GlideConverter::flush_interleaved`].
    pub fn flush_planar<O: AsMut<[T]>>(&mut self, output: &mut [O]) -> Result<usize> {
        let frames_out = planar_len(
            output.iter_mut().map(|c| c.as_mut().len()),
            self.channels,
            "planar output",
        )?;
        self.flushing = true;
        Ok(self.produce(frames_out, |frame, c, v| output[c].as_mut()[frame] = v))
    }

    fn run(
        &mut self,
        frames_in: usize,
        frames_out: usize,
        mut load: impl FnMut(&mut [T], usize, usize, usize, usize),
        mut store: impl FnMut(usize, usize, T),
    ) -> Progress {
        let mut read = 0;
        let mut written = 0;
        loop {
            let at = written;
            written += self.produce(frames_out - written, |f, c, v| store(at + f, c, v));
            if written == frames_out || read == frames_in {
                break;
            }
            if self.fill == self.cap {
                let before = self.fill;
                self.make_room();
                if self.fill == before {
                    break; // cannot happen: the next output never needs the whole history
                }
                continue;
            }
            let take = (self.cap - self.fill).min(frames_in - read);
            load(&mut self.hist, self.cap, self.fill, read, take);
            self.fill += take;
            self.n_in += take as u64;
            read += take;
        }
        Progress {
            frames_read: read,
            frames_written: written,
        }
    }

    /// Drop history older than the widest span behind the next output could reach.
    fn make_room(&mut self) {
        let start = self.clock.int - self.keep_back;
        let rel = start - self.base;
        if rel <= 0 {
            return;
        }
        let drop = (rel as usize).min(self.fill);
        for b in self.hist.chunks_exact_mut(self.cap) {
            b.copy_within(drop..self.fill, 0);
        }
        self.fill -= drop;
        self.base += drop as i64;
    }

    /// Compute outputs while their input is present (when flushing, while their time is
    /// before the end), at most `max`; `store(frame, channel, value)`.
    fn produce(&mut self, max: usize, mut store: impl FnMut(usize, usize, T)) -> usize {
        let mut done = 0;
        while done < max {
            if self.flushing && self.clock.int >= self.n_in as i64 {
                break;
            }
            let ratio = self.clock.ratio();
            let table = pick(&self.main, &self.band, ratio);
            if let Some(t) = table {
                // A run of outputs read from this table, whose input is present: the
                // taps of each interpolated once and shared by the channels (the kernels'
                // run), the positions prepared here.
                let limit = (max - done).min(self.run_cap);
                let end_of_input = self.base + self.fill as i64;
                let (base, cols) = (self.base, t.shape.cols as i64);
                let stop = if self.flushing {
                    self.n_in as i64
                } else {
                    i64::MAX
                };
                // Locals, so that the loop keeps them in registers.
                let phases = &mut self.run_phase[..limit];
                let starts = &mut self.run_start0[..limit];
                let fracs = &mut self.run_frac0[..limit];
                let mut clock = self.clock;
                let mut k = 0;
                while k < limit {
                    if clock.int >= stop {
                        break;
                    }
                    // Without a glide the ratio, and so the table, stays (the first
                    // output's was picked above).
                    if clock.done < clock.frames
                        && k > 0
                        && !pick(&self.main, &self.band, clock.ratio())
                            .is_some_and(|u| core::ptr::eq(u, t))
                    {
                        break;
                    }
                    let (q, phase, frac) = t.shape.position(&clock);
                    let lo = clock.int + q - (cols - 1);
                    if lo + cols > end_of_input {
                        break;
                    }
                    phases[k] = phase as u32;
                    starts[k] = (lo - base) as usize;
                    fracs[k] = T::from_f64_lossy(frac);
                    k += 1;
                    clock.advance();
                }
                self.clock = clock;
                if k > 0 {
                    // Counting sort by phase interval: each output keeps its own
                    // arithmetic (the kernel computes every output alone), only the
                    // order of computing them changes, so the results do not.
                    let counts = &mut self.run_counts[..t.shape.phases + 1];
                    counts.fill(0);
                    for &p in &phases[..k] {
                        counts[p as usize + 1] += 1;
                    }
                    let mut sum = 0;
                    for n in counts.iter_mut() {
                        sum += *n;
                        *n = sum;
                    }
                    let blocks = &mut self.run_blocks[..k];
                    let sorted_starts = &mut self.run_starts[..k];
                    let sorted_fracs = &mut self.run_fracs[..k];
                    let order = &mut self.run_order[..k];
                    let (row0, block) = (t.row0, t.block);
                    for (i, ((&p, &s), &f)) in phases[..k]
                        .iter()
                        .zip(&starts[..k])
                        .zip(&fracs[..k])
                        .enumerate()
                    {
                        let d = counts[p as usize] as usize;
                        counts[p as usize] += 1;
                        blocks[d] = row0 + p as usize * block;
                        sorted_starts[d] = s;
                        sorted_fracs[d] = f;
                        order[d] = i as u32;
                    }
                    let run = GlideRun {
                        table: &t.data,
                        cols: t.shape.cols,
                        order: t.shape.interp.order(),
                        hist: &self.hist,
                        stride: self.cap,
                        channels: self.channels,
                        blocks: &self.run_blocks[..k],
                        starts: &self.run_starts[..k],
                        fracs: &self.run_fracs[..k],
                    };
                    let ok = self.fns.glide_run(&run, &mut self.run_out).is_ok();
                    debug_assert!(ok, "run sizes hold by construction");
                    let ch = self.channels;
                    for (o, &i) in self.run_out.chunks_exact(ch).zip(&self.run_order[..k]) {
                        for (c, &v) in o.iter().enumerate() {
                            store(done + i as usize, c, v);
                        }
                    }
                    done += k;
                    self.n_out += k as u64;
                    continue;
                }
            }
            let (lo, count) = match table {
                Some(t) => t.shape.rows_span(&self.clock),
                None => self.shape.stretched_span(&self.clock),
            };
            let end = lo + count as i64;
            if end > self.base + self.fill as i64 {
                if !self.flushing {
                    break;
                }
                // Past the last input the signal is zero.
                if self.fill == self.cap {
                    self.make_room();
                }
                let need = (end - (self.base + self.fill as i64)) as usize;
                let k = need.min(self.cap - self.fill);
                if k == 0 {
                    break; // cannot happen: room was made above
                }
                for b in self.hist.chunks_exact_mut(self.cap) {
                    b[self.fill..self.fill + k].fill(T::zero());
                }
                self.fill += k;
                continue;
            }
            if table.is_some() {
                break; // cannot happen: a table's output with its input present ran above
            }
            let from = (lo - self.base) as usize;
            self.fill_taps(count);
            let taps = &self.taps[..count];
            for (c, b) in self.hist.chunks_exact(self.cap).enumerate() {
                store(done, c, self.fns.dot(taps, &b[from..from + count]));
            }
            done += 1;
            self.n_out += 1;
            self.clock.advance();
        }
        done
    }

    /// The taps of the output at the clock's position (a ratio below 1: the stretched
    /// kernel), oldest input first.
    fn fill_taps(&mut self, count: usize) {
        let sh = self.shape;
        let c = &self.clock;
        let p = sh.phases as f64;
        let rho = c.ratio().min(1.0);
        debug_assert!(
            rho < 1.0,
            "ratios of 1 or more read the coefficient table (glide_run)"
        );
        // Stretched kernel: tap k at its own position q_k = (t - lo - k) rho P + half, read
        // from the prototype in tap order.
        let (lo, _) = sh.stretched_span(c);
        let scale = rho * p;
        let q0 = ((c.int - lo) as f64 + c.frac_f64()) * scale + sh.half;
        let gain = T::from_f64_lossy(rho);
        let flat = &self.flat;
        let last = flat.len() as i64 - 4;
        let taps = &mut self.taps[..count];
        match sh.interp {
            Interpolation::Linear => {
                for (k, t) in taps.iter_mut().enumerate() {
                    let q = q0 - k as f64 * scale;
                    let base = trunc_floor(q + 4.0) - 4.0; // q > -2
                    let i = (base as i64 + FLAT_PAD as i64).clamp(0, last) as usize;
                    let a = T::from_f64_lossy(q - base);
                    let (h0, h1) = (flat[i], flat[i + 1]);
                    *t = gain * (h0 + a * (h1 - h0));
                }
            }
            Interpolation::Cubic => {
                for (k, t) in taps.iter_mut().enumerate() {
                    let q = q0 - k as f64 * scale;
                    let base = trunc_floor(q + 4.0) - 4.0; // q > -2
                    let i = (base as i64 + FLAT_PAD as i64 - 1).clamp(0, last) as usize;
                    let w = sh.interp.weights(q - base).map(T::from_f64_lossy);
                    let h = &flat[i..i + 4];
                    *t = gain * (w[0] * h[0] + w[1] * h[1] + w[2] * h[2] + w[3] * h[3]);
                }
            }
        }
    }
}

/// See [`GlideConverter::table_for`] (apart, for borrowing the fields one by one).
#[inline]
#[allow(clippy::type_complexity)]
fn pick<'a, T>(
    main: &'a Table<T>,
    band: &'a Option<(Table<T>, f64, f64)>,
    ratio: f64,
) -> Option<&'a Table<T>> {
    if ratio >= 1.0 {
        return Some(main);
    }
    match band {
        Some((t, lo, hi)) if ratio >= *lo && ratio <= *hi => Some(t),
        _ => None,
    }
}

/// `floor(x)` for `0 <= x < 2^63` by truncation (an instruction, where `f64::floor` may be a
/// library call on the baseline x86_64 target).
#[inline(always)]
fn trunc_floor(x: f64) -> f64 {
    (x as i64) as f64
}

/// The common length of planar channel slices, checking their count.
fn planar_len(
    mut lens: impl Iterator<Item = usize>,
    channels: usize,
    what: &'static str,
) -> Result<usize> {
    let Some(n) = lens.next() else {
        return Err(Error::BufferShape {
            what,
            expected: channels,
            got: 0,
        });
    };
    let mut count = 1;
    for l in lens {
        if l != n {
            return Err(Error::BufferShape {
                what,
                expected: n,
                got: l,
            });
        }
        count += 1;
    }
    if count != channels {
        return Err(Error::BufferShape {
            what,
            expected: channels,
            got: count,
        });
    }
    Ok(n)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::FilterSpec;

    #[test]
    fn position_matches_exact_arithmetic() {
        // frac P + half in exact integer arithmetic (u128): the whole part split into
        // (whole samples, phase), the rest the position between phases.
        for (phases, half) in [
            (64_usize, 4_000_usize),
            (212, 25_011),
            (592, 47_000),
            (1023, 5),
        ] {
            let sh = Shape::new(phases, 1, half, 2 * half + 1, Interpolation::Linear);
            let mut frac = 0x9E37_79B9_7F4A_7C15_u64;
            for i in 0..20_000_u64 {
                frac = frac.wrapping_mul(6_364_136_223_846_793_005).wrapping_add(i);
                let c = Clock {
                    frac,
                    ..Clock::new(1.0)
                };
                let m = u128::from(frac) * phases as u128;
                let whole = (m >> 64) as usize + half;
                let (q, phase, at) = sh.position(&c);
                assert_eq!((q, phase), ((whole / phases) as i64, whole % phases));
                assert_eq!(at, (m as u64) as f64 / 2f64.powi(64));
            }
        }
    }

    #[test]
    fn fixed_point_advance_tracks_the_time() {
        // 10^6 steps of 1 / 1.0885442 input samples: the fixed-point time against the
        // product computed in f64 (common practice, no source).
        let step = 1.0 / 1.088_544_2;
        let mut c = Clock::new(step);
        for _ in 0..1_000_000 {
            c.advance();
        }
        let t = c.int as f64 + c.frac_f64();
        assert!((t - 1e6 * step).abs() < 1e-6, "{t} vs {}", 1e6 * step);
    }

    #[test]
    fn clock_glide_ramps_the_increment() {
        let mut c = Clock::new(1.0);
        c.from = 1.0;
        c.to = 2.0;
        c.frames = 4;
        let mut steps = vec![];
        for _ in 0..6 {
            steps.push(c.step);
            assert_eq!(fixed(c.step), (c.step_int, c.step_frac));
            c.advance();
        }
        assert_eq!(steps, [1.0, 1.25, 1.5, 1.75, 2.0, 2.0]);
    }

    #[test]
    fn bad_ratios_are_errors() {
        let d = FilterSpec::new(1, 1)
            .stopband_db(60.0)
            .design_glide()
            .unwrap();
        let mut c = GlideConverter::<f64>::new(&d, 1).unwrap();
        for r in [0.0, -1.0, f64::NAN, f64::INFINITY, 16.5, 0.06] {
            assert!(matches!(
                c.glide_to(r, 10),
                Err(Error::RatioOutOfRange { .. })
            ));
        }
        assert!(GlideConverter::<f64>::with_kernel(&d, 1, 17.0, Kernel::Scalar).is_err());
        assert!(GlideConverter::<f64>::new(&d, 0).is_err());
    }

    #[test]
    fn queries_match_processing() {
        let d = FilterSpec::new(1, 1)
            .stopband_db(80.0)
            .design_glide()
            .unwrap();
        for ratio in [0.3, 0.999, 1.0, 1.7] {
            let mut c = GlideConverter::<f64>::with_kernel(&d, 1, ratio, Kernel::Scalar).unwrap();
            c.glide_to(ratio * 1.3, 500).unwrap();
            let x = vec![0.5; 97];
            let mut out = vec![0.0; 4000];
            for _ in 0..20 {
                let expect = c.output_frames_for_input(97);
                let need = c.input_frames_for_output(expect.max(1));
                let p = c.process_interleaved(&x, &mut out).unwrap();
                assert_eq!(p.frames_read, 97);
                assert_eq!(p.frames_written as u64, expect);
                assert!(need <= 97 || expect == 0);
            }
            let left = c.flush_frames();
            let mut got = 0;
            loop {
                let n = c.flush_interleaved(&mut out[..33]).unwrap();
                if n == 0 {
                    break;
                }
                got += n as u64;
            }
            assert_eq!(got, left);
            assert!(c.is_finished());
        }
    }
}
