//! A run of consecutive outputs computed from a window of input history, group by group: the
//! one inner loop that the stream converter and the parallel offline path share.
//!
//! The groups of the run are taken in table order, and for each group every period and
//! every channel that needs it, so a group's taps are loaded once from memory and then
//! serve all of them from the cache (and, inside the kernel, up to four at a time from a
//! register). Groups that stick out of the run are computed whole and only the lanes inside
//! the run are kept, so an output's value never depends on where a run starts or ends.
//!
//! Nor does it depend on how outputs are grouped: a kernel sums an output's products in two
//! partial sums, inputs of one parity and of the other, each in input order, and adds the
//! two; the products of zero taps add exact zeros, and which parity a group's first row has
//! only swaps the two operands of the final addition. So a converter started at any input
//! frame computes the outputs it shares with one started at frame 0 bit for bit (the
//! segmented file conversion of the command-line tool relies on this).

use crate::groups::GroupTable;
use crate::kernel::{KernelFns, Sample};
use crate::{Error, Result};

/// Inputs handed to the kernel per call.
const BATCH: usize = 64;

/// Most lanes a kernel uses (`f32` in 512-bit vectors).
pub(crate) const MAX_LANES: usize = 16;

/// Planar input history: channel `c`'s input sample `i` at
/// `data[c * stride + (i - base)]`.
#[derive(Debug, Clone, Copy)]
pub(crate) struct History<'a, T> {
    pub data: &'a [T],
    pub stride: usize,
    pub channels: usize,
    pub base: i64,
}

/// Outputs `first..first + frames` of every channel into `out`, channel `c` at
/// `out[c * frames..][..frames]`. Every group touching that range must read inside the
/// history (else [`Error::BufferShape`]); samples past the valid input should be zero (they
/// meet only zero taps of the outputs kept).
pub(crate) fn render<T: Sample>(
    table: &GroupTable<T>,
    fns: &KernelFns<T>,
    hist: &History<'_, T>,
    first: u64,
    frames: usize,
    out: &mut [T],
) -> Result<()> {
    let lanes = table.lanes();
    let rows = table.rows();
    if lanes > MAX_LANES || out.len() < frames * hist.channels {
        return Err(Error::BufferShape {
            what: "render output (channels x frames) and lanes",
            expected: frames * hist.channels,
            got: out.len(),
        });
    }
    let end = first + frames as u64;
    let period = table.period();
    let mut tmp = [T::zero(); BATCH * MAX_LANES];
    let mut xs: [&[T]; BATCH] = [&[]; BATCH];
    // Channel and first output of each input in the batch.
    let mut dst = [(0usize, 0u64); BATCH];
    for j in 0..table.groups() {
        let g0 = (j * lanes) as u64;
        let wj = table.lanes_in(j) as u64;
        // Periods q whose group j overlaps the run: q period + g0 < end and
        // q period + g0 + wj > first.
        let q_lo = if first >= g0 + wj {
            (first - g0 - wj) / period + 1
        } else {
            0
        };
        let q_hi = if end > g0 {
            (end - 1 - g0) / period + 1
        } else {
            0
        };
        let taps = table.group(j);
        let jobs = q_hi.saturating_sub(q_lo) as usize * hist.channels;
        let mut k = 0;
        // Period and channel of each job, counted rather than divided out.
        let (mut q, mut c) = (q_lo, 0);
        for job in 0..jobs {
            let lo = table.first_input(j) + (q * table.period_inputs()) as i64;
            let at = lo - hist.base;
            if at < 0 || at as usize + rows > hist.stride {
                return Err(Error::BufferShape {
                    what: "render history (window of a group)",
                    expected: (at.max(0) as usize) + rows,
                    got: hist.stride,
                });
            }
            let s = c * hist.stride + at as usize;
            xs[k] = hist.data.get(s..s + rows).ok_or(Error::BufferShape {
                what: "render history length (channels x stride)",
                expected: s + rows,
                got: hist.data.len(),
            })?;
            dst[k] = (c, q * period + g0);
            k += 1;
            c += 1;
            if c == hist.channels {
                (q, c) = (q + 1, 0);
            }
            if k == BATCH || job + 1 == jobs {
                fns.groups(taps, lanes, &xs[..k], &mut tmp)?;
                keep(&dst[..k], &tmp, lanes, wj, first, frames, out);
                k = 0;
            }
        }
    }
    Ok(())
}

/// Keep the lanes of a batch's groups (`tmp`, one vector per input) that are inside the
/// run; `valid` lanes of each group exist.
#[inline]
fn keep<T: Sample>(
    dst: &[(usize, u64)],
    tmp: &[T],
    lanes: usize,
    valid: u64,
    first: u64,
    frames: usize,
    out: &mut [T],
) {
    let end = first + frames as u64;
    for (&(c, n0), v) in dst.iter().zip(tmp.chunks_exact(lanes)) {
        let a = first.saturating_sub(n0);
        let b = valid.min(end - n0);
        if a < b {
            let o = c * frames + (n0 + a - first) as usize;
            let (src, dst) = (
                &v[a as usize..b as usize],
                &mut out[o..o + (b - a) as usize],
            );
            // Whole groups (the common case) as fixed-size copies, which compile to a few
            // vector moves instead of a call.
            match (src.len(), dst.len()) {
                (16, 16) => dst[..16].copy_from_slice(&src[..16]),
                (8, 8) => dst[..8].copy_from_slice(&src[..8]),
                _ => dst.copy_from_slice(src),
            }
        }
    }
}
