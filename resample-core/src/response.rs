//! Measuring a symmetric FIR prototype's magnitude response on a dense grid (zero-padded FFT
//! with peak refinement), so that a design's stopband and ripple are measured, not assumed.

use rayon::prelude::*;
use realfft::num_complex::Complex;
use realfft::RealFftPlanner;

/// Largest FFT the design measurement will run (points). Larger prototypes are measured on
/// a resampled copy of the same continuous kernel (see [`crate::design`]).
pub const MAX_MEASURE_FFT: usize = 1 << 22;

/// Least zero-padding factor of the FFT grid used by [`measure`] (the FFT length is the next
/// power of two at or above this many times the filter length).
pub const OVERSAMPLE: usize = 16;

/// What [`measure`] found, magnitudes as plain ratios (not dB).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Measured {
    /// Largest magnitude anywhere in the stopband.
    pub stopband_peak: f64,
    /// Largest magnitude in the passband.
    pub passband_max: f64,
    /// Smallest magnitude in the passband.
    pub passband_min: f64,
    /// Magnitude at 0 Hz.
    pub dc: f64,
}

impl Measured {
    /// Stopband attenuation in dB relative to the DC gain (positive = attenuation).
    pub fn stopband_db(&self) -> f64 {
        20.0 * (self.dc / self.stopband_peak.max(f64::MIN_POSITIVE)).log10()
    }

    /// Passband ripple in dB, peak to peak.
    pub fn ripple_db(&self) -> f64 {
        20.0 * (self.passband_max / self.passband_min.max(f64::MIN_POSITIVE)).log10()
    }
}

/// Measure `taps` (at sample rate 1) over the passband `[0, pass]` and stopband `[stop, 0.5]`,
/// frequencies as fractions of the sample rate.
///
/// The FFT is zero-padded to at least [`OVERSAMPLE`] times the filter length (up to
/// [`MAX_MEASURE_FFT`]); the stopband's local peaks that could hold the maximum are refined
/// on the exact response, and both band edges are evaluated exactly, so lobe tops between
/// grid points are not missed.
///
/// Each call plans its FFT afresh; to measure several filters, a [`Measurer`] keeps the plans
/// and buffers between calls (same results, bit for bit).
pub fn measure(taps: &[f64], pass: f64, stop: f64) -> Measured {
    Measurer::new().measure(taps, pass, stop)
}

/// [`measure`] with FFT plans and work buffers kept between calls, for measuring several
/// filters in a row (a design's successive attempts). The results are bit-identical to
/// [`measure`]'s.
pub struct Measurer {
    planner: RealFftPlanner<f64>,
    /// FFT length the planner holds a plan for (0: none).
    planned: usize,
    input: Vec<f64>,
    spectrum: Vec<Complex<f64>>,
    scratch: Vec<Complex<f64>>,
    mag: Vec<f64>,
    peaks: Vec<(f64, usize)>,
}

impl std::fmt::Debug for Measurer {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Measurer")
            .field("buffer_len", &self.input.len())
            .finish_non_exhaustive()
    }
}

impl Default for Measurer {
    fn default() -> Self {
        Self::new()
    }
}

impl Measurer {
    /// A measurer with no plans yet.
    pub fn new() -> Self {
        Self {
            planner: RealFftPlanner::new(),
            planned: 0,
            input: Vec::new(),
            spectrum: Vec::new(),
            scratch: Vec::new(),
            mag: Vec::new(),
            peaks: Vec::new(),
        }
    }

    /// Plan the FFT and size the buffers for measuring a filter of `taps_len` taps (what
    /// [`Measurer::measure`] does first; calling it early, e.g. beside computing the taps,
    /// takes that work off the critical path).
    pub fn prepare(&mut self, taps_len: usize) {
        let size = fft_size(taps_len);
        self.forget_other_plans(size);
        let Self {
            planner,
            input,
            spectrum,
            scratch,
            mag,
            ..
        } = self;
        // Planning (twiddle factors) and touching the buffers' pages run side by side.
        let (fft, ()) = rayon::join(
            || planner.plan_fft_forward(size),
            || {
                input.resize(size, 0.0);
                spectrum.resize(size / 2 + 1, Complex::new(0.0, 0.0));
                mag.resize(size / 2 + 1, 0.0);
            },
        );
        scratch.resize(fft.get_scratch_len(), Complex::new(0.0, 0.0));
    }

    /// Drop the plans of another FFT length (their twiddle tables are as large as the
    /// buffers; one length at a time is kept).
    fn forget_other_plans(&mut self, size: usize) {
        if self.planned != size {
            self.planner = RealFftPlanner::new();
            self.planned = size;
        }
    }

    /// Measure `taps` as [`measure`] does.
    pub fn measure(&mut self, taps: &[f64], pass: f64, stop: f64) -> Measured {
        let size = fft_size(taps.len());
        self.forget_other_plans(size);
        let fft = self.planner.plan_fft_forward(size);
        // Buffers keep their allocation (and their pages) from one call to the next; only
        // their contents are rewritten.
        let len = taps.len().min(size);
        self.input.clear();
        self.input.extend_from_slice(&taps[..len]);
        self.input.resize(size, 0.0);
        // The FFT writes every output value and uses the scratch as scratch: their old
        // contents do not matter.
        self.spectrum.resize(size / 2 + 1, Complex::new(0.0, 0.0));
        self.scratch
            .resize(fft.get_scratch_len(), Complex::new(0.0, 0.0));
        // The buffers are sized from the plan itself, so their lengths always match.
        if fft
            .process_with_scratch(&mut self.input, &mut self.spectrum, &mut self.scratch)
            .is_err()
        {
            return Measured {
                stopband_peak: f64::INFINITY,
                passband_max: f64::INFINITY,
                passband_min: 0.0,
                dc: 1.0,
            };
        }
        let mag = &mut self.mag;
        mag.clear();
        mag.extend(self.spectrum.iter().map(|c| c.norm_sqr().sqrt()));
        let bins = mag.len() - 1; // bin k is at frequency k / size; the last is 0.5
        let pass_end = ((pass * size as f64).floor() as usize).min(bins);
        let stop_start = ((stop * size as f64).ceil() as usize).min(bins);

        let (mut pmax, mut pmin) = (0.0_f64, f64::INFINITY);
        for &m in &mag[..=pass_end] {
            pmax = pmax.max(m);
            pmin = pmin.min(m);
        }
        // Every local peak of the grid that could still beat the best value found, largest
        // first, refined by a golden-section search on the exact response within one bin
        // either side. The narrowest lobes, next to the transition band of a Kaiser design,
        // are about a third of 1 / taps wide, so the grid has five or more points across
        // each and sits at most about 0.45 dB (a factor 0.9) under any lobe's top.
        // (scipy.signal.freqz on a 16 x grid plus the exact edges agrees: see
        // tests/reference_scipy.rs.)
        const GRID_LOSS: f64 = 0.9;
        let peaks = &mut self.peaks;
        peaks.clear();
        peaks.extend(
            (stop_start..=bins)
                .filter(|&k| {
                    let m = mag[k];
                    (k == stop_start || m >= mag[k - 1]) && (k == bins || m >= mag[k + 1])
                })
                .map(|k| (mag[k], k)),
        );
        // Only peaks within GRID_LOSS of the largest can ever be refined (the running best
        // starts there and only grows; the rest sort after them, and the first of them
        // stops the walk). Those are refined in parallel, then taken in the same order,
        // with the same stopping rule, as one at a time. (A NaN, from non-finite taps,
        // would sort out of place: then every peak is kept.)
        if !peaks.iter().any(|p| p.0.is_nan()) {
            let first = peaks.iter().fold(0.0_f64, |a, p| a.max(p.0));
            peaks.retain(|p| p.0 >= first * GRID_LOSS);
        }
        peaks.sort_by(|a, b| b.0.total_cmp(&a.0));
        let mut speak = peaks.first().map_or(0.0, |p| p.0);
        let bin = 1.0 / size as f64;
        let peaks = &*peaks;
        let (refined, (at_stop, at_pass)) = rayon::join(
            || -> Vec<f64> {
                peaks
                    .par_iter()
                    .map(|&(_, k)| {
                        let f = k as f64 * bin;
                        let lo = (f - bin).max(stop);
                        let hi = (f + bin).min(0.5);
                        refine_peak(taps, lo, hi)
                    })
                    .collect()
            },
            // The band edges rarely fall on a grid point, and the response changes fastest
            // there: evaluate them exactly.
            || rayon::join(|| magnitude_at(taps, stop), || magnitude_at(taps, pass)),
        );
        for (&(m, _), &r) in peaks.iter().zip(&refined) {
            if m < speak * GRID_LOSS {
                break;
            }
            speak = speak.max(r);
        }
        Measured {
            stopband_peak: speak.max(at_stop),
            passband_max: pmax.max(at_pass),
            passband_min: pmin.min(at_pass),
            dc: mag[0],
        }
    }
}

/// FFT length [`measure`] uses for a filter of `taps_len` taps.
fn fft_size(taps_len: usize) -> usize {
    smooth_at_least(taps_len.max(1) * OVERSAMPLE).clamp(4096, MAX_MEASURE_FFT)
}

/// Smallest even number at or above `n` with no prime factor above 5 (fast FFT sizes).
fn smooth_at_least(n: usize) -> usize {
    let mut best = n.next_power_of_two();
    let mut p5 = 1usize;
    while p5 < best {
        let mut p35 = p5;
        while p35 < best {
            // Smallest power of two taking p35 to at least n.
            let mut m = p35;
            while m < n {
                m *= 2;
            }
            if m % 2 == 0 && m < best {
                best = m;
            }
            p35 *= 3;
        }
        p5 *= 5;
    }
    best
}

/// Largest `magnitude_at` in `[lo, hi]` by golden-section search (the interval holds one
/// lobe top).
fn refine_peak(taps: &[f64], mut lo: f64, mut hi: f64) -> f64 {
    const INV_PHI: f64 = 0.618_033_988_749_894_8;
    let mut best = magnitude_at(taps, lo).max(magnitude_at(taps, hi));
    let mut a = hi - INV_PHI * (hi - lo);
    let mut b = lo + INV_PHI * (hi - lo);
    let (mut fa, mut fb) = (magnitude_at(taps, a), magnitude_at(taps, b));
    for _ in 0..14 {
        if fa > fb {
            hi = b;
            b = a;
            fb = fa;
            a = hi - INV_PHI * (hi - lo);
            fa = magnitude_at(taps, a);
        } else {
            lo = a;
            a = b;
            fa = fb;
            b = lo + INV_PHI * (hi - lo);
            fb = magnitude_at(taps, b);
        }
    }
    best = best.max(fa).max(fb);
    best
}

/// `(cos(w k), sin(w k))` for `k = start, start + 1, ...`: a complex rotation re-anchored to
/// an exact `sin_cos` every 32 steps, so the error stays near the rounding of a few dozen
/// products.
fn phasors(w: f64, start: usize) -> impl Iterator<Item = (f64, f64)> {
    let (step_s, step_c) = w.sin_cos();
    let (mut zc, mut zs) = (1.0_f64, 0.0_f64);
    (start..).map(move |k| {
        if (k - start) % 32 == 0 {
            let (s, c) = (w * k as f64).sin_cos();
            zc = c;
            zs = s;
        } else {
            let nc = zc * step_c - zs * step_s;
            zs = zs * step_c + zc * step_s;
            zc = nc;
        }
        (zc, zs)
    })
}

/// `|sum_n taps[n] e^{-j 2 pi f n}|` evaluated directly (`f` as a fraction of the rate).
///
/// Odd-length symmetric taps take the zero-phase form `h[c] + 2 sum_k h[c+k] cos(2 pi f k)`,
/// at half the cost.
pub fn magnitude_at(taps: &[f64], f: f64) -> f64 {
    let w = 2.0 * core::f64::consts::PI * f;
    let n = taps.len();
    let symmetric = n % 2 == 1 && (0..n / 2).all(|i| taps[i] == taps[n - 1 - i]);
    if symmetric {
        let c = n / 2;
        let tail = taps[c + 1..].iter().zip(phasors(w, 1));
        let acc = taps[c] + tail.map(|(&h, (cos, _))| 2.0 * h * cos).sum::<f64>();
        acc.abs()
    } else {
        let (mut re, mut im) = (0.0_f64, 0.0_f64);
        for (&h, (cos, sin)) in taps.iter().zip(phasors(w, 0)) {
            re += h * cos;
            im -= h * sin;
        }
        re.hypot(im)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn moving_average_has_published_response() {
        // Moving average of length N: |H(f)| = |sin(pi f N) / (N sin(pi f))| (Harris 1978,
        // Dirichlet kernel; ../shared/CHECKS.md). Its first side lobe is near -13.26 dB
        // (rectangular window, Harris 1978 Table 1).
        let n = 64;
        let taps = vec![1.0 / n as f64; n];
        let m = measure(&taps, 0.0, 1.0 / n as f64);
        assert!((m.dc - 1.0).abs() < 1e-12);
        assert!(
            (m.stopband_db() - 13.26).abs() < 0.05,
            "{}",
            m.stopband_db()
        );
    }

    #[test]
    fn exact_evaluation_matches_dirichlet_formula() {
        // |H(f)| = |sin(pi f N) / (N sin(pi f))| (Harris 1978; ../shared/CHECKS.md).
        let n = 8;
        let taps = vec![1.0 / n as f64; n];
        let f = 1000.0 / 48_000.0;
        let exact = ((core::f64::consts::PI * f * n as f64).sin()
            / (n as f64 * (core::f64::consts::PI * f).sin()))
        .abs();
        assert!((magnitude_at(&taps, f) - exact).abs() < 1e-14);
        // CHECKS.md: N = 8 at 48 kHz is -0.3944 dB at 1 kHz.
        assert!((20.0 * exact.log10() + 0.3944).abs() < 1e-4);
    }

    #[test]
    fn dc_and_passband_of_an_impulse() {
        let m = measure(&[1.0], 0.4, 0.45);
        assert!((m.ripple_db()).abs() < 1e-12);
        assert!((m.stopband_db()).abs() < 1e-12);
    }
}
