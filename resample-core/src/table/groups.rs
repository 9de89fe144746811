//! The phase table rearranged for wide vectors: outputs in groups of `lanes` consecutive
//! frames, one vector of taps per input sample, so that a kernel computes a whole group with
//! one multiply-add per input sample (the sample broadcast to every lane) and needs no
//! horizontal sums and no unaligned loads.
//!
//! Output `n` of a converter with up factor L, down factor M and delay `delay` (the tap aligning output 0 with input 0; the centre tap of a linear-phase prototype) reads the
//! `K` inputs ending at `B(n) = floor((n M + delay) / L)` through phase row
//! `(n M + delay) mod L`. The pattern of rows repeats every `L` outputs, while the inputs move
//! on by `M`; this table repeats every `period` outputs (a multiple of L chosen so that few
//! lanes stay empty), split into groups of `lanes` outputs. Group `j` of period `q` covers
//! outputs `q period + j lanes ..` and reads `rows` consecutive inputs starting at
//! `first_input(j) + q period_inputs`; its table is `rows` vectors of `lanes` taps, the tap
//! of lane `l` for the input `r` rows in (zero where that input is outside the lane's
//! window).

use crate::kernel::GroupSpan;
use crate::ratio::{gcd, newest_input};
use crate::{Error, Result, Sample};

/// The table of a design arranged in groups of `lanes` consecutive outputs.
#[derive(Debug, Clone)]
pub struct GroupTable<T> {
    up: u64,
    down: u64,
    delay: u64,
    taps: usize,
    lanes: usize,
    period: u64,
    period_inputs: u64,
    groups: usize,
    rows: usize,
    first: Vec<i64>,
    /// `first[j] - first[0]`.
    shifts: Vec<usize>,
    /// Group `j` at `storage[offset + j rows lanes..][..rows lanes]`, `offset` chosen so that
    /// the first vector starts on a 64-byte boundary.
    storage: Vec<T>,
    offset: usize,
}

/// Alignment of the first vector, bytes (a cache line; one AVX-512 vector).
const TABLE_ALIGN: usize = 64;

/// Largest share of empty lanes accepted before the period is doubled (one in eight).
const MAX_EMPTY_SHARE: u64 = 8;

/// The shape of a group table: how many outputs a period holds, how many groups it is split
/// into and how many rows each group reads. Computed without building the table, e.g. to
/// state the memory a converter will need.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Layout {
    /// Outputs after which the groups repeat (a multiple of L).
    pub period: u64,
    /// Inputs the window moves on by in one period.
    pub period_inputs: u64,
    /// Groups per period.
    pub groups: u64,
    /// Inputs (rows of taps) one group reads.
    pub rows: u64,
    /// Window length K (the most taps any phase has).
    pub taps: u64,
    /// Outputs per group.
    pub lanes: u64,
}

impl Layout {
    /// The layout for a prototype of `n_taps` taps (delay `delay`), factors `up`/`down`
    /// and `lanes` outputs per group; `None` for zero sizes or a centre past the end.
    pub fn new(n_taps: u64, up: u64, down: u64, delay: u64, lanes: u64) -> Option<Self> {
        if n_taps == 0 || up == 0 || down == 0 || lanes == 0 || delay >= n_taps {
            return None;
        }
        let w = lanes;
        // The period: L c outputs, c the smallest power of two that leaves at most one lane
        // in eight empty (c = lanes / gcd(L, lanes) leaves none).
        let c_max = w / gcd(up, w);
        let mut c = 1;
        while c < c_max {
            let p = up * c;
            let empty = p.div_ceil(w) * w - p;
            if empty * MAX_EMPTY_SHARE <= p {
                break;
            }
            c *= 2;
        }
        let period = up.checked_mul(c)?;
        let taps = n_taps.div_ceil(up);
        let groups = period.div_ceil(w);
        let newest = |n: u64| newest_input(n, up, down, delay);
        let rows = (0..groups)
            .map(|j| {
                let last = j * w + w.min(period - j * w) - 1;
                (newest(last) - newest(j * w)) as u64 + taps
            })
            .max()?;
        Some(Self {
            period,
            period_inputs: down.checked_mul(c)?,
            groups,
            rows,
            taps,
            lanes,
        })
    }

    /// Bytes of the taps for elements of `size` bytes (saturating).
    pub fn bytes(&self, size: u64) -> u64 {
        self.groups
            .saturating_mul(self.rows)
            .saturating_mul(self.lanes)
            .saturating_mul(size)
    }
}

impl<T: Sample> GroupTable<T> {
    /// Arrange any prototype `h` for up factor `up`, down factor `down` (coprime or not) and
    /// delay `delay` (output 0 is aligned with input 0 through tap `delay`: the centre tap of a
    /// linear-phase prototype). Errors
    /// ([`Error::BufferShape`]) for an empty prototype, zero factors or lanes, `delay` past
    /// the prototype's end, or a table that would not fit in memory.
    pub fn from_prototype(h: &[f64], up: u64, down: u64, delay: u64, lanes: usize) -> Result<Self> {
        let bad = |what: &'static str| Error::BufferShape {
            what,
            expected: 1,
            got: 0,
        };
        if lanes > 64 {
            return Err(bad("lanes (1 to 64)"));
        }
        let lay = Layout::new(h.len() as u64, up, down, delay, lanes as u64)
            .ok_or_else(|| bad("prototype, factors and lanes (non-zero, centre inside)"))?;
        let n_taps = h.len() as u64;
        let w = lanes as u64;
        let Layout {
            period,
            period_inputs,
            groups,
            rows,
            taps,
            ..
        } = lay;
        let newest = |n: u64| newest_input(n, up, down, delay);
        let lane_count = |j: u64| w.min(period - j * w);
        let total = groups
            .checked_mul(rows)
            .and_then(|v| v.checked_mul(w))
            .filter(|&v| v <= (isize::MAX as u64) / 16)
            .ok_or_else(|| bad("group table size"))? as usize;
        let (groups, rows, taps) = (groups as usize, rows as usize, taps as usize);
        let size = core::mem::size_of::<T>().max(1);
        let slack = TABLE_ALIGN / size;
        let mut storage: Vec<T> = Vec::new();
        storage
            .try_reserve_exact(total + slack)
            .map_err(|_| bad("group table memory"))?;
        // Elements are size-aligned, so the distance to the boundary is whole elements; the
        // capacity is never exceeded below, so the buffer does not move.
        let addr = storage.as_ptr() as usize;
        let offset = ((TABLE_ALIGN - addr % TABLE_ALIGN) % TABLE_ALIGN / size).min(slack);
        storage.resize(offset + total, T::zero());
        let l = up as f64;
        let mut first = Vec::with_capacity(groups);
        for j in 0..groups {
            let lo = newest(j as u64 * w) - taps as i64 + 1;
            first.push(lo);
            let table = &mut storage[offset + j * rows * lanes..][..rows * lanes];
            for lane in 0..lane_count(j as u64) as usize {
                let n = (j * lanes + lane) as u64;
                let b = newest(n);
                let phase = ((u128::from(n) * u128::from(down) + u128::from(delay))
                    % u128::from(up)) as u64;
                for k in 0..taps as u64 {
                    // Input b - k meets tap phase + k L.
                    let idx = phase + k * up;
                    if idx >= n_taps {
                        break;
                    }
                    let row = (b - k as i64 - lo) as usize;
                    table[row * lanes + lane] = T::from_f64_lossy(h[idx as usize] * l);
                }
            }
        }
        let shifts = first.iter().map(|&f| (f - first[0]) as usize).collect();
        Ok(Self {
            up,
            down,
            delay,
            taps,
            lanes,
            period,
            period_inputs,
            groups,
            rows,
            first,
            shifts,
            storage,
            offset,
        })
    }
}

impl<T> GroupTable<T> {
    /// Up factor L.
    pub fn up(&self) -> u64 {
        self.up
    }

    /// Down factor M.
    pub fn down(&self) -> u64 {
        self.down
    }

    /// Index of the prototype's centre tap.
    pub fn delay(&self) -> u64 {
        self.delay
    }

    /// Window length K: the most taps any phase has (`ceil(taps / L)`).
    pub fn taps(&self) -> usize {
        self.taps
    }

    /// Outputs per group (the kernel's vector width).
    pub fn lanes(&self) -> usize {
        self.lanes
    }

    /// Outputs after which the groups repeat (a multiple of L).
    pub fn period(&self) -> u64 {
        self.period
    }

    /// Inputs the window moves on by in one period (`period M / L`).
    pub fn period_inputs(&self) -> u64 {
        self.period_inputs
    }

    /// Groups per period.
    pub fn groups(&self) -> usize {
        self.groups
    }

    /// Inputs (rows of taps) one group reads.
    pub fn rows(&self) -> usize {
        self.rows
    }

    /// Outputs of group `j` that exist (all lanes except in a period's last group).
    #[cfg_attr(not(any(test, feature = "internals")), allow(dead_code))]
    pub fn lanes_in(&self, j: usize) -> usize {
        self.lanes
            .min((self.period - (j * self.lanes) as u64) as usize)
    }

    /// Input index of group `j`'s first row in period 0 (add `q period_inputs` for period
    /// `q`; negative before the signal's start).
    pub fn first_input(&self, j: usize) -> i64 {
        self.first[j]
    }

    /// The taps of group `j`: `rows` vectors of `lanes` taps.
    #[cfg_attr(not(any(test, feature = "internals")), allow(dead_code))]
    pub fn group(&self, j: usize) -> &[T] {
        let n = self.rows * self.lanes;
        &self.storage[self.offset + j * n..][..n]
    }

    /// The group and lane of output `n`, and the period it is in.
    pub fn locate(&self, n: u64) -> (u64, usize, usize) {
        let rel = (n % self.period) as usize;
        (n / self.period, rel / self.lanes, rel % self.lanes)
    }

    /// Input index of the first row of the group holding output `n`.
    pub fn first_input_of(&self, n: u64) -> i64 {
        let (q, j, _) = self.locate(n);
        self.first[j] + (q * self.period_inputs) as i64
    }

    /// Groups `range` (of one period) as one kernel call takes them
    /// ([`crate::kernel::KernelFns::span`]); the input handed with them starts at the first
    /// input of group `range.start`. Panics if the range is outside `0..groups()`.
    pub fn span(&self, range: core::ops::Range<usize>) -> GroupSpan<'_, T> {
        let n = self.rows * self.lanes;
        GroupSpan {
            taps: &self.storage[self.offset + range.start * n..self.offset + range.end * n],
            lanes: self.lanes,
            rows: self.rows,
            shifts: &self.shifts[range],
        }
    }

    /// Bytes held by the taps.
    pub fn bytes(&self) -> usize {
        self.groups * self.rows * self.lanes * core::mem::size_of::<T>()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::FilterSpec;

    /// Every group, read lane by lane, is the plain polyphase sum of its output.
    #[test]
    fn groups_reproduce_the_polyphase_sum() {
        let d = FilterSpec::new(44_100, 48_000)
            .stopband_db(60.0)
            .design()
            .unwrap();
        let h = d.taps();
        let (up, down, delay) = (160u64, 147u64, d.delay());
        let x: Vec<f64> = (0..4000)
            .map(|i| ((i * 7919) % 1000) as f64 / 500.0 - 1.0)
            .collect();
        let xi = |i: i64| if i < 0 { 0.0 } else { x[i as usize] };
        for lanes in [1, 4, 8, 16] {
            let t = GroupTable::<f64>::from_prototype(h, up, down, delay, lanes).unwrap();
            assert_eq!(t.period() % up, 0);
            for n in [0u64, 1, 15, 16, 159, 160, 161, 333, 2000] {
                let (q, j, lane) = t.locate(n);
                let lo = t.first_input(j) + (q * t.period_inputs()) as i64;
                let g = t.group(j);
                let got: f64 = (0..t.rows())
                    .map(|r| g[r * lanes + lane] * xi(lo + r as i64))
                    .sum();
                // Direct form of rational resampling (common practice, no source): output n
                // is sum_k L h[k] x(t) at t = (n M + delay - k) / L, t a whole input index.
                let pos = n * down + delay;
                let want: f64 = (0..h.len() as u64)
                    .filter(|k| k <= &pos && (pos - k) % up == 0)
                    .map(|k| 160.0 * h[k as usize] * xi(((pos - k) / up) as i64))
                    .sum();
                assert!(
                    (got - want).abs() < 1e-12,
                    "lanes {lanes}, n {n}: {got} vs {want}"
                );
            }
        }
    }

    #[test]
    fn few_empty_lanes_and_small_tables() {
        let d = FilterSpec::new(48_000, 44_100)
            .stopband_db(100.0)
            .design()
            .unwrap();
        let t = GroupTable::<f32>::for_design(&d, 16).unwrap();
        // 147 outputs per period in 10 groups: 13 empty lanes of 160.
        assert_eq!((t.period(), t.groups()), (147, 10));
        assert!(t.bytes() < 2 * 147 * t.taps() * 4);
        let d = FilterSpec::new(48_000, 16_000)
            .stopband_db(100.0)
            .design()
            .unwrap();
        let t = GroupTable::<f32>::for_design(&d, 16).unwrap();
        assert_eq!((t.period(), t.groups(), t.lanes_in(0)), (16, 1, 16));
        // The design report states the bytes of exactly these tables.
        for (a, b) in [
            (44_100, 48_000),
            (48_000, 44_100),
            (44_100, 16_000),
            (96_000, 48_000),
        ] {
            let d = FilterSpec::new(a, b).stopband_db(140.0).design().unwrap();
            let r = d.report();
            assert_eq!(
                GroupTable::<f32>::for_design(&d, 16).unwrap().bytes() as u64,
                r.table_bytes_f32
            );
            assert_eq!(
                GroupTable::<f64>::for_design(&d, 8).unwrap().bytes() as u64,
                r.table_bytes_f64
            );
        }
        assert!(GroupTable::<f32>::from_prototype(&[], 1, 1, 0, 16).is_err());
        assert!(GroupTable::<f32>::from_prototype(&[1.0], 1, 1, 1, 16).is_err());
        assert!(GroupTable::<f32>::from_prototype(&[1.0], 0, 1, 0, 16).is_err());
    }
}
