//! A block of polyphase outputs: where the taps and the input history are, which phase and
//! input position the first output starts at, and how many outputs to compute. Built only
//! through a checked constructor, so every kernel may read all of it without bounds checks.

use crate::{Error, Result};

/// A block of consecutive outputs of a polyphase converter, for one or more channels.
///
/// Output `k` (for `k < frames`) uses phase row `r_k = (phase + k down) mod up` of the table
/// and the `taps_per_phase` history samples starting at
/// `start + floor((phase + k down) / up)` of each channel; channel `c`'s history begins at
/// `c * channel_stride` in `history`. The value is the dot product of the row with that
/// window, accumulated in `T`.
///
/// [`Block::new`] checks that every row and window lies inside the slices given, so a kernel
/// can read them without further checks.
///
/// ```
/// use resample_core::kernel::{Block, Kernel, KernelFns};
/// // Two phases of 8 taps (up 2, down 1: every input gives two outputs).
/// let mut taps = vec![0.0_f32; 16];
/// taps[7] = 1.0; // phase 0 copies the newest sample
/// taps[8 + 6] = 0.5; // phase 1 halves the one before it
/// let history: Vec<f32> = (0..10).map(|v| v as f32).collect();
/// let block = Block::new(&taps, 8, 2, 1, &history, 10, 1, 0, 0, 4)?;
/// let mut out = [0.0_f32; 4];
/// KernelFns::new(Kernel::detect())?.block(&block, &mut out)?;
/// assert_eq!(out, [7.0, 3.0, 8.0, 3.5]);
/// # Ok::<(), resample_core::Error>(())
/// ```
#[derive(Debug, Clone, Copy)]
pub struct Block<'a, T> {
    pub(crate) coeffs: &'a [T],
    pub(crate) tpp: usize,
    pub(crate) up: u64,
    pub(crate) down: u64,
    pub(crate) history: &'a [T],
    pub(crate) channel_stride: usize,
    pub(crate) channels: usize,
    pub(crate) start: usize,
    pub(crate) phase: u64,
    pub(crate) frames: usize,
}

/// Alignment of taps per phase that every kernel relies on (whole 8-lane vectors).
pub(crate) const TAP_MULTIPLE: usize = crate::design::PHASE_ALIGN;

impl<'a, T> Block<'a, T> {
    /// Check and build a block. Errors ([`Error::BufferShape`]) if `taps_per_phase` is zero
    /// or not a multiple of [`crate::design::PHASE_ALIGN`], `up` or `down` is zero,
    /// `phase >= up`, `coeffs` holds fewer than `up` rows, `channels` is zero, or a window
    /// of some output would reach past its channel's `channel_stride` samples or past the
    /// end of `history`.
    #[allow(clippy::too_many_arguments)]
    pub fn new(
        coeffs: &'a [T],
        taps_per_phase: usize,
        up: u64,
        down: u64,
        history: &'a [T],
        channel_stride: usize,
        channels: usize,
        start: usize,
        phase: u64,
        frames: usize,
    ) -> Result<Self> {
        let bad = |what: &'static str, expected: usize, got: usize| {
            Err(Error::BufferShape {
                what,
                expected,
                got,
            })
        };
        if taps_per_phase == 0 || !taps_per_phase.is_multiple_of(TAP_MULTIPLE) {
            let want = taps_per_phase.div_ceil(TAP_MULTIPLE).max(1) * TAP_MULTIPLE;
            return bad("taps per phase (multiple of 8)", want, taps_per_phase);
        }
        if up == 0 || down == 0 {
            return bad("up and down factors (non-zero)", 1, 0);
        }
        if phase >= up {
            return bad(
                "first phase (below up)",
                usize::try_from(up - 1).unwrap_or(usize::MAX),
                usize::try_from(phase).unwrap_or(usize::MAX),
            );
        }
        let rows = usize::try_from(up).ok();
        let table = rows.and_then(|r| r.checked_mul(taps_per_phase));
        match table {
            Some(n) if n <= coeffs.len() => {}
            _ => {
                return bad(
                    "phase table length",
                    table.unwrap_or(usize::MAX),
                    coeffs.len(),
                )
            }
        }
        if channels == 0 {
            return bad("channels", 1, 0);
        }
        if frames > 0 {
            // Offset of the last output's window from `start`.
            let last =
                (u128::from(phase) + (frames as u128 - 1) * u128::from(down)) / u128::from(up);
            let end = u128::from(start as u64) + last + taps_per_phase as u128;
            if end > channel_stride as u128 {
                return bad(
                    "history per channel (last window end)",
                    usize::try_from(end).unwrap_or(usize::MAX),
                    channel_stride,
                );
            }
            let total = (channels as u128 - 1) * channel_stride as u128 + end;
            if total > history.len() as u128 {
                return bad(
                    "history length (channels x stride)",
                    usize::try_from(total).unwrap_or(usize::MAX),
                    history.len(),
                );
            }
        }
        Ok(Self {
            coeffs,
            tpp: taps_per_phase,
            up,
            down,
            history,
            channel_stride,
            channels,
            start,
            phase,
            frames,
        })
    }

    /// Number of outputs per channel.
    pub fn frames(&self) -> usize {
        self.frames
    }

    /// Number of channels.
    pub fn channels(&self) -> usize {
        self.channels
    }

    /// Taps per phase (row length).
    pub fn taps_per_phase(&self) -> usize {
        self.tpp
    }

    /// Multiply-accumulates the block performs.
    pub fn macs(&self) -> u64 {
        (self.frames * self.channels * self.tpp) as u64
    }

    /// Walk the outputs: calls `f(k, row_offset, window_offset)` for each output `k`, where
    /// `row_offset` indexes `coeffs` and `window_offset` is relative to a channel's history
    /// start. Both are in bounds by construction.
    #[inline(always)]
    pub(crate) fn for_each_output(&self, mut f: impl FnMut(usize, usize, usize)) {
        let dq = (self.down / self.up) as usize;
        let dr = self.down % self.up;
        let mut p = self.phase;
        let mut i = self.start;
        for k in 0..self.frames {
            f(k, p as usize * self.tpp, i);
            p += dr;
            i += dq;
            if p >= self.up {
                p -= self.up;
                i += 1;
            }
        }
    }
}
