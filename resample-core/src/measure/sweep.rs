//! The exponential sine sweep used as the test signal: Farina's formula between two
//! frequencies, entered and left smoothly, with short fades and silence around it.
//!
//! `x(t) = a sin(2 pi f1 T / R (e^{t R / T} - 1))`, `R = ln(f2 / f1)`, instantaneous frequency
//! `f(t) = f1 (f2 / f1)^{t / T}` (A. Farina, "Simultaneous measurement of impulse response and
//! distortion with a swept-sine technique", 108th AES Convention, 2000).
//!
//! Measuring 150 dB and more needs a test signal with nothing spurious at that level, so the
//! ends are shaped with care:
//!
//! * A chirp that starts or stops abruptly splatters: a frame holding the stop shows
//!   components -65 dB down a kilohertz away. So the sweep rate is brought up from zero
//!   before `t = 0` and back down to zero after the formula's last instant, multiplied by a
//!   smooth step (the running integral of a Kaiser window with a large beta, flat to about
//!   -200 dB at its ends). The formula holds exactly from f1 to a little below f2; the
//!   glide then ends exactly on f2 at full level.
//! * The fade-in happens during the run-up and the fade-out after the glide, at f2, with
//!   the same smooth step, so every frequency of `[f1, f2]` is swept at full level.
//!
//! The run-up and glide are integrated numerically on a grid aligned with the samples (16
//! points per sample); the phase error is a smooth function far below anything measured.

use super::edge::Probes;
use crate::filter::window::bessel_i0;

use crate::{Error, Result};

/// Default start frequency, Hz.
pub const DEFAULT_START_HZ: f64 = 20.0;
/// Default end frequency as a fraction of the Nyquist frequency.
pub const DEFAULT_END_FRACTION: f64 = 0.999;
/// Default sweep duration (start to end frequency), seconds.
pub const DEFAULT_SECONDS: f64 = 10.0;
/// Default peak level, dBFS (a sine with peak at full scale is 0 dBFS).
pub const DEFAULT_LEVEL_DBFS: f64 = -1.0;
/// Duration of the run-up (with the fade-in), of the glide and of the fade-out, seconds.
pub const FADE_SECONDS: f64 = 0.05;
/// Integration points per sample in the run-up and glide.
const SUBSTEPS: usize = 16;
/// Silence before the fade-in, seconds.
pub const LEAD_SECONDS: f64 = 0.1;
/// Silence after the fade-out, seconds (room for a converter's delay and ringing).
pub const TAIL_SECONDS: f64 = 0.25;
/// Kaiser beta of the fade shape.
pub const FADE_BETA: f64 = 28.0;
/// Shortest sweep accepted, seconds.
pub const MIN_SECONDS: f64 = 0.5;
/// Longest sweep accepted, seconds.
pub const MAX_SECONDS: f64 = 600.0;
/// Lowest level accepted, dBFS.
pub const MIN_LEVEL_DBFS: f64 = -60.0;

/// A test sweep: rate, band, duration and level. Build with [`Sweep::new`] and the setters;
/// [`Sweep::check`] validates.
///
/// ```
/// use resample_core::measure::Sweep;
/// let s = Sweep::new(48_000).seconds(2.0);
/// let x = s.samples()?;
/// assert_eq!(x.len(), s.len());
/// // Farina 2000: t(f) = T ln(f / f1) / ln(f2 / f1).
/// let t = s.time_of(1000.0);
/// assert!((s.frequency_at(t) - 1000.0).abs() < 1e-9);
/// # Ok::<(), resample_core::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Sweep {
    rate: u32,
    seconds: f64,
    level_dbfs: f64,
    start_hz: f64,
    end_hz: Option<f64>,
    edge_rate: Option<u32>,
}

impl Sweep {
    /// The default sweep at `rate`: 20 Hz to 0.999 of Nyquist in 10 s at -1 dBFS.
    pub fn new(rate: u32) -> Self {
        Self {
            rate,
            seconds: DEFAULT_SECONDS,
            level_dbfs: DEFAULT_LEVEL_DBFS,
            start_hz: DEFAULT_START_HZ,
            end_hz: None,
            edge_rate: None,
        }
    }

    /// Append steady probe tones across the band edge of a conversion to `out_rate` (see
    /// [`super::edge`]): the analysis then resolves the stopband next to the lower Nyquist
    /// frequency. No probes for `out_rate` equal to the sweep's rate.
    pub fn edge_probes(mut self, out_rate: u32) -> Self {
        self.edge_rate = (out_rate != self.rate).then_some(out_rate);
        self
    }

    /// The output rate the edge probes were placed for, if any.
    pub fn edge_rate(&self) -> Option<u32> {
        self.edge_rate
    }

    /// The edge probes, if the sweep carries them (and any tone fits).
    pub fn probes(&self) -> Option<Probes> {
        Probes::new(self.rate, self.edge_rate?, self.amplitude())
    }

    /// Signal time (seconds from the first sample) at which the probe section starts
    /// (its fade-in included): right after the sweep's closing silence.
    pub fn probe_start(&self) -> f64 {
        self.plain_len() as f64 / f64::from(self.rate)
    }

    /// Sweep duration from start to end frequency, seconds (fades and silence come on top).
    pub fn seconds(mut self, s: f64) -> Self {
        self.seconds = s;
        self
    }

    /// Peak level in dBFS (at most 0).
    pub fn level_dbfs(mut self, db: f64) -> Self {
        self.level_dbfs = db;
        self
    }

    /// Start frequency, Hz.
    pub fn start_hz(mut self, f: f64) -> Self {
        self.start_hz = f;
        self
    }

    /// End frequency, Hz (default 0.999 of the Nyquist frequency).
    pub fn end_hz(mut self, f: f64) -> Self {
        self.end_hz = Some(f);
        self
    }

    /// Sample rate, Hz.
    pub fn rate(&self) -> u32 {
        self.rate
    }

    /// Sweep duration, seconds.
    pub fn duration(&self) -> f64 {
        self.seconds
    }

    /// Peak level, dBFS.
    pub fn level(&self) -> f64 {
        self.level_dbfs
    }

    /// Peak amplitude (1.0 is full scale).
    pub fn amplitude(&self) -> f64 {
        10f64.powf(self.level_dbfs / 20.0)
    }

    /// Start frequency f1, Hz.
    pub fn f1(&self) -> f64 {
        self.start_hz
    }

    /// End frequency f2, Hz.
    pub fn f2(&self) -> f64 {
        self.end_hz
            .unwrap_or(DEFAULT_END_FRACTION * f64::from(self.rate) / 2.0)
    }

    /// `R = ln(f2 / f1)`.
    fn r(&self) -> f64 {
        (self.f2() / self.f1()).ln()
    }

    /// Check every parameter; the other methods assume a checked sweep.
    pub fn check(&self) -> Result<()> {
        let bad = |problem: String| Err(Error::MeasureSetup { problem });
        if self.rate == 0 || self.rate > crate::MAX_RATE {
            return Err(Error::RateOutOfRange {
                rate: self.rate.into(),
            });
        }
        if !(MIN_SECONDS..=MAX_SECONDS).contains(&self.seconds) {
            return bad(format!(
                "sweep duration {} s is out of range ({MIN_SECONDS} to {MAX_SECONDS} s)",
                self.seconds
            ));
        }
        if !(MIN_LEVEL_DBFS..=0.0).contains(&self.level_dbfs) {
            return bad(format!(
                "sweep level {} dBFS is out of range ({MIN_LEVEL_DBFS} to 0 dBFS)",
                self.level_dbfs
            ));
        }
        let nyq = f64::from(self.rate) / 2.0;
        let (f1, f2) = (self.f1(), self.f2());
        if !(f1.is_finite() && f2.is_finite() && f1 > 0.0 && f2 < nyq && f2 > 2.0 * f1) {
            return bad(format!(
                "sweep band {f1} Hz to {f2} Hz does not fit (need 0 < 2 f1 < f2 < {nyq} Hz)"
            ));
        }
        if let Some(r) = self.edge_rate {
            if r == 0 || r > crate::MAX_RATE {
                return Err(Error::RateOutOfRange { rate: r.into() });
            }
        }
        Ok(())
    }

    /// Seconds of silence before the fade-in.
    pub fn lead_seconds(&self) -> f64 {
        LEAD_SECONDS
    }

    /// The frequency law of the test signal (tables for the run-up and the glide); build
    /// it once and ask it [`Law::tone_at`] many times.
    pub fn law(&self) -> Law {
        Law::new(self)
    }

    /// Signal time (seconds from the first sample) at which the sweep proper starts at f1.
    pub fn sweep_start(&self) -> f64 {
        self.law().start as f64 / f64::from(self.rate)
    }

    /// Sweep time (from [`Sweep::sweep_start`]) at which the tone reaches f2 and stops
    /// rising; the formula holds up to [`FADE_SECONDS`] before it.
    pub fn sweep_end(&self) -> f64 {
        self.law().t_end()
    }

    /// Total length in samples: silence, fade-in, sweep, glide, fade-out, silence; then,
    /// with edge probes, their fade-in, steady tones, fade-out and silence.
    pub fn len(&self) -> usize {
        let tail = (TAIL_SECONDS * f64::from(self.rate)).ceil() as usize;
        let probes = match self
            .edge_rate
            .filter(|&b| Probes::place(self.rate, b).is_some())
        {
            Some(b) => 2 * self.law().nd + Probes::steady_len_for(self.rate, b) + tail,
            None => 0,
        };
        self.plain_len() + probes
    }

    /// Length of the sweep alone (without edge probes), samples.
    fn plain_len(&self) -> usize {
        let law = self.law();
        law.start
            + law.glide_at
            + 2 * law.nd
            + (TAIL_SECONDS * f64::from(self.rate)).ceil() as usize
    }

    /// Always false for a checked sweep (it is at least [`MIN_SECONDS`] long).
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// Instantaneous frequency (Hz) of Farina's formula at sweep time `t`:
    /// `f1 (f2 / f1)^{t / T}`.
    pub fn frequency_at(&self, t: f64) -> f64 {
        self.f1() * (t * self.r() / self.seconds).exp()
    }

    /// Sweep time at which Farina's formula reaches `f`: `T ln(f / f1) / R`.
    pub fn time_of(&self, f: f64) -> f64 {
        self.seconds * (f / self.f1()).ln() / self.r()
    }

    /// The whole test signal at [`Sweep::rate`], in `f64`.
    pub fn samples(&self) -> Result<Vec<f64>> {
        self.check()?;
        let law = self.law();
        self.samples_with(&law)
    }

    fn samples_with(&self, law: &Law) -> Result<Vec<f64>> {
        let a = self.amplitude();
        let mut x = vec![0.0; self.plain_len()];
        let (start, nd, g) = (law.start, law.nd, law.glide_at);
        let rate = f64::from(self.rate);
        // Run-up with fade-in.
        for j in 0..nd {
            x[start - nd + j] = a * law.step[j] * law.in_phi[j].sin();
        }
        // Farina's formula.
        let two_pi = 2.0 * core::f64::consts::PI;
        let c = two_pi * self.f1() * self.seconds / self.r();
        let k = self.r() / self.seconds;
        for i in 0..g {
            let t = i as f64 / rate;
            x[start + i] = a * (c * (t * k).exp_m1()).sin();
        }
        // Glide to f2.
        for j in 0..nd {
            x[start + g + j] = a * (law.phi_g + law.out_phi[j]).sin();
        }
        // Fade-out at f2.
        let phi_end = law.phi_g + law.out_phi[nd];
        for j in 0..nd {
            let env = 1.0 - law.step[j];
            let ph = phi_end + two_pi * law.f_end * j as f64 / rate;
            x[start + g + nd + j] = a * env * ph.sin();
        }
        if let Some(p) = self.probes() {
            x.extend(p.samples(&law.step));
            x.resize(self.len(), 0.0);
        }
        Ok(x)
    }

    /// The frequency the glide ends on (f2 within a fraction of a hertz), Hz.
    pub fn end_frequency(&self) -> f64 {
        self.law().f_end
    }
}

/// The frequency law of a [`Sweep`]'s test signal: run-up, formula, glide, fade-out.
#[derive(Debug, Clone)]
pub struct Law {
    rate: f64,
    /// Sample index where the formula starts (t = 0).
    start: usize,
    /// Samples in the run-up, the glide and the fade-out each.
    nd: usize,
    /// Samples of the formula before the glide starts.
    glide_at: usize,
    /// The smooth step at each sample of a run-up (0 to 1).
    step: Vec<f64>,
    /// Frequency and phase of the run-up at its samples (phase 0 at t = 0).
    in_f: Vec<f64>,
    in_phi: Vec<f64>,
    /// Frequency and phase (relative to the glide's start) at the glide's samples, `nd + 1`.
    out_f: Vec<f64>,
    out_phi: Vec<f64>,
    phi_g: f64,
    #[allow(dead_code)]
    f_g: f64,
    f_end: f64,
    f1: f64,
    k: f64,
}

/// Cumulative trapezoid integral of `v` with spacing `h` (first value 0).
fn cumulative(v: &[f64], h: f64) -> Vec<f64> {
    let mut out = Vec::with_capacity(v.len());
    let mut acc = 0.0;
    out.push(0.0);
    for p in v.windows(2) {
        acc += 0.5 * h * (p[0] + p[1]);
        out.push(acc);
    }
    out
}

impl Law {
    fn new(s: &Sweep) -> Self {
        let rate = f64::from(s.rate.max(1));
        let nd = ((FADE_SECONDS * rate).round() as usize).max(2);
        let start = (LEAD_SECONDS * rate).round() as usize + nd;
        let (f1, k) = (s.f1(), s.r() / s.seconds);
        let q = SUBSTEPS;
        let nodes = nd * q + 1;
        let h = 1.0 / (rate * q as f64);
        let d = nd as f64 / rate;
        // Smooth step: running integral of a Kaiser window over [0, d].
        let beta = FADE_BETA;
        let i0b = bessel_i0(beta);
        let w: Vec<f64> = (0..nodes)
            .map(|j| {
                let r = 2.0 * j as f64 / (nodes - 1) as f64 - 1.0;
                bessel_i0(beta * (1.0 - r * r).max(0.0).sqrt()) / i0b
            })
            .collect();
        let mut step = cumulative(&w, h);
        let total = step[nodes - 1].max(f64::MIN_POSITIVE);
        for v in &mut step {
            *v /= total;
        }
        // Glide: rate = k f_g e^{k x} (1 - S(x / d)); f = f_g (1 + k J(x)).
        let g_rate: Vec<f64> = (0..nodes)
            .map(|j| (k * j as f64 * h).exp() * (1.0 - step[j]))
            .collect();
        let jx = cumulative(&g_rate, h);
        let gain_end = 1.0 + k * jx[nodes - 1];
        let t_g_exact = ((s.f2() / (f1 * gain_end)).ln() / k).max(0.0);
        let glide_at = (t_g_exact * rate).floor() as usize;
        let t_g = glide_at as f64 / rate;
        let f_g = f1 * (k * t_g).exp();
        let two_pi = 2.0 * core::f64::consts::PI;
        let phi_g = two_pi * f1 / k * (k * t_g).exp_m1();
        let out_f_fine: Vec<f64> = jx.iter().map(|&j| f_g * (1.0 + k * j)).collect();
        let out_phi_fine: Vec<f64> = cumulative(&out_f_fine, h)
            .iter()
            .map(|p| two_pi * p)
            .collect();
        let f_end = out_f_fine[nodes - 1];
        // Run-up over t in [-d, 0]: rate = k f1 e^{k t} S((t + d) / d), f(0) = f1, phase(0) = 0.
        let in_rate: Vec<f64> = (0..nodes)
            .map(|j| k * f1 * (k * (j as f64 * h - d)).exp() * step[j])
            .collect();
        let ci = cumulative(&in_rate, h);
        let in_f_fine: Vec<f64> = ci.iter().map(|&c| f1 - (ci[nodes - 1] - c)).collect();
        let cf = cumulative(&in_f_fine, h);
        let in_phi_fine: Vec<f64> = cf.iter().map(|&c| -two_pi * (cf[nodes - 1] - c)).collect();
        let every = |v: &[f64]| v.iter().step_by(q).copied().collect::<Vec<f64>>();
        Self {
            rate,
            start,
            nd,
            glide_at,
            step: every(&step),
            in_f: every(&in_f_fine),
            in_phi: every(&in_phi_fine),
            out_f: every(&out_f_fine),
            out_phi: every(&out_phi_fine),
            phi_g,
            f_g,
            f_end,
            f1,
            k,
        }
    }

    /// Signal time (seconds from the first sample) of the start of the run-up and of the
    /// end of the fade-out: the tone is present between them.
    pub fn tone_span(&self) -> (f64, f64) {
        let n0 = self.start as f64 - self.nd as f64;
        let n1 = (self.start + self.glide_at + 2 * self.nd) as f64;
        (n0 / self.rate, n1 / self.rate)
    }

    /// Sweep time at which the glide ends.
    fn t_end(&self) -> f64 {
        (self.glide_at + self.nd) as f64 / self.rate
    }

    /// Instantaneous frequency (Hz) of the test signal at signal time `s` (seconds from the
    /// first sample), run-up and glide included, or `None` in the silences.
    pub fn tone_at(&self, s: f64) -> Option<f64> {
        let n = s * self.rate - self.start as f64; // samples from t = 0
        let nd = self.nd as f64;
        let g = self.glide_at as f64;
        let interp = |v: &[f64], u: f64| {
            let i = (u.floor().max(0.0) as usize).min(v.len() - 2);
            let frac = (u - i as f64).clamp(0.0, 1.0);
            v[i] * (1.0 - frac) + v[i + 1] * frac
        };
        if n < -nd || n > g + 2.0 * nd {
            None
        } else if n < 0.0 {
            Some(interp(&self.in_f, n + nd))
        } else if n <= g {
            Some(self.f1 * (self.k * n / self.rate).exp())
        } else if n <= g + nd {
            Some(interp(&self.out_f, n - g))
        } else {
            Some(self.f_end)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn farina_times_match_published_check_values() {
        // t(f) = T ln(f / f1) / ln(f2 / f1), f1 = 20 Hz, f2 = 20 kHz, T = 10 s: 2.329900 s,
        // 5.663233 s, 8.996567 s (Farina, AES 108th Convention 2000; ../shared/CHECKS.md,
        // scipy.signal.chirp method='logarithmic' agrees).
        let s = Sweep::new(48_000)
            .start_hz(20.0)
            .end_hz(20_000.0)
            .seconds(10.0);
        for (f, t) in [(100.0, 2.329900), (1000.0, 5.663233), (10_000.0, 8.996567)] {
            assert!((s.time_of(f) - t).abs() < 1e-6, "{f}");
        }
    }

    #[test]
    fn frequency_law_is_continuous_and_ends_on_f2() {
        let s = Sweep::new(44_100).seconds(3.0);
        let law = s.law();
        assert!(s.end_frequency() <= s.f2() && s.f2() - s.end_frequency() < 1.0);
        let s_law = &law;
        // No jumps anywhere: neighbouring samples differ by at most the sweep's top rate.
        let top_rate = s.f2() * s.r() / s.duration() / 44_100.0;
        let mut prev = None;
        for n in 0..s.len() {
            if let Some(f) = s_law.tone_at(n as f64 / 44_100.0) {
                if let Some(p) = prev {
                    assert!(f >= p - 1e-9 && f - p <= 1.01 * top_rate, "{n}: {p} -> {f}");
                }
                prev = Some(f);
            }
        }
        // The run-up starts below f1 by about half the rate at f1 times its duration.
        let dip = s.f1() - law.in_f[0];
        assert!(
            dip > 0.0 && dip < s.f1() * s.r() / s.duration() * FADE_SECONDS,
            "{dip}"
        );
        assert!((law.f_g - s.frequency_at(law.glide_at as f64 / 44_100.0)).abs() < 1e-9);
    }

    #[test]
    fn samples_follow_the_phase_law() {
        // The instantaneous frequency of the generated samples, from the phase advance
        // between neighbours, matches the law (common practice, no source).
        let s = Sweep::new(8_000).seconds(1.0);
        let x = s.samples().unwrap();
        let rate = 8_000.0;
        let a = s.amplitude();
        let law = s.law();
        for n in [900, 2000, 5000, 8000, 9300] {
            let f = law.tone_at(n as f64 / rate).unwrap();
            // For a unit sine sampled at n-1, n, n+1: x[n-1] + x[n+1] = 2 cos(w) x[n].
            if x[n].abs() > 0.3 * a {
                let c = (x[n - 1] + x[n + 1]) / (2.0 * x[n]);
                let est = c.clamp(-1.0, 1.0).acos() * rate / (2.0 * core::f64::consts::PI);
                assert!((est - f).abs() < 0.5, "{n}: {est} vs {f}");
            }
        }
    }

    #[test]
    fn level_fades_and_silences() {
        let s = Sweep::new(48_000).seconds(1.0).level_dbfs(-6.0);
        let x = s.samples().unwrap();
        assert_eq!(x.len(), s.len());
        let peak = x.iter().fold(0.0_f64, |m, v| m.max(v.abs()));
        assert!((peak - s.amplitude()).abs() < 1e-3, "{peak}");
        assert!(peak <= s.amplitude() + 1e-15);
        let lead = (LEAD_SECONDS * 48_000.0) as usize;
        assert!(x[..lead].iter().all(|&v| v == 0.0));
        assert_eq!(*x.last().unwrap(), 0.0);
    }

    #[test]
    fn rejects_bad_parameters() {
        assert!(Sweep::new(48_000).seconds(0.1).check().is_err());
        assert!(Sweep::new(48_000).seconds(f64::NAN).check().is_err());
        assert!(Sweep::new(48_000).level_dbfs(1.0).check().is_err());
        assert!(Sweep::new(48_000).end_hz(30_000.0).check().is_err());
        assert!(Sweep::new(30).check().is_err());
        assert!(Sweep::new(0).samples().is_err());
    }
}
