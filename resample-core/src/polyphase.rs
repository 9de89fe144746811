//! The prototype split into L phases: one row of taps per phase, reversed so that a row
//! meets the input history in memory order, padded to a common length (a multiple of 8
//! taps), the table starting on a 64-byte boundary so rows load as whole vectors.

use crate::design::Design;
use crate::Sample;

/// Per-phase tap table of a design, in sample type `T`.
///
/// Row `p` holds `L * h[p + j L]` at position `taps_per_phase - 1 - j` (zero where
/// `p + j L` is past the end of the prototype), so output `m` is the dot product of row
/// `(m M + half) mod L` with the `taps_per_phase` input samples ending at
/// `floor((m M + half) / L)`.
#[derive(Debug)]
pub struct PhaseTable<T> {
    up: u64,
    down: u64,
    half: u64,
    taps_per_phase: usize,
    /// Rows live at `storage[offset..offset + len]`, `offset` chosen for 64-byte alignment.
    storage: Vec<T>,
    offset: usize,
    len: usize,
}

/// Alignment of the first row, bytes (a cache line; one AVX-512 vector).
const TABLE_ALIGN: usize = 64;

/// A copy of `src` starting at a `TABLE_ALIGN`-byte boundary inside the returned vector,
/// and the index of that start (the values before it are `pad`).
fn aligned_copy<T: Clone>(src: &[T], pad: &T) -> (Vec<T>, usize) {
    let size = core::mem::size_of::<T>().max(1);
    let slack = TABLE_ALIGN / size;
    let mut storage = Vec::with_capacity(src.len() + slack);
    let addr = storage.as_ptr() as usize;
    // Elements are size-aligned, so the distance to the boundary is whole elements; the
    // capacity is never exceeded below, so the buffer does not move.
    let offset = ((TABLE_ALIGN - addr % TABLE_ALIGN) % TABLE_ALIGN / size).min(slack);
    storage.resize(offset, pad.clone());
    storage.extend_from_slice(src);
    (storage, offset)
}

impl<T> PhaseTable<T> {
    /// All rows, back to back.
    pub fn coeffs(&self) -> &[T] {
        &self.storage[self.offset..self.offset + self.len]
    }
}

impl<T: Clone> Clone for PhaseTable<T> {
    fn clone(&self) -> Self {
        let (storage, offset) = match self.storage.first() {
            Some(pad) => aligned_copy(self.coeffs(), pad),
            None => (Vec::new(), 0),
        };
        Self {
            storage,
            offset,
            ..*self
        }
    }
}

impl<T: PartialEq> PartialEq for PhaseTable<T> {
    fn eq(&self, other: &Self) -> bool {
        (self.up, self.down, self.half, self.taps_per_phase)
            == (other.up, other.down, other.half, other.taps_per_phase)
            && self.coeffs() == other.coeffs()
    }
}

impl<T: Sample> PhaseTable<T> {
    /// Split `design`'s prototype into its phases, each tap multiplied by L (in `f64`, then
    /// rounded once to `T`).
    pub fn new(design: &Design) -> Self {
        let report = design.report();
        let up = u64::from(report.up);
        let tpp = report.padded_taps_per_phase;
        let h = design.taps();
        let l = f64::from(report.up);
        let len = up as usize * tpp;
        let mut coeffs = vec![T::zero(); len];
        for (p, row) in coeffs.chunks_exact_mut(tpp).enumerate() {
            let mut n = p;
            let mut j = 0;
            while n < h.len() {
                row[tpp - 1 - j] = T::from_f64_lossy(h[n] * l);
                n += up as usize;
                j += 1;
            }
        }
        let (storage, offset) = aligned_copy(&coeffs, &T::zero());
        Self {
            up,
            down: u64::from(report.down),
            half: design.half() as u64,
            taps_per_phase: tpp,
            storage,
            offset,
            len,
        }
    }

    /// Up factor L (number of rows).
    pub fn up(&self) -> u64 {
        self.up
    }

    /// Down factor M.
    pub fn down(&self) -> u64 {
        self.down
    }

    /// Index of the prototype's centre tap.
    pub fn half(&self) -> u64 {
        self.half
    }

    /// Row length (padded).
    pub fn taps_per_phase(&self) -> usize {
        self.taps_per_phase
    }

    /// Row `p` (`p < L`).
    #[inline]
    pub fn row(&self, p: usize) -> &[T] {
        let t = self.taps_per_phase;
        &self.coeffs()[p * t..(p + 1) * t]
    }

    /// Bytes held by the table.
    pub fn bytes(&self) -> usize {
        self.len * core::mem::size_of::<T>()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::FilterSpec;

    #[test]
    fn rows_hold_every_tap_once_times_l() {
        let d = FilterSpec::new(44_100, 48_000)
            .stopband_db(60.0)
            .design()
            .unwrap();
        let t = PhaseTable::<f64>::new(&d);
        assert_eq!(t.taps_per_phase() % crate::design::PHASE_ALIGN, 0);
        let row_sum: f64 = t.coeffs().iter().sum();
        let proto_sum: f64 = d.taps().iter().sum::<f64>() * 160.0;
        assert!((row_sum - proto_sum).abs() < 1e-9);
        // Each row sums to about 1 (unity DC gain per phase).
        for p in 0..160 {
            let s: f64 = t.row(p).iter().sum();
            assert!((s - 1.0).abs() < 1e-2, "phase {p}: {s}");
        }
    }
}
