//! The converter's linear response, from whole-signal spectra: `H(f) = (Y(f) / B) / (X(f) / A)`
//! on a frequency grid common to the input (rate A) and the output (rate B), the swept-sine
//! method of Farina (108th AES Convention, 2000). From it: the level of the wanted tone at
//! every frequency (ripple, bandwidth, the reference level) and the latency, found by
//! whitened cross-correlation of output and input (the peak of the band-limited impulse
//! response, located between grid points on its exact band-limited interpolation).

use crate::ratio::gcd;
use realfft::num_complex::Complex;
use realfft::RealFftPlanner;

use crate::{Error, Result};

/// Half-width of the smoothing applied to |H|^2 before ripple and bandwidth are read, Hz.
pub const SMOOTH_HZ: f64 = 1.0;

/// The measured linear response of a converter over the swept band.
#[derive(Debug, Clone)]
pub struct Transfer {
    /// Grid spacing, Hz.
    bin_hz: f64,
    /// `H` on the grid, bins `0..h.len()`.
    h: Vec<Complex<f64>>,
    /// `|H|^2` smoothed over [`SMOOTH_HZ`].
    smooth: Vec<f64>,
    /// First and last bin where the sweep is present at full level.
    first: usize,
    last: usize,
    /// Latency in output samples.
    latency: f64,
    /// The output spectrum on the output's FFT (for band splitting) and that FFT's size.
    y_spec: Vec<Complex<f64>>,
    nb: usize,
    out_rate: u32,
}

/// Smallest `2^a 3^b 5^c` not below `n`.
fn smooth_size(n: usize) -> usize {
    let mut best = n.next_power_of_two();
    let mut p5 = 1usize;
    while p5 < best {
        let mut p35 = p5;
        while p35 < best {
            let mut v = p35;
            while v < n {
                v *= 2;
            }
            best = best.min(v);
            p35 *= 3;
        }
        p5 *= 5;
    }
    best
}

fn spectrum(x: &[f64], n: usize) -> Result<Vec<Complex<f64>>> {
    let mut planner = RealFftPlanner::<f64>::new();
    let fft = planner.plan_fft_forward(n);
    let mut buf = fft.make_input_vec();
    let len = x.len().min(n);
    buf[..len].copy_from_slice(&x[..len]);
    let mut out = fft.make_output_vec();
    fft.process(&mut buf, &mut out)
        .map_err(|e| Error::MeasureSetup {
            problem: format!("FFT failed: {e}"),
        })?;
    Ok(out)
}

/// Inverse real FFT of size `n` from `n / 2 + 1` bins, scaled by `1 / n`.
pub(crate) fn inverse(spec: &[Complex<f64>], n: usize) -> Result<Vec<f64>> {
    let mut planner = RealFftPlanner::<f64>::new();
    let ifft = planner.plan_fft_inverse(n);
    let mut buf = ifft.make_input_vec();
    let len = buf.len().min(spec.len());
    buf[..len].copy_from_slice(&spec[..len]);
    // A real signal's DC (and, for even n, Nyquist) bin is real.
    buf[0].im = 0.0;
    if n % 2 == 0 {
        if let Some(last) = buf.last_mut() {
            last.im = 0.0;
        }
    }
    let mut out = ifft.make_output_vec();
    ifft.process(&mut buf, &mut out)
        .map_err(|e| Error::MeasureSetup {
            problem: format!("inverse FFT failed: {e}"),
        })?;
    let scale = 1.0 / n as f64;
    for v in &mut out {
        *v *= scale;
    }
    Ok(out)
}

impl Transfer {
    /// Measure `H` from input `x` (rate `in_rate`) and output `y` (rate `out_rate`), using
    /// the band `[lo_hz, hi_hz]` (where the sweep is present at full level) for the latency.
    pub(crate) fn measure(
        x: &[f64],
        in_rate: u32,
        y: &[f64],
        out_rate: u32,
        lo_hz: f64,
        hi_hz: f64,
        latency_hi_hz: f64,
    ) -> Result<Self> {
        let g = gcd(in_rate.into(), out_rate.into());
        let (m, l) = (
            (u64::from(in_rate) / g) as usize,
            (u64::from(out_rate) / g) as usize,
        );
        // Room for the whole of both signals plus a latency of a tenth of their length.
        let need = (x.len().div_ceil(m)).max(y.len().div_ceil(l));
        let k = smooth_size(need + need / 10 + 16);
        let (na, nb) = (m * k, l * k);
        let bin_hz = g as f64 / k as f64;
        let xs = spectrum(x, na)?;
        let ys = spectrum(y, nb)?;
        let bins = xs.len().min(ys.len());
        let ratio = f64::from(in_rate) / f64::from(out_rate);
        let tiny = f64::MIN_POSITIVE.sqrt();
        let h: Vec<Complex<f64>> = (0..bins)
            .map(|j| {
                let d = xs[j];
                if d.norm_sqr() > tiny {
                    ys[j] / d * ratio
                } else {
                    Complex::new(0.0, 0.0)
                }
            })
            .collect();
        let first = ((lo_hz / bin_hz).ceil() as usize).min(bins.saturating_sub(1));
        let last = ((hi_hz / bin_hz).floor() as usize).clamp(first, bins.saturating_sub(1));
        let half = (SMOOTH_HZ / bin_hz).round() as usize;
        let p: Vec<f64> = h.iter().map(|c| c.norm_sqr()).collect();
        let smooth = (0..bins)
            .map(|j| {
                let a = j.saturating_sub(half).max(first.min(j));
                let b = (j + half).min(last.max(j));
                p[a..=b].iter().sum::<f64>() / (b - a + 1) as f64
            })
            .collect();
        let mut t = Self {
            bin_hz,
            h,
            smooth,
            first,
            last,
            latency: 0.0,
            y_spec: ys,
            nb,
            out_rate,
        };
        let lat_last = ((latency_hi_hz / bin_hz).floor() as usize).clamp(first, last);
        t.latency = t.find_latency(lat_last)?;
        Ok(t)
    }

    /// Whitened cross-correlation: the band-limited impulse response; the delay (output
    /// samples) is the centre of its main lobe, midway between the two points where it falls
    /// to half its peak. The peak is found on the FFT's grid and refined, and the two points
    /// are located, on the impulse response's exact band-limited interpolation. For a
    /// symmetric response (a linear-phase filter, a moving average, a pure delay) that is
    /// its centre exactly, even where its top is flat.
    ///
    /// The impulse response, not the slope of the phase: a converter with a broad, smooth
    /// response (linear interpolation, a short filter) lets images or aliases into the band,
    /// and in `Y / X` they are terms whose phase turns fast and irregularly. Weighted by
    /// `|H|`, they bias a phase slope by tens to thousands of samples (a zero-delay linear
    /// interpolator from 96 kHz to 44.1 kHz read 1705 samples); in the impulse response they
    /// are chirps spread over seconds, far below its main lobe, which stays where it is.
    fn find_latency(&self, b: usize) -> Result<f64> {
        let a = self.first;
        if b <= a + 8 {
            return Err(Error::MeasureSetup {
                problem: "the swept band is too narrow to measure".into(),
            });
        }
        let edge = ((b - a) / 10).max(1);
        let mut c = vec![Complex::new(0.0, 0.0); self.nb / 2 + 1];
        for (j, cj) in c.iter_mut().enumerate().take(b + 1).skip(a) {
            let from_edge = (j - a).min(b - j) as f64 / edge as f64;
            let taper = if from_edge >= 1.0 {
                1.0
            } else {
                0.5 - 0.5 * (core::f64::consts::PI * from_edge).cos()
            };
            *cj = self.h[j] * taper;
        }
        let ir = inverse(&c, self.nb)?;
        let (mut best, mut idx) = (0.0, 0usize);
        for (i, v) in ir.iter().enumerate() {
            if v.abs() > best {
                best = v.abs();
                idx = i;
            }
        }
        let coarse = if idx > self.nb / 2 {
            idx as f64 - self.nb as f64
        } else {
            idx as f64
        };
        // |ir(t)| at a fractional lag t: Re sum_j c_j e^{j 2 pi j t / nb} (the factors that
        // do not depend on t dropped), the phasor advanced by rotation and renormalised.
        let band = &c[a..=b];
        let nb = self.nb as f64;
        let at = |t: f64| {
            let w = 2.0 * core::f64::consts::PI * t / nb;
            let step = Complex::from_polar(1.0, w);
            let mut rot = Complex::from_polar(1.0, w * a as f64);
            let mut acc = 0.0;
            for (i, cj) in band.iter().enumerate() {
                acc += cj.re * rot.re - cj.im * rot.im;
                rot *= step;
                if i % 1024 == 1023 {
                    rot /= rot.norm();
                }
            }
            acc.abs()
        };
        // Golden-section search for the maximum within a sample of the grid's peak.
        let g = 0.5 * (5f64.sqrt() - 1.0);
        let (mut lo, mut hi) = (coarse - 1.0, coarse + 1.0);
        let mut x1 = hi - g * (hi - lo);
        let mut x2 = lo + g * (hi - lo);
        let (mut f1, mut f2) = (at(x1), at(x2));
        while hi - lo > 1e-9 {
            if f1 < f2 {
                lo = x1;
                x1 = x2;
                f1 = f2;
                x2 = lo + g * (hi - lo);
                f2 = at(x2);
            } else {
                hi = x2;
                x2 = x1;
                f2 = f1;
                x1 = hi - g * (hi - lo);
                f1 = at(x1);
            }
        }
        let peak_t = 0.5 * (lo + hi);
        let half = 0.5 * at(peak_t);
        // Walk out a sample at a time until below half the peak, then bisect the crossing.
        let limit = (self.nb / 4) as f64;
        let crossing = |dir: f64| {
            let mut inside = peak_t;
            let mut k = 1.0;
            let mut outside = peak_t + dir;
            while at(outside) >= half {
                if k >= limit {
                    return outside;
                }
                inside = outside;
                k += 1.0;
                outside = peak_t + dir * k;
            }
            for _ in 0..48 {
                let mid = 0.5 * (inside + outside);
                if at(mid) >= half {
                    inside = mid;
                } else {
                    outside = mid;
                }
            }
            0.5 * (inside + outside)
        };
        Ok(0.5 * (crossing(-1.0) + crossing(1.0)))
    }

    /// Latency in output samples (positive: the output lags the input).
    pub fn latency_samples(&self) -> f64 {
        self.latency
    }

    /// Grid spacing, Hz.
    pub fn bin_hz(&self) -> f64 {
        self.bin_hz
    }

    /// Lowest and highest frequency (Hz) where the sweep was present at full level.
    pub fn band(&self) -> (f64, f64) {
        (
            self.first as f64 * self.bin_hz,
            self.last as f64 * self.bin_hz,
        )
    }

    /// |H| in dB at `f` Hz (nearest grid point, unsmoothed), or `None` outside the grid.
    pub fn magnitude_db_at(&self, f: f64) -> Option<f64> {
        let j = (f / self.bin_hz).round();
        if !(0.0..self.h.len() as f64).contains(&j) {
            return None;
        }
        Some(20.0 * self.h[j as usize].norm().max(1e-300).log10())
    }

    /// |H|^2 averaged over `[f - half_hz, f + half_hz]`, in dB.
    pub fn mean_db(&self, f: f64, half_hz: f64) -> Option<f64> {
        let a = ((f - half_hz) / self.bin_hz).ceil().max(0.0) as usize;
        let b = ((f + half_hz) / self.bin_hz).floor() as usize;
        if b >= self.h.len() || b < a {
            return None;
        }
        let p = self.h[a..=b].iter().map(|c| c.norm_sqr()).sum::<f64>() / (b - a + 1) as f64;
        Some(10.0 * p.max(1e-300).log10())
    }

    /// Smoothed |H| in dB on the grid, `(frequency, dB)` for bins in `[lo, hi]` Hz.
    pub fn smoothed_db(&self, lo: f64, hi: f64) -> impl Iterator<Item = (f64, f64)> + '_ {
        let a = ((lo / self.bin_hz).ceil().max(0.0) as usize).max(self.first);
        let b = ((hi / self.bin_hz).floor().max(0.0) as usize).min(self.last);
        (a..=b).map(move |j| {
            (
                j as f64 * self.bin_hz,
                10.0 * self.smooth[j].max(1e-300).log10(),
            )
        })
    }

    /// Peak-to-peak spread of the smoothed |H| in dB over `[lo, hi]` Hz.
    pub fn ripple_db(&self, lo: f64, hi: f64) -> f64 {
        let (mut mx, mut mn) = (f64::NEG_INFINITY, f64::INFINITY);
        for (_, v) in self.smoothed_db(lo, hi) {
            mx = mx.max(v);
            mn = mn.min(v);
        }
        if mx >= mn {
            mx - mn
        } else {
            0.0
        }
    }

    /// First frequency above `from` Hz where the smoothed |H| falls `drop_db` below
    /// `ref_db`, linearly interpolated; `None` if it never does inside the swept band.
    pub fn bandwidth(&self, from: f64, ref_db: f64, drop_db: f64) -> Option<f64> {
        let target = ref_db - drop_db;
        let mut prev: Option<(f64, f64)> = None;
        for (f, v) in self.smoothed_db(from, f64::INFINITY) {
            if v < target {
                return Some(match prev {
                    Some((pf, pv)) if pv > v => pf + (f - pf) * (pv - target) / (pv - v),
                    _ => f,
                });
            }
            prev = Some((f, v));
        }
        None
    }

    /// The output with everything below `cut_hz` removed (a brick wall on the whole-signal
    /// spectrum), `len` samples long.
    pub(crate) fn output_above(&self, cut_hz: f64, len: usize) -> Result<Vec<f64>> {
        let out_bin = f64::from(self.out_rate) / self.nb as f64;
        let cut = (cut_hz / out_bin).ceil() as usize;
        let mut spec = self.y_spec.clone();
        for c in spec.iter_mut().take(cut) {
            *c = Complex::new(0.0, 0.0);
        }
        let mut y = inverse(&spec, self.nb)?;
        y.truncate(len);
        Ok(y)
    }
}

/// `y` (sampled at `rate`) with everything below `cut_hz` removed by a brick wall on its
/// whole-signal spectrum, as long as `y`.
pub(crate) fn above_cut(y: &[f64], rate: u32, cut_hz: f64) -> Result<Vec<f64>> {
    let n = smooth_size(y.len() + y.len() / 10 + 16);
    let mut spec = spectrum(y, n)?;
    let cut = (cut_hz / (f64::from(rate) / n as f64)).ceil() as usize;
    for c in spec.iter_mut().take(cut) {
        *c = Complex::new(0.0, 0.0);
    }
    let mut out = inverse(&spec, n)?;
    out.truncate(y.len());
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn smooth_sizes() {
        assert_eq!(smooth_size(1), 1);
        assert_eq!(smooth_size(7), 8);
        assert_eq!(smooth_size(11), 12);
        assert_eq!(smooth_size(1001), 1024);
        assert_eq!(smooth_size(1025), 1080);
    }

    #[test]
    fn pure_delay_is_found_to_a_small_fraction_of_a_sample() {
        // A delay of 37 samples at the same rate: H = e^{-j w 37}, |H| = 1.
        let s = crate::measure::Sweep::new(8000).seconds(1.0);
        let x = s.samples().unwrap();
        let mut y = vec![0.0; 37];
        y.extend_from_slice(&x);
        let t = Transfer::measure(&x, 8000, &y, 8000, 40.0, 3000.0, 3000.0).unwrap();
        assert!(
            (t.latency_samples() - 37.0).abs() < 1e-6,
            "{}",
            t.latency_samples()
        );
        assert!(t.ripple_db(40.0, 3000.0) < 1e-9);
    }
}
