//! From floating-point samples (full scale ±1.0) to the codes of the output encoding:
//! dither, round, clip what does not fit, and keep count of level and overs.

use resample_core::Sample;

use super::dither::{Dither, Tpdf, DITHER_SEED};
use super::encoding::Encoding;

/// Level figures of everything a [`Quantizer`] saw.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct LevelStats {
    /// Largest absolute sample value before clipping (1.0 = full scale).
    pub peak: f64,
    /// Samples beyond full scale (for integer output: those that would round outside the
    /// code range, and were clipped).
    pub over: u64,
    /// Samples actually clipped (equal to `over` for integer output, 0 for float output,
    /// which keeps values beyond full scale).
    pub clipped: u64,
    /// Samples seen.
    pub samples: u64,
    /// Samples that got dither (those off the output's code grid; 0 for a silent file).
    pub dithered: u64,
}

impl LevelStats {
    /// Peak level in dBFS (`-inf` for silence).
    pub fn peak_dbfs(&self) -> f64 {
        20.0 * self.peak.log10()
    }

    /// A gain in dB (a multiple of 0.1 dB) that brings the peak to at most -0.1 dBFS, if
    /// the peak is above full scale.
    pub fn suggested_gain_db(&self) -> Option<f64> {
        if self.over == 0 {
            return None;
        }
        Some(-((self.peak_dbfs() + 0.1) * 10.0).ceil() / 10.0)
    }
}

/// Turns full-scale-normalized samples into output codes.
#[derive(Debug, Clone)]
pub struct Quantizer {
    encoding: Encoding,
    dither: Option<Tpdf>,
    scale: f64,
    min: f64,
    max: f64,
    stats: LevelStats,
}

impl Quantizer {
    /// A quantizer for `encoding`; `dither` applies to integer encodings of 24 bits or
    /// fewer (at 32 bits the LSB is far below any converter's arithmetic noise).
    pub fn new(encoding: Encoding, dither: Dither) -> Self {
        let scale = encoding.scale();
        let use_dither = matches!(encoding, Encoding::Int(b) if b <= 24) && dither == Dither::Tpdf;
        Self {
            encoding,
            dither: use_dither.then(|| Tpdf::new(DITHER_SEED)),
            scale,
            min: -scale,
            max: scale - 1.0,
            stats: LevelStats::default(),
        }
    }

    /// Whether dither is being added.
    pub fn dithers(&self) -> bool {
        self.dither.is_some()
    }

    /// The output encoding.
    pub fn encoding(&self) -> Encoding {
        self.encoding
    }

    /// Integer code for `x` (integer encodings).
    #[inline]
    pub fn to_code(&mut self, x: f64) -> i32 {
        self.observe(x);
        let v = x * self.scale;
        if v > self.max + 0.5 || v < self.min - 0.5 {
            self.stats.over += 1;
            self.stats.clipped += 1;
        }
        // A value already on the code grid (digital silence, or a copy at the same rate
        // and word length) needs no requantization, so it gets no dither: silence stays
        // silent and same-format copies stay bit-exact.
        let d = match &mut self.dither {
            Some(t) if v.fract() != 0.0 => {
                self.stats.dithered += 1;
                t.next_lsb()
            }
            _ => 0.0,
        };
        (v + d).round().clamp(self.min, self.max) as i32
    }

    /// Float value for `x` (float encodings): kept as is, overs counted.
    #[inline]
    pub fn to_float(&mut self, x: f64) -> f32 {
        self.observe(x);
        if x.abs() > 1.0 {
            self.stats.over += 1;
        }
        x as f32
    }

    /// [`Quantizer::to_float`] for each of `xs`, handing sample `i`'s value to `put(i, v)`:
    /// the same values and the same level figures, with the scan for peak and overs spread
    /// over independent lanes so that it vectorizes.
    #[inline]
    pub fn to_floats<T: Sample>(&mut self, xs: &[T], mut put: impl FnMut(usize, f32)) {
        const LANES: usize = 8;
        let mut peak = [0.0_f64; LANES];
        let mut over = [0_u64; LANES];
        for (c, chunk) in xs.chunks(LANES).enumerate() {
            for (j, x) in chunk.iter().enumerate() {
                let x = x.to_f64_exact();
                let a = x.abs();
                // As in `observe`: a NaN never becomes the peak.
                if a > peak[j] {
                    peak[j] = a;
                }
                over[j] += u64::from(a > 1.0);
                put(c * LANES + j, x as f32);
            }
        }
        self.stats.samples += xs.len() as u64;
        for (p, o) in peak.into_iter().zip(over) {
            if p > self.stats.peak {
                self.stats.peak = p;
            }
            self.stats.over += o;
        }
    }

    /// [`Quantizer::to_floats`] straight into little-endian bytes: sample `i`'s value at
    /// `out[4 i..4 i + 4]` (`out` holds `4 xs.len()` bytes). The same values and level
    /// figures, in loops over whole groups of lanes with no index checks inside, so that the
    /// conversion, the peak scan and the stores vectorize together; overs (rare) are
    /// counted only in the runs whose peak is over full scale.
    pub fn floats_to_le_bytes<T: Sample>(&mut self, xs: &[T], out: &mut [u8]) {
        // Sixteen lanes: four vectors of `f32` (or eight of `f64`) even at the baseline's
        // 128-bit width, for independent maximum chains.
        const LANES: usize = 16;
        const RUN: usize = 256;
        // The peak is taken in the samples' own type: the largest |x| is the same value
        // whether compared before or after the exact widening to `f64`, so `f32` samples
        // are scanned in `f32` lanes (twice as many per vector) with the same figure.
        let mut peak = T::zero();
        let out = &mut out[..4 * xs.len()];
        for (xr, or) in xs.chunks(RUN).zip(out.chunks_mut(4 * RUN)) {
            // The values first (for `f32` samples a plain copy), then the run's peak: two
            // simple loops over data in the cache, each of which vectorizes.
            for (o, &x) in or.chunks_exact_mut(4).zip(xr) {
                o.copy_from_slice(&(x.to_f64_exact() as f32).to_le_bytes());
            }
            let mut groups = xr.chunks_exact(LANES);
            let lanes = (&mut groups).fold([T::zero(); LANES], |mut acc, g| {
                for (p, &x) in acc.iter_mut().zip(g) {
                    *p = larger(*p, x.abs());
                }
                acc
            });
            let rest = groups
                .remainder()
                .iter()
                .fold(T::zero(), |p, &x| larger(p, x.abs()));
            let run_peak = lanes.into_iter().fold(rest, larger);
            if run_peak > T::one() {
                let over = xr.iter().filter(|x| x.abs() > T::one()).count();
                self.stats.over += over as u64;
            }
            peak = larger(peak, run_peak);
        }
        self.stats.samples += xs.len() as u64;
        self.stats.peak = larger(self.stats.peak, peak.to_f64_exact());
    }

    /// The level figures so far, and start counting again from none (for figures gathered
    /// by a quantizer of its own on another thread, see [`Quantizer::absorb`]).
    pub fn take_stats(&mut self) -> LevelStats {
        std::mem::take(&mut self.stats)
    }

    /// Count `other`'s figures as seen here too: the peak is the larger one, the counts
    /// add up (so figures gathered in pieces, in any order, come out as if seen here).
    pub fn absorb(&mut self, other: &LevelStats) {
        if other.peak > self.stats.peak {
            self.stats.peak = other.peak;
        }
        self.stats.over += other.over;
        self.stats.clipped += other.clipped;
        self.stats.samples += other.samples;
        self.stats.dithered += other.dithered;
    }

    #[inline]
    fn observe(&mut self, x: f64) {
        self.stats.samples += 1;
        self.stats.peak = larger(self.stats.peak, x.abs());
    }

    /// What was seen so far.
    pub fn stats(&self) -> LevelStats {
        self.stats
    }
}

/// The larger of a peak so far and a new magnitude, the one rule for every peak the
/// quantizer keeps: a NaN never becomes the peak.
#[inline]
fn larger<T: Sample>(peak: T, a: T) -> T {
    if a > peak {
        a
    } else {
        peak
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn error_variance_lsb2(bits: u16, dither: Dither) -> f64 {
        // A slow sine at an arbitrary level, so the error is not tied to the code grid.
        let mut q = Quantizer::new(Encoding::Int(bits), dither);
        let scale = Encoding::Int(bits).scale();
        let n = 500_000;
        let mut s2 = 0.0;
        for i in 0..n {
            let x = 0.3 * (i as f64 * 0.001_234_567).sin() + 1e-3;
            let code = q.to_code(x);
            let e = f64::from(code) - x * scale;
            s2 += e * e;
        }
        s2 / n as f64
    }

    #[test]
    fn tpdf_error_variance_is_a_quarter_lsb_squared() {
        // TPDF dither of 2 LSB p-p: total error variance Δ²/4, i.e. +4.77 dB over plain
        // rounding's Δ²/12. Lipshitz, Wannamaker, Vanderkooy, "Quantization and dither: a
        // theoretical survey", J. Audio Eng. Soc. 40(5), 1992.
        let dithered = error_variance_lsb2(16, Dither::Tpdf);
        let db = 10.0 * (dithered / 0.25).log10();
        assert!(
            db.abs() < 0.1,
            "TPDF error {dithered} LSB², {db:+.3} dB from Δ²/4"
        );
        let plain = error_variance_lsb2(16, Dither::None);
        let db = 10.0 * (plain / (1.0 / 12.0)).log10();
        assert!(
            db.abs() < 0.1,
            "rounding error {plain} LSB², {db:+.3} dB from Δ²/12"
        );
    }

    #[test]
    fn clips_and_counts_overs() {
        let mut q = Quantizer::new(Encoding::Int(16), Dither::None);
        assert_eq!(q.to_code(1.5), 32767);
        assert_eq!(q.to_code(-1.5), -32768);
        assert_eq!(q.to_code(32767.0 / 32768.0), 32767);
        assert_eq!(q.to_code(-1.0), -32768);
        let s = q.stats();
        assert_eq!((s.over, s.clipped, s.samples), (2, 2, 4));
        assert!((s.peak_dbfs() - 20.0 * 1.5f64.log10()).abs() < 1e-12);
        assert_eq!(s.suggested_gain_db(), Some(-3.7));
    }

    #[test]
    fn codes_on_the_grid_are_not_dithered() {
        let mut q = Quantizer::new(Encoding::Int(16), Dither::Tpdf);
        for i in -300..300 {
            let x = f64::from(i) / 32768.0;
            assert_eq!(q.to_code(x), i);
            assert_eq!(q.to_code(0.0), 0);
        }
    }

    #[test]
    fn block_of_floats_is_sample_by_sample() {
        // Odd length (a partial last lane group), NaN and overs of both signs included.
        let xs: Vec<f64> = (0..1003)
            .map(|i| match i {
                17 => f64::NAN,
                500 => -3.5,
                _ => 1.3 * (i as f64 * 0.37).sin(),
            })
            .collect();
        let mut one = Quantizer::new(Encoding::Float32, Dither::None);
        let expect: Vec<f32> = xs.iter().map(|&x| one.to_float(x)).collect();
        let mut block = Quantizer::new(Encoding::Float32, Dither::None);
        let mut got = vec![0.0_f32; xs.len()];
        block.to_floats(&xs, |i, v| got[i] = v);
        // The NaN is not the peak; the largest magnitude is.
        assert_eq!(one.stats().peak, 3.5);
        assert_eq!(one.stats(), block.stats());
        for (a, b) in expect.iter().zip(&got) {
            assert_eq!(a.to_bits(), b.to_bits());
        }
        // Straight into bytes: the same values and figures, at every length up to a few
        // lane groups past the first (every remainder).
        // Also a quieter signal: one over only, so that most runs have none.
        let quiet: Vec<f64> = xs
            .iter()
            .enumerate()
            .map(|(i, &x)| if i == 700 { 1.5 } else { 0.5 * x })
            .collect();
        let lengths = [
            0, 1, 7, 8, 9, 15, 16, 17, 31, 33, 255, 256, 257, 271, 513, 1003,
        ];
        for (xs, n) in lengths.iter().flat_map(|&n| [(&xs, n), (&quiet, n)]) {
            floats_to_bytes_as_one_by_one(&xs[..n]);
            // `f32` samples (their peak is taken in `f32`): the same as widened first.
            let narrow: Vec<f32> = xs[..n].iter().map(|&x| x as f32).collect();
            floats_to_bytes_as_one_by_one(&narrow);
        }
    }

    /// [`Quantizer::floats_to_le_bytes`] of `xs` gives the values and figures of
    /// [`Quantizer::to_float`] sample by sample.
    fn floats_to_bytes_as_one_by_one<T: Sample>(xs: &[T]) {
        let n = xs.len();
        let mut one = Quantizer::new(Encoding::Float32, Dither::None);
        let expect: Vec<f32> = xs.iter().map(|x| one.to_float(x.to_f64_exact())).collect();
        let mut bytes = Quantizer::new(Encoding::Float32, Dither::None);
        let mut got = vec![0xA5_u8; 4 * n];
        bytes.floats_to_le_bytes(xs, &mut got);
        assert_eq!(one.stats(), bytes.stats(), "{n} samples");
        for (a, b) in expect.iter().zip(got.chunks_exact(4)) {
            assert_eq!(a.to_bits(), u32::from_le_bytes([b[0], b[1], b[2], b[3]]));
        }
    }

    #[test]
    fn figures_of_pieces_absorbed_are_the_figures_of_the_whole() {
        let xs: Vec<f64> = (0..5000)
            .map(|i| match i {
                77 => f64::NAN,
                4000 => -2.5,
                _ => 1.1 * (i as f64 * 0.011).sin(),
            })
            .collect();
        for enc in [Encoding::Float32, Encoding::Int(16), Encoding::Int(32)] {
            let mut whole = Quantizer::new(enc, Dither::None);
            let mut bytes = Vec::new();
            super::super::writer::encode_samples(&mut whole, &xs, &mut bytes);
            let mut sum = Quantizer::new(enc, Dither::None);
            let mut part = Quantizer::new(enc, Dither::None);
            let mut joined = Vec::new();
            // Pieces absorbed out of order.
            let mut pieces: Vec<(Vec<u8>, LevelStats)> = xs
                .chunks(613)
                .map(|c| {
                    let mut b = Vec::new();
                    super::super::writer::encode_samples(&mut part, c, &mut b);
                    (b, part.take_stats())
                })
                .collect();
            for (b, _) in &pieces {
                joined.extend_from_slice(b);
            }
            pieces.reverse();
            for (_, st) in &pieces {
                sum.absorb(st);
            }
            assert_eq!(whole.stats(), sum.stats(), "{enc}");
            assert!(bytes == joined, "{enc}");
            assert_eq!(part.stats(), LevelStats::default());
        }
    }

    #[test]
    fn float_keeps_overs() {
        let mut q = Quantizer::new(Encoding::Float32, Dither::Tpdf);
        assert!(!q.dithers());
        assert_eq!(q.to_float(1.25), 1.25);
        let s = q.stats();
        assert_eq!((s.over, s.clipped), (1, 0));
    }

    #[test]
    fn eight_bit_range() {
        let mut q = Quantizer::new(Encoding::Int(8), Dither::None);
        assert_eq!(q.to_code(1.0), 127);
        assert_eq!(q.to_code(-1.0), -128);
        assert_eq!(q.to_code(0.5), 64);
    }
}
