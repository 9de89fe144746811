//! A run of consecutive outputs computed from a window of input history: the one inner loop
//! that the stream converter and the parallel offline path share.
//!
//! The run is taken a span of groups at a time (all the groups of a period when a period's
//! outputs fit the kernel's buffer), and for each span every period and channel that needs
//! it, batched into kernel calls: the kernel sets up the inputs' pointers once per batch and
//! then walks every group of the span, so short filters do not pay that set-up per group.
//! Groups that stick out of the run are computed whole and only the outputs inside the run
//! are kept, so an output's value never depends on where a run starts or ends.
//!
//! Nor does it depend on how outputs are grouped or which groups share a kernel call: a
//! kernel sums an output's products in two partial sums, inputs of one parity and of the
//! other, each in input order, and adds the two; the products of zero taps add exact zeros,
//! and which parity a group's first row has only swaps the two operands of the final
//! addition. So a converter started at any input frame computes the outputs it shares with
//! one started at frame 0 bit for bit (the segmented file conversion of the command-line
//! tool relies on this).

use crate::kernel::{KernelFns, Sample};
use crate::table::GroupTable;
use crate::{Error, Result};

/// Inputs handed to the kernel per call, at most.
const BATCH: usize = 64;
/// Channels handed to the kernel per call for the groups of a span cut by a run's ends.
const PART: usize = 8;

/// Values of the buffer a kernel call writes into (32 KB of `f64`); callers keep one and pass
/// it to [`render`], so a short render call does not clear a fresh one.
pub(crate) const TMP: usize = 4096;

/// Whether [`render`] takes all the groups of a period in one span (their outputs fit its
/// buffer).
pub(crate) fn whole_periods<T>(table: &GroupTable<T>) -> bool {
    table.groups() * table.lanes() <= TMP
}

/// The inputs `[start, stop)` a history should hold for [`render`] to take every period of
/// outputs `first..first + frames` as one span, the periods cut by the run's ends included
/// (their outputs outside the run are computed and dropped); without them, such periods
/// are computed group by group, only the groups inside the run. `frames` must be non-zero.
pub(crate) fn reach<T>(table: &GroupTable<T>, first: u64, frames: usize) -> (i64, i64) {
    let last = first + frames.max(1) as u64 - 1;
    if whole_periods(table) {
        let (p, pin) = (table.period(), table.period_inputs());
        let g = table.groups() - 1;
        (
            table.first_input(0) + (first / p * pin) as i64,
            table.first_input(g) + (last / p * pin) as i64 + table.rows() as i64,
        )
    } else {
        (
            table.first_input_of(first),
            table.first_input_of(last) + table.rows() as i64,
        )
    }
}

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
/// meet only zero taps of the outputs kept). A period cut by the run's ends is computed
/// whole, with the others, if the history holds all its inputs (see [`reach`]) and periods
/// are short next to the run; else only its groups inside the run, on their own.
pub(crate) fn render<T: Sample>(
    table: &GroupTable<T>,
    fns: &KernelFns<T>,
    hist: &History<'_, T>,
    first: u64,
    frames: usize,
    out: &mut [T],
    tmp: &mut [T],
) -> Result<()> {
    let lanes = table.lanes();
    let Some(tmp) = tmp.get_mut(..TMP) else {
        return Err(Error::BufferShape {
            what: "render kernel buffer",
            expected: TMP,
            got: tmp.len(),
        });
    };
    let n_groups = table.groups();
    if lanes > TMP || out.len() < frames * hist.channels {
        return Err(Error::BufferShape {
            what: "render output (channels x frames) and lanes (one group in the buffer)",
            expected: frames * hist.channels,
            got: out.len(),
        });
    }
    let run = Run {
        first,
        end: first + frames as u64,
        frames,
    };
    let period = table.period();
    let w = lanes as u64;
    // Groups per kernel call: a whole period if its outputs fit the buffer.
    let span_max = (TMP / lanes).clamp(1, n_groups);
    // A period cut by the run's ends is computed whole (its outputs outside the run
    // dropped) only if periods are short next to the run, so that the extra work stays small
    // next to what running its groups alone would cost.
    let cut_whole = whole_periods(table) && period.saturating_mul(8) <= frames as u64;
    let mut xs: [&[T]; BATCH] = [&[]; BATCH];
    // Channel and first output of each input in the batch.
    let mut dst = [(0usize, 0u64); BATCH];
    // The same for the groups of a span cut by the run's ends (a few channels a call: short
    // arrays, cleared once per call of `render`).
    let mut xc: [&[T]; PART] = [&[]; PART];
    let mut dc = [(0usize, 0u64); PART];
    let mut ja = 0;
    while ja < n_groups {
        let jb = (ja + span_max).min(n_groups);
        let span = table.span(ja..jb);
        let width = (jb - ja) * lanes;
        // Outputs of the span within a period, and the periods whose span overlaps the run.
        let (o_lo, o_hi) = (ja as u64 * w, (jb as u64 * w).min(period));
        let valid = (o_hi - o_lo) as usize;
        let q_lo = if run.first >= o_hi {
            (run.first - o_hi) / period + 1
        } else {
            0
        };
        let q_hi = if run.end > o_lo {
            (run.end - 1 - o_lo) / period + 1
        } else {
            0
        };
        // The groups of the span that overlap the run in period `q`, and whether the span
        // is computed whole there (inside the run, or all its inputs in the history).
        let cut = |q: u64| -> (usize, usize, bool) {
            let n0 = q * period;
            let ga = if run.first > n0 + o_lo {
                ((run.first - n0) / w) as usize
            } else {
                ja
            };
            let gb = if run.end < n0 + o_hi {
                (run.end - n0).div_ceil(w) as usize
            } else {
                jb
            };
            let whole = (ga, gb) == (ja, jb) || (cut_whole && fits(table, hist, ja, jb, q));
            (ga, gb, whole)
        };
        // Inputs per call: as many as the buffer holds, spread evenly over the calls the
        // whole spans need (a last call with one input would keep only two multiply-add
        // chains busy).
        let whole = (q_lo..q_hi).filter(|&q| cut(q).2).count() * hist.channels;
        let most = (TMP / width).clamp(1, BATCH);
        let per_call = whole.div_ceil(whole.div_ceil(most).max(1)).clamp(1, most);
        let mut k = 0;
        for q in q_lo..q_hi {
            let n0 = q * period;
            let (ga, gb, whole) = cut(q);
            if !whole {
                // A span cut by the run's ends: only the groups inside, every channel's in
                // the same kernel calls (as many as the buffer holds per call).
                let part = table.span(ga..gb);
                let start = ga as u64 * w;
                let n = ((gb as u64 * w).min(period) - start) as usize;
                let pw = (gb - ga) * lanes;
                let most = (TMP / pw).clamp(1, PART);
                let mut c0 = 0;
                while c0 < hist.channels {
                    let c1 = (c0 + most).min(hist.channels);
                    for (i, c) in (c0..c1).enumerate() {
                        xc[i] = window(table, hist, ga, gb, q, c)?;
                        dc[i] = (c, n0 + start);
                    }
                    fns.span(&part, &xc[..c1 - c0], tmp)?;
                    keep(&run, &dc[..c1 - c0], tmp, pw, n, out);
                    c0 = c1;
                }
                continue;
            }
            for c in 0..hist.channels {
                let x = window(table, hist, ja, jb, q, c)?;
                xs[k] = x;
                dst[k] = (c, n0 + o_lo);
                k += 1;
                if k == per_call {
                    fns.span(&span, &xs[..k], tmp)?;
                    keep(&run, &dst[..k], tmp, width, valid, out);
                    k = 0;
                }
            }
        }
        if k > 0 {
            fns.span(&span, &xs[..k], tmp)?;
            keep(&run, &dst[..k], tmp, width, valid, out);
        }
        ja = jb;
    }
    Ok(())
}

/// The outputs a render call keeps.
struct Run {
    first: u64,
    end: u64,
    frames: usize,
}

/// Whether the history holds every input groups `ja..jb` of period `q` read.
#[inline]
fn fits<T>(table: &GroupTable<T>, hist: &History<'_, T>, ja: usize, jb: usize, q: u64) -> bool {
    let lo = table.first_input(ja) + (q * table.period_inputs()) as i64;
    let len = (table.first_input(jb - 1) - table.first_input(ja)) as usize + table.rows();
    let at = lo - hist.base;
    at >= 0 && at as usize + len <= hist.stride
}

/// The history groups `ga..gb` of period `q` read in channel `c`.
#[inline]
fn window<'a, T>(
    table: &GroupTable<T>,
    hist: &History<'a, T>,
    ga: usize,
    gb: usize,
    q: u64,
    c: usize,
) -> Result<&'a [T]> {
    let lo = table.first_input(ga) + (q * table.period_inputs()) as i64;
    let at = lo - hist.base;
    let len = (table.first_input(gb - 1) - table.first_input(ga)) as usize + table.rows();
    if at < 0 || at as usize + len > hist.stride {
        return Err(Error::BufferShape {
            what: "render history (window of a group)",
            expected: (at.max(0) as usize) + len,
            got: hist.stride,
        });
    }
    let s = c * hist.stride + at as usize;
    hist.data.get(s..s + len).ok_or(Error::BufferShape {
        what: "render history length (channels x stride)",
        expected: s + len,
        got: hist.data.len(),
    })
}

/// Keep the outputs of a batch (`tmp`, `width` values per input, of which the first `valid`
/// exist) that are inside the run; input `i` holds channel `dst[i].0`'s outputs from
/// `dst[i].1` on.
#[inline]
fn keep<T: Sample>(
    run: &Run,
    dst: &[(usize, u64)],
    tmp: &[T],
    width: usize,
    valid: usize,
    out: &mut [T],
) {
    for (&(c, n0), v) in dst.iter().zip(tmp.chunks(width)) {
        let a = run.first.saturating_sub(n0);
        let b = (valid as u64).min(run.end - n0);
        if a < b {
            let o = c * run.frames + (n0 + a - run.first) as usize;
            out[o..o + (b - a) as usize].copy_from_slice(&v[a as usize..b as usize]);
        }
    }
}
