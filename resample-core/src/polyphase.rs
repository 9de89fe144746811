//! The prototype split into L phases: one row of taps per phase, reversed so that a row
//! meets the input history in memory order, padded to a common, aligned length.

use crate::design::Design;
use crate::Sample;

/// Per-phase tap table of a design, in sample type `T`.
///
/// Row `p` holds `L * h[p + j L]` at position `taps_per_phase - 1 - j` (zero where
/// `p + j L` is past the end of the prototype), so output `m` is the dot product of row
/// `(m M + half) mod L` with the `taps_per_phase` input samples ending at
/// `floor((m M + half) / L)`.
#[derive(Debug, Clone, PartialEq)]
pub struct PhaseTable<T> {
    up: u64,
    down: u64,
    half: u64,
    taps_per_phase: usize,
    coeffs: Vec<T>,
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
        let mut coeffs = vec![T::zero(); up as usize * tpp];
        for (p, row) in coeffs.chunks_exact_mut(tpp).enumerate() {
            let mut n = p;
            let mut j = 0;
            while n < h.len() {
                row[tpp - 1 - j] = T::from_f64_lossy(h[n] * l);
                n += up as usize;
                j += 1;
            }
        }
        Self {
            up,
            down: u64::from(report.down),
            half: design.half() as u64,
            taps_per_phase: tpp,
            coeffs,
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
        &self.coeffs[p * t..(p + 1) * t]
    }

    /// All rows, back to back.
    pub fn coeffs(&self) -> &[T] {
        &self.coeffs
    }

    /// Bytes held by the table.
    pub fn bytes(&self) -> usize {
        self.coeffs.len() * core::mem::size_of::<T>()
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
