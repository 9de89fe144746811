//! The half-band stage of a two-stage conversion, streaming: 2:1 (decimation) or 1:2
//! (interpolation) through a symmetric prototype whose taps at even distances from the
//! centre are zero, so each output costs one multiply-add per pair of nonzero taps.
//!
//! With `c` the centre tap, `K` the number of nonzero taps on each side and
//! `g_t = h[c + 2t + 1]` (`t < K`), and zero delay (output `m` at input time `m M / L`, as
//! every engine here):
//!
//! * 2:1: `y[m] = h[c] x[2m] + sum_t g_t (x[2m + 2t + 1] + x[2m - 2t - 1])`;
//! * 1:2 (gain 2): `y[2i] = 2 h[c] x[i]`, `y[2i + 1] = sum_t 2 g_t (x[i + t + 1] + x[i - t])`.
//!
//! Both are the polyphase sum `y[m] = L sum_j h[j] x[(m M + c - j) / L]` of the prototype
//! (terms with a zero tap left out). Each output is computed by the same operations in the
//! same order wherever it falls in a block, so the output does not depend on chunking.

use super::stream::Progress;
use crate::kernel::Sample;
use crate::Design;

/// Input frames buffered per channel beyond the filter's reach.
const BLOCK: usize = 4096;

/// Outputs computed per block.
const OUT_BLOCK: usize = 1024;

/// A streaming half-band stage.
#[derive(Debug, Clone)]
pub(super) struct HalfBand<T> {
    down: bool,
    centre: T,
    g: Vec<T>,
    channels: usize,
    /// Planar history: channel `c` at `hist[c * cap..][..fill]`, input index `base` first.
    hist: Vec<T>,
    cap: usize,
    base: u64,
    fill: usize,
    n_in: u64,
    n_out: u64,
    flushing: bool,
    /// Gathered input of a block (even samples for 2:1), the odd samples (2:1) or the
    /// input around the block (1:2), and the outputs of a block (one or two rows).
    even: Vec<T>,
    odd: Vec<T>,
    acc: Vec<T>,
    acc2: Vec<T>,
}

impl<T: Sample> HalfBand<T> {
    /// The stage for a half-band design (2:1 or 1:2; zeros at even distances from the
    /// centre, which the caller guarantees: `FilterSpec::plan` makes them).
    pub(super) fn new(design: &Design, channels: usize) -> Self {
        let pair = design.pair();
        let down = pair.down() == 2;
        let gain = f64::from(pair.up());
        let h = design.taps();
        let c = design.delay() as usize;
        let k = c.div_ceil(2).max(1);
        let g = (0..k)
            .map(|t| T::from_f64_lossy(gain * h.get(c + 2 * t + 1).copied().unwrap_or(0.0)))
            .collect();
        let cap = BLOCK + 2 * k + 2;
        Self {
            down,
            centre: T::from_f64_lossy(gain * h[c]),
            g,
            channels,
            hist: vec![T::zero(); cap * channels],
            cap,
            base: 0,
            fill: 0,
            n_in: 0,
            n_out: 0,
            flushing: false,
            even: vec![T::zero(); OUT_BLOCK + 2],
            odd: vec![T::zero(); OUT_BLOCK + 2 * k + 2],
            acc: vec![T::zero(); OUT_BLOCK + 2],
            acc2: vec![T::zero(); OUT_BLOCK + 2],
        }
    }

    fn k(&self) -> u64 {
        self.g.len() as u64
    }

    pub(super) fn reset(&mut self) {
        self.base = 0;
        self.fill = 0;
        self.n_in = 0;
        self.n_out = 0;
        self.flushing = false;
    }

    /// Outputs ready after `n` input frames (before flushing).
    fn ready(&self, n: u64) -> u64 {
        let k = self.k();
        if self.down {
            // Output m reads up to x[2m + 2K - 1].
            let reach = (2 * k).saturating_sub(1);
            n.saturating_sub(reach).div_ceil(2)
        } else {
            // Output m reads up to x[floor(m / 2) + K].
            2 * n.saturating_sub(k)
        }
    }

    /// Outputs in all for `n` input frames.
    fn total(&self, n: u64) -> u64 {
        if self.down {
            n.div_ceil(2)
        } else {
            2 * n
        }
    }

    pub(super) fn output_frames_for_input(&self, input_frames: u64) -> u64 {
        self.ready(self.n_in + input_frames)
            .saturating_sub(self.n_out)
    }

    pub(super) fn max_output_frames(&self, input_frames: usize) -> usize {
        if self.down {
            input_frames.div_ceil(2)
        } else {
            input_frames.saturating_mul(2)
        }
    }

    pub(super) fn input_frames_for_output(&self, output_frames: u64) -> u64 {
        if output_frames == 0 {
            return 0;
        }
        let j = self.n_out + output_frames - 1;
        let need = if self.down {
            2 * j + (2 * self.k()).saturating_sub(1) + 1
        } else {
            j / 2 + self.k() + 1
        };
        need.saturating_sub(self.n_in)
    }

    pub(super) fn is_finished(&self) -> bool {
        self.flushing && self.n_out >= self.total(self.n_in)
    }

    /// Convert whole planar channels (the offline path; the same outputs as streaming).
    pub(super) fn convert_whole<I: AsRef<[T]>>(design: &Design, input: &[I]) -> Vec<Vec<T>> {
        let mut h = Self::new(design, input.len());
        let n = input.first().map_or(0, |c| c.as_ref().len());
        let total = usize::try_from(h.total(n as u64)).unwrap_or(usize::MAX);
        let mut out = vec![vec![T::zero(); total]; input.len()];
        let mut read = 0;
        let mut written = 0;
        while read < n {
            let ins: Vec<&[T]> = input.iter().map(|c| &c.as_ref()[read..]).collect();
            let mut outs: Vec<&mut [T]> = out.iter_mut().map(|c| &mut c[written..]).collect();
            let p = h.process(&ins, &mut outs);
            read += p.frames_read;
            written += p.frames_written;
            if p.frames_read == 0 && p.frames_written == 0 {
                break;
            }
        }
        loop {
            let mut outs: Vec<&mut [T]> = out.iter_mut().map(|c| &mut c[written..]).collect();
            let k = h.flush(&mut outs);
            written += k;
            if k == 0 {
                break;
            }
        }
        out
    }

    /// Sample `i` of channel `ch` (zero before the start and after the end).
    #[inline]
    fn x(&self, ch: usize, i: i64) -> T {
        if i < 0 || i as u64 >= self.n_in {
            return T::zero();
        }
        let at = (i as u64 - self.base) as usize;
        self.hist[ch * self.cap + at]
    }

    /// Oldest input the next output reads.
    fn oldest_needed(&self) -> u64 {
        let k = self.k();
        if self.down {
            (2 * self.n_out).saturating_sub((2 * k).saturating_sub(1))
        } else {
            (self.n_out / 2).saturating_sub(k.saturating_sub(1))
        }
    }

    fn make_room(&mut self) {
        let start = self.oldest_needed().max(self.base);
        let drop = ((start - self.base) as usize).min(self.fill);
        if drop == 0 {
            return;
        }
        for b in self.hist.chunks_exact_mut(self.cap) {
            b.copy_within(drop..self.fill, 0);
        }
        self.fill -= drop;
        self.base += drop as u64;
    }

    /// `out[q] = x(ch, first + q * step)` for every `q`, read straight from the history
    /// where all of it is there.
    fn gather(&self, ch: usize, first: i64, step: usize, out: &mut [T]) {
        let last = first + ((out.len().max(1) - 1) * step) as i64;
        if first >= self.base as i64 && (last as u64) < self.n_in {
            let at = ch * self.cap + (first as u64 - self.base) as usize;
            let src = &self.hist[at..];
            for (q, o) in out.iter_mut().enumerate() {
                *o = src[q * step];
            }
        } else {
            for (q, o) in out.iter_mut().enumerate() {
                *o = self.x(ch, first + (q * step) as i64);
            }
        }
    }

    /// `acc[j] += g_t (odd[j + K + t] + odd[j + K - 1 - t])` for every tap pair, in order
    /// of `t` (16 outputs at a time held in registers; the tail one by one, by the same
    /// operations in the same order).
    fn pairs(g: &[T], odd: &[T], acc: &mut [T]) {
        const W: usize = 16;
        let k = g.len();
        let n = acc.len();
        let whole = n - n % W;
        for j0 in (0..whole).step_by(W) {
            let mut a = [T::zero(); W];
            a.copy_from_slice(&acc[j0..j0 + W]);
            for (t, &gt) in g.iter().enumerate() {
                let hi = &odd[j0 + k + t..j0 + k + t + W];
                let lo = &odd[j0 + k - 1 - t..j0 + k - 1 - t + W];
                for l in 0..W {
                    a[l] = a[l] + gt * (hi[l] + lo[l]);
                }
            }
            acc[j0..j0 + W].copy_from_slice(&a);
        }
        for j in whole..n {
            let mut a = acc[j];
            for (t, &gt) in g.iter().enumerate() {
                a = a + gt * (odd[j + k + t] + odd[j + k - 1 - t]);
            }
            acc[j] = a;
        }
    }

    /// Compute outputs `m0..m0 + nb` of channel `ch` into `acc[..nb]`.
    fn block(&mut self, ch: usize, m0: u64, nb: usize) {
        let k = self.g.len();
        let ki = k as i64;
        let mut even = std::mem::take(&mut self.even);
        let mut odd = std::mem::take(&mut self.odd);
        let mut acc = std::mem::take(&mut self.acc);
        if self.down {
            self.gather(ch, 2 * m0 as i64, 2, &mut even[..nb]);
            self.gather(ch, 2 * (m0 as i64 - ki) + 1, 2, &mut odd[..nb + 2 * k - 1]);
            let centre = self.centre;
            for (a, &e) in acc[..nb].iter_mut().zip(&even[..nb]) {
                *a = centre * e;
            }
            Self::pairs(&self.g, &odd[..nb + 2 * k - 1], &mut acc[..nb]);
        } else {
            // Inputs i0..=i1 serve outputs m0..m0 + nb (outputs 2i and 2i + 1).
            let i0 = m0 / 2;
            let i1 = (m0 + nb as u64 - 1) / 2;
            let ni = (i1 - i0 + 1) as usize;
            self.gather(ch, i0 as i64 - (ki - 1), 1, &mut odd[..ni + 2 * k - 1]);
            let centre = self.centre;
            let mut acc2 = std::mem::take(&mut self.acc2);
            for (a, &e) in acc[..ni].iter_mut().zip(&odd[k - 1..k - 1 + ni]) {
                *a = centre * e;
            }
            for b in &mut acc2[..ni] {
                *b = T::zero();
            }
            Self::pairs(&self.g, &odd[..ni + 2 * k - 1], &mut acc2[..ni]);
            // Outputs in order into `even` (scratch), then back to `acc`.
            for (p, e) in even[..nb].iter_mut().enumerate() {
                let m = m0 + p as u64;
                let j = (m / 2 - i0) as usize;
                *e = if m % 2 == 0 { acc[j] } else { acc2[j] };
            }
            acc[..nb].copy_from_slice(&even[..nb]);
            self.acc2 = acc2;
        }
        self.even = even;
        self.odd = odd;
        self.acc = acc;
    }

    /// Compute outputs while their input is present (or, flushing, until the total), at
    /// most `max`; `store(frame, channel, values)` takes each block.
    fn produce(&mut self, max: usize, store: &mut impl FnMut(usize, usize, &[T])) -> usize {
        let limit = if self.flushing {
            self.total(self.n_in)
        } else {
            self.ready(self.n_in)
        };
        let mut done = 0;
        while done < max && self.n_out < limit {
            let nb = ((limit - self.n_out).min((max - done) as u64) as usize).min(OUT_BLOCK);
            for ch in 0..self.channels {
                self.block(ch, self.n_out, nb);
                store(done, ch, &self.acc[..nb]);
            }
            self.n_out += nb as u64;
            done += nb;
        }
        done
    }

    /// Take planar input while there is room for the output it makes ready; write planar
    /// output. Shapes are the caller's (the chain's own queues).
    pub(super) fn process<I: AsRef<[T]>, O: AsMut<[T]>>(
        &mut self,
        input: &[I],
        output: &mut [O],
    ) -> Progress {
        let frames_in = input.first().map_or(0, |c| c.as_ref().len());
        let frames_out = output.first_mut().map_or(0, |c| c.as_mut().len());
        let mut read = 0;
        let mut written = 0;
        loop {
            let at0 = written;
            written += self.produce(
                frames_out - written,
                &mut |at: usize, ch: usize, v: &[T]| {
                    output[ch].as_mut()[at0 + at..at0 + at + v.len()].copy_from_slice(v);
                },
            );
            if written == frames_out || read == frames_in {
                break;
            }
            if self.fill == self.cap {
                self.make_room();
                if self.fill == self.cap {
                    break;
                }
            }
            let take = (self.cap - self.fill).min(frames_in - read);
            for (ch, src) in input.iter().enumerate() {
                let at = ch * self.cap + self.fill;
                self.hist[at..at + take].copy_from_slice(&src.as_ref()[read..read + take]);
            }
            self.fill += take;
            self.n_in += take as u64;
            read += take;
        }
        Progress {
            frames_read: read,
            frames_written: written,
        }
    }

    /// Write the remaining outputs (zeros after the last input); returns frames written.
    pub(super) fn flush<O: AsMut<[T]>>(&mut self, output: &mut [O]) -> usize {
        self.flushing = true;
        let frames_out = output.first_mut().map_or(0, |c| c.as_mut().len());
        self.produce(frames_out, &mut |at: usize, ch: usize, v: &[T]| {
            output[ch].as_mut()[at..at + v.len()].copy_from_slice(v);
        })
    }
}
