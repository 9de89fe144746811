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
//! (terms with a zero tap left out). The stage keeps its input as planes, per channel: the
//! even and the odd samples apart for 2:1 (split once as they arrive), the input itself for
//! 1:2, so the samples every output's pairs meet are contiguous and the kernel
//! (`kernel::halfband`: scalar reference, AVX2 + FMA, AVX-512F, chosen once at
//! construction) reads them in place; 2:1 outputs are written straight into the caller's
//! output. Each output is computed by the same operations in the same order wherever it
//! falls in a block, so the output does not depend on chunking.

use super::stream::Progress;
use crate::kernel::halfband::{run, HalfBandFn, HalfBandJob};
use crate::kernel::{Kernel, Sample};
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
    f: HalfBandFn<T>,
    /// 2:1: the even samples, channel `c` at `ev[c * cap..]` (plane index `p` holds
    /// `x[2p]`); unused for 1:2.
    ev: Vec<T>,
    /// 2:1: the odd samples (`p` holds `x[2p + 1]`); 1:2: the input (`p` holds `x[p]`).
    od: Vec<T>,
    cap: usize,
    /// Plane index at position 0 (negative at first: the zeros before the input).
    pb: i64,
    /// Positions filled in `ev` and `od` (zeros before the start and, flushing, after the
    /// end included).
    len_e: usize,
    len_o: usize,
    n_in: u64,
    n_out: u64,
    flushing: bool,
    /// 1:2: the odd outputs of a block.
    acc2: Vec<T>,
}

impl<T: Sample> HalfBand<T> {
    /// The stage for a half-band design (2:1 or 1:2; zeros at even distances from the
    /// centre, which the caller guarantees: `FilterSpec::plan` makes them), with the
    /// half-band kernel of `kernel` (the scalar reference if it cannot run here).
    pub(super) fn new(design: &Design, channels: usize, kernel: Kernel) -> Self {
        let pair = design.pair();
        let down = pair.down() == 2;
        let gain = f64::from(pair.up());
        let h = design.taps();
        let c = design.delay() as usize;
        let k = c.div_ceil(2).max(1);
        let g = (0..k)
            .map(|t| T::from_f64_lossy(gain * h.get(c + 2 * t + 1).copied().unwrap_or(0.0)))
            .collect();
        let kernel = if kernel.is_available() {
            kernel
        } else {
            Kernel::Scalar
        };
        let cap = if down {
            BLOCK / 2 + OUT_BLOCK + 2 * k + 2
        } else {
            BLOCK + OUT_BLOCK / 2 + 2 * k + 2
        };
        let mut s = Self {
            down,
            centre: T::from_f64_lossy(gain * h[c]),
            g,
            channels,
            f: T::halfband_fn(kernel),
            ev: vec![T::zero(); if down { cap * channels } else { 0 }],
            od: vec![T::zero(); cap * channels],
            cap,
            pb: 0,
            len_e: 0,
            len_o: 0,
            n_in: 0,
            n_out: 0,
            flushing: false,
            acc2: vec![T::zero(); OUT_BLOCK / 2 + 2],
        };
        s.reset();
        s
    }

    fn k(&self) -> u64 {
        self.g.len() as u64
    }

    pub(super) fn reset(&mut self) {
        // The zeros before the first input: K odd samples (2:1) or K - 1 samples (1:2).
        let k = self.g.len();
        let lead = if self.down { k } else { k - 1 };
        self.pb = -(lead as i64);
        self.len_e = lead;
        self.len_o = lead;
        for p in [&mut self.ev, &mut self.od] {
            for b in p.chunks_exact_mut(self.cap) {
                b[..lead].fill(T::zero());
            }
        }
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
        let mut h = Self::new(design, input.len(), Kernel::detect());
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

    /// Oldest plane index the next output reads.
    fn oldest_needed(&self) -> i64 {
        let k = self.g.len() as i64;
        if self.down {
            self.n_out as i64 - k
        } else {
            (self.n_out / 2) as i64 - (k - 1)
        }
    }

    /// Drop the plane positions no output will read again.
    fn make_room(&mut self) {
        let drop = usize::try_from(self.oldest_needed() - self.pb)
            .unwrap_or(0)
            .min(self.len_o);
        if drop == 0 {
            return;
        }
        let (le, lo) = (self.len_e, self.len_o);
        for b in self.ev.chunks_exact_mut(self.cap) {
            b.copy_within(drop..le, 0);
        }
        for b in self.od.chunks_exact_mut(self.cap) {
            b.copy_within(drop..lo, 0);
        }
        if self.down {
            self.len_e -= drop;
        }
        self.len_o -= drop;
        self.pb += drop as i64;
    }

    /// Input frames the planes can take now.
    fn room(&self) -> usize {
        if self.down {
            2 * (self.cap - self.len_e.max(self.len_o))
        } else {
            self.cap - self.len_o
        }
    }

    /// Take `src[..]` of every channel into the planes (split into even and odd for 2:1).
    fn take_input<I: AsRef<[T]>>(&mut self, input: &[I], from: usize, n: usize) {
        let cap = self.cap;
        if self.down {
            let first_odd = self.n_in % 2 == 1;
            let (le, lo) = (self.len_e, self.len_o);
            let mut ne = 0;
            let mut no = 0;
            for (ch, src) in input.iter().enumerate() {
                let mut x = &src.as_ref()[from..from + n];
                let e = &mut self.ev[ch * cap + le..(ch + 1) * cap];
                let o = &mut self.od[ch * cap + lo..(ch + 1) * cap];
                let mut oi = 0;
                if first_odd && !x.is_empty() {
                    o[0] = x[0];
                    x = &x[1..];
                    oi = 1;
                }
                let pairs = x.chunks_exact(2);
                let rest = pairs.remainder();
                let np = pairs.len();
                for ((pe, po), p) in e.iter_mut().zip(o[oi..].iter_mut()).zip(pairs) {
                    *pe = p[0];
                    *po = p[1];
                }
                if let Some(&v) = rest.first() {
                    e[np] = v;
                }
                ne = np + rest.len();
                no = np + oi;
            }
            self.len_e += ne;
            self.len_o += no;
        } else {
            let lo = self.len_o;
            for (ch, src) in input.iter().enumerate() {
                self.od[ch * cap + lo..ch * cap + lo + n]
                    .copy_from_slice(&src.as_ref()[from..from + n]);
            }
            self.len_o += n;
        }
        self.n_in += n as u64;
    }

    /// Flushing: zeros after the end so that the odd plane (the input for 1:2) reaches plane
    /// index `last`; false if there is no room even after dropping what is read.
    fn pad_to(&mut self, last: i64) -> bool {
        let want = usize::try_from(last - self.pb + 1).unwrap_or(0);
        if want <= self.len_o {
            return true;
        }
        if want > self.cap {
            self.make_room();
        }
        let want = usize::try_from(last - self.pb + 1).unwrap_or(0);
        if want > self.cap {
            return false;
        }
        let lo = self.len_o;
        for b in self.od.chunks_exact_mut(self.cap) {
            b[lo..want].fill(T::zero());
        }
        self.len_o = want;
        true
    }

    /// Compute outputs while their input is present (or, flushing, until the total), at
    /// most `max`, into `output[ch][at..]`.
    fn produce<O: AsMut<[T]>>(&mut self, output: &mut [O], at: usize, max: usize) -> usize {
        let limit = if self.flushing {
            self.total(self.n_in)
        } else {
            self.ready(self.n_in)
        };
        let k = self.g.len();
        let cap = self.cap;
        let mut done = 0;
        while done < max && self.n_out < limit {
            let nb = ((limit - self.n_out).min((max - done) as u64) as usize).min(OUT_BLOCK);
            let m0 = self.n_out;
            // The last plane index the block reads.
            let last = if self.down {
                (m0 + nb as u64) as i64 + k as i64 - 2
            } else {
                ((m0 + nb as u64 - 1) / 2) as i64 + k as i64
            };
            if self.flushing && !self.pad_to(last) {
                break;
            }
            if last - self.pb >= self.len_o as i64 {
                // Not yet in the planes (cannot happen outside flushing).
                break;
            }
            for (ch, o) in output.iter_mut().enumerate().take(self.channels) {
                let out = &mut o.as_mut()[at + done..at + done + nb];
                if self.down {
                    let e0 = ch * cap + (m0 as i64 - self.pb) as usize;
                    let o0 = ch * cap + (m0 as i64 - k as i64 - self.pb) as usize;
                    let job = HalfBandJob {
                        centre: self.centre,
                        mid: Some(&self.ev[e0..e0 + nb]),
                        g: &self.g,
                        odd: &self.od[o0..o0 + nb + 2 * k - 1],
                    };
                    let ok = run(self.f, &job, out);
                    debug_assert!(ok);
                } else {
                    let i0 = m0 / 2;
                    let i1 = (m0 + nb as u64 - 1) / 2;
                    let ni = (i1 - i0 + 1) as usize;
                    let x0 = ch * cap + (i0 as i64 - (k as i64 - 1) - self.pb) as usize;
                    let x = &self.od[x0..x0 + ni + 2 * k - 1];
                    let job = HalfBandJob {
                        centre: self.centre,
                        mid: None,
                        g: &self.g,
                        odd: x,
                    };
                    let ok = run(self.f, &job, &mut self.acc2[..ni]);
                    debug_assert!(ok);
                    let centre = self.centre;
                    for (p, o) in out.iter_mut().enumerate() {
                        let m = m0 + p as u64;
                        let j = (m / 2 - i0) as usize;
                        *o = if m % 2 == 0 {
                            centre * x[j + k - 1]
                        } else {
                            self.acc2[j]
                        };
                    }
                }
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
        self.process_from(input, 0, output)
    }

    /// [`HalfBand::process`] of `input[ch][from..]`: the chain hands its caller's planar
    /// input straight to a first half-band stage (no copy into a queue first).
    pub(super) fn process_from<I: AsRef<[T]>, O: AsMut<[T]>>(
        &mut self,
        input: &[I],
        from: usize,
        output: &mut [O],
    ) -> Progress {
        let frames_in = input
            .first()
            .map_or(0, |c| c.as_ref().len().saturating_sub(from));
        let frames_out = output.first_mut().map_or(0, |c| c.as_mut().len());
        let mut read = 0;
        let mut written = 0;
        loop {
            written += self.produce(output, written, frames_out - written);
            if written == frames_out || read == frames_in {
                break;
            }
            if self.room() == 0 {
                self.make_room();
                if self.room() == 0 {
                    break;
                }
            }
            let take = self.room().min(frames_in - read);
            self.take_input(input, from + read, take);
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
        self.produce(output, 0, frames_out)
    }
}
