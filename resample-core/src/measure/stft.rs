//! Frame-by-frame analysis of a converter's output: a Kaiser-windowed STFT whose side lobes
//! sit near -200 dB, the wanted tone's guard band in each frame, and the strongest unwanted
//! component outside it.
//!
//! Levels are amplitudes of sinusoids in dBFS: a sum of bin powers, each scaled by
//! `4 / (N sum w^2)`, is the squared amplitude of the components in those bins (Parseval).
//! A swept tone spreads over the frequencies it passes during a frame, so components are
//! measured as the power in a band as wide as the wanted tone occupies in that frame: a
//! spurious tone that sweeps at the same speed (every image and alias of a linear converter
//! does) is then measured at its true level, as a steady one is.

use realfft::RealFftPlanner;

use crate::filter::window::kaiser_window;
use crate::{Error, Result};

/// Kaiser beta of the analysis window (highest side lobe near -200 dB).
pub const ANALYSIS_BETA: f64 = 26.0;

/// Frames overlap by this factor (hop = frame length / OVERLAP).
pub const OVERLAP: usize = 8;

/// The analysis window and FFT for one frame length.
#[derive(Debug, Clone)]
pub struct Analyser {
    len: usize,
    window: Vec<f64>,
    scale: f64,
    rate: f64,
}

impl Analyser {
    /// An analyser for frames of `len` samples (even, at least 64) at `rate` Hz.
    pub fn new(len: usize, rate: u32) -> Result<Self> {
        if len < 64 || len % 2 != 0 {
            return Err(Error::MeasureSetup {
                problem: format!("analysis frame of {len} samples (need an even length >= 64)"),
            });
        }
        let window = kaiser_window(len, ANALYSIS_BETA);
        let sw2: f64 = window.iter().map(|w| w * w).sum();
        Ok(Self {
            len,
            scale: 4.0 / (len as f64 * sw2),
            window,
            rate: f64::from(rate),
        })
    }

    /// Frame length, samples.
    pub fn len(&self) -> usize {
        self.len
    }

    /// Always false (frames are at least 64 samples).
    pub fn is_empty(&self) -> bool {
        self.len == 0
    }

    /// Hop between frames, samples.
    pub fn hop(&self) -> usize {
        self.len / OVERLAP
    }

    /// Bin spacing, Hz.
    pub fn bin_hz(&self) -> f64 {
        self.rate / self.len as f64
    }

    /// Half-width of the window's main lobe to its first null, plus one bin, in bins:
    /// `sqrt(1 + (beta / pi)^2) + 1` (the Kaiser window's null, common practice, no source).
    pub fn lobe_bins(&self) -> f64 {
        (1.0 + (ANALYSIS_BETA / core::f64::consts::PI).powi(2)).sqrt() + 1.0
    }

    /// Scaled bin powers (`N / 2 + 1` of them) of the frame starting at `start` of `signal`;
    /// samples past the end count as zero.
    pub fn powers(
        &self,
        signal: &[f64],
        start: usize,
        planner: &mut RealFftPlanner<f64>,
    ) -> Result<Vec<f64>> {
        let fft = planner.plan_fft_forward(self.len);
        let mut buf = fft.make_input_vec();
        for (i, b) in buf.iter_mut().enumerate() {
            *b = signal.get(start + i).copied().unwrap_or(0.0) * self.window[i];
        }
        let mut spec = fft.make_output_vec();
        fft.process(&mut buf, &mut spec)
            .map_err(|e| Error::MeasureSetup {
                problem: format!("FFT failed: {e}"),
            })?;
        Ok(spec.iter().map(|c| c.norm_sqr() * self.scale).collect())
    }
}

/// The strongest band of `width` bins inside `[lo, hi)` of `p`: (power, centre bin).
/// A range narrower than `width` counts as one band.
pub fn strongest_band(p: &[f64], lo: usize, hi: usize, width: usize) -> Option<(f64, usize)> {
    let hi = hi.min(p.len());
    if lo >= hi {
        return None;
    }
    let width = width.max(1);
    if hi - lo <= width {
        let sum: f64 = p[lo..hi].iter().sum();
        return Some((sum, (lo + hi) / 2));
    }
    // Sum each band afresh every `width` steps so rounding never builds up.
    let mut best = (f64::NEG_INFINITY, lo);
    let mut sum: f64 = p[lo..lo + width].iter().sum();
    for start in lo..=hi - width {
        if start > lo {
            if (start - lo) % width == 0 {
                sum = p[start..start + width].iter().sum();
            } else {
                sum += p[start + width - 1] - p[start - 1];
            }
        }
        if sum > best.0 {
            best = (sum, start + width / 2);
        }
    }
    Some((best.0.max(0.0), best.1))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Highest side lobe (dB below the main lobe) of a window, from a zero-padded FFT.
    fn highest_side_lobe_db(w: &[f64]) -> f64 {
        let n = w.len() * 64;
        let mut planner = RealFftPlanner::<f64>::new();
        let fft = planner.plan_fft_forward(n);
        let mut buf = fft.make_input_vec();
        buf[..w.len()].copy_from_slice(w);
        let mut spec = fft.make_output_vec();
        fft.process(&mut buf, &mut spec).unwrap();
        let m: Vec<f64> = spec.iter().map(|c| c.norm()).collect();
        // Walk down the main lobe to its first minimum, then take the maximum beyond.
        let mut k = 1;
        while k + 1 < m.len() && m[k + 1] < m[k] {
            k += 1;
        }
        let side = m[k..].iter().cloned().fold(0.0, f64::max);
        20.0 * (side / m[0]).log10()
    }

    #[test]
    fn kaiser_side_lobes_match_harris_table() {
        // Kaiser beta = pi alpha, alpha = 2 / 2.5 / 3 / 3.5: highest side lobe -45.86 /
        // -57.56 / -69.62 / -81.92 dB (F. J. Harris, Proc. IEEE 66(1), 1978, Table 1, as
        // recomputed in ../shared/CHECKS.md). Rectangular: -13.26 dB (same table).
        for (alpha, db) in [(2.0, -45.86), (2.5, -57.56), (3.0, -69.62), (3.5, -81.92)] {
            let w = kaiser_window(1025, core::f64::consts::PI * alpha);
            let got = highest_side_lobe_db(&w);
            assert!((got - db).abs() < 0.1, "alpha {alpha}: {got}");
        }
        let got = highest_side_lobe_db(&vec![1.0; 1024]);
        assert!((got + 13.26).abs() < 0.05, "{got}");
    }

    #[test]
    fn analysis_window_side_lobes_are_far_below_what_is_measured() {
        let w = kaiser_window(2048, ANALYSIS_BETA);
        let got = highest_side_lobe_db(&w);
        assert!(got < -185.0, "{got}");
    }

    #[test]
    fn a_tone_on_a_bin_measures_its_amplitude() {
        // Parseval: the band power of a sinusoid of amplitude a is a^2 (common practice,
        // no source).
        let a = Analyser::new(1024, 48_000).unwrap();
        let f = 100.0 * a.bin_hz() + 0.37 * a.bin_hz();
        let x: Vec<f64> = (0..1024)
            .map(|n| 0.25 * (2.0 * core::f64::consts::PI * f * n as f64 / 48_000.0 + 0.3).sin())
            .collect();
        let mut planner = RealFftPlanner::new();
        let p = a.powers(&x, 0, &mut planner).unwrap();
        let lobe = a.lobe_bins().ceil() as usize;
        let band: f64 = p[100 - lobe..=101 + lobe].iter().sum();
        assert!((band.sqrt() - 0.25).abs() < 1e-9, "{}", band.sqrt());
        let (rest, _) = strongest_band(&p, 102 + lobe, p.len(), 20).unwrap();
        assert!(10.0 * (rest / band).log10() < -180.0);
    }

    #[test]
    fn strongest_band_finds_the_peak() {
        let mut p = vec![1e-20; 100];
        p[50] = 1.0;
        p[51] = 0.5;
        let (s, c) = strongest_band(&p, 0, 100, 4).unwrap();
        assert!((s - 1.5 - 2e-20).abs() < 1e-12);
        assert!((48..=52).contains(&c));
        assert_eq!(strongest_band(&p, 10, 10, 4), None);
        let (s, _) = strongest_band(&p, 0, 3, 4).unwrap();
        assert!((s - 3e-20).abs() < 1e-30);
    }
}
