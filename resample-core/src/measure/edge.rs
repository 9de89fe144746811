//! Steady probe tones across the band edge (the lower Nyquist frequency `fe` of a rate
//! pair), appended to the sweep when the output rate is known, and their analysis.
//!
//! Why: a filter's strongest stopband lobe sits at or just above `fe`, where its response
//! falls by about a decibel per hertz (a 140 dB Kaiser design: -137 dB at `fe`, -131 dB
//! 5 Hz below). A sweep cannot resolve that: in the time a sweep spends near `fe`, a frame
//! or the converter's own impulse response spans tens of hertz of it (the exponential sweep
//! moves about 15 kHz per second there), so the peak is averaged away (an optimistic grade)
//! or the transition band leaks into the stopband frames (a pessimistic one).
//!
//! The probes: one steady multitone at integer frequencies near `fe` (all at one amplitude,
//! phases spread to keep the peak low), faded in and out like the sweep. For each tone at
//! `f` a linear converter's output holds the wanted tone at `f` (if below the output's
//! Nyquist frequency) and images or aliases at `+-f + k A` folded into the output band, all
//! at integer frequencies. One second of the steady output, analysed with one FFT of exactly
//! one second, puts every component on its own bin with no leakage at all (coherent
//! sampling), so each is read at its own level, whatever its neighbours.
//!
//! * Upsampling (`fe` = A/2): tones at `fe - d`; the image of each is at `fe + d`.
//! * Downsampling (`fe` = B/2): tones at `fe + d`, whose aliases land at `fe - d`, and one
//!   partner tone just below `fe` (wanted, in the transition band).
//!
//! `d` runs over [`OFFSETS_HZ`]: 1 to 4 Hz in 1 Hz steps, 6 to 16 Hz in 2 Hz steps, 20 to
//! 200 Hz in 4 Hz steps (fewer where a tone would not fit below the input's Nyquist
//! frequency, or where one of its components would share a bin with another tone's wanted
//! tone or near-edge component). The strongest unwanted bin of the analysis frame counts,
//! and so does the level at `fe` itself.
//!
//! **The level at `fe`**, measured by one more tone at `fe` itself when `fe` is a whole
//! number of hertz (the lower rate even; common practice, no source, for what follows):
//! * Upsampling: the tone is at the input's Nyquist frequency with phase 0, so its input
//!   samples are `a (-1)^n`. Its wanted tone and its first image coincide at `fe` and add
//!   in phase: the output holds a tone at `fe` of amplitude `2 a |H(fe)|` (a brick-wall
//!   interpolator, `|H(fe)| = 1/2`, returns the tone `a cos(pi t)` through the samples).
//! * Downsampling: the tone at `fe` is filtered to `a |H(fe)| cos(2 pi fe t + phi - theta)`
//!   and sampled at `2 fe`, which leaves `a |H(fe)| cos(phi - theta) (-1)^m` on the output's
//!   Nyquist bin, where `theta`, the converter's phase at `fe`, is unknown. So the steady
//!   section holds a second analysed second in which only this tone's phase is turned by a
//!   quarter period (a sudden step, half-way through a gap of [`SETTLE_SECONDS`] either
//!   side, all other tones running on); the two readings are `a |H(fe)|` times the cosine
//!   and the sine of the same angle.
//!
//! Both are exact for a linear time-invariant converter (each component on its own bin).
//! Otherwise (an odd lower rate: the edge on a half hertz) the level at `fe` is estimated
//! by the parabola in dB through the three wanted components nearest below `fe` (in the
//! transition band, 1, 2 and 3 Hz below), continued to `fe` (with fewer than three, by the
//! line between the nearest component below and the nearest above, an image or alias).
//! The response falls ever faster towards the first null past the edge, so the parabola
//! errs high (pessimistic): on our own designs for eight rate pairs at 60 to 180 dB
//! (freqz of the exported taps) it read 0.00 to 0.67 dB above the value at `fe`, and 1.05
//! dB above it for 48k -> 8k at 140 dB in two stages, which the tone at `fe` now measures.
//!
//! Resolution: exact at the probed frequencies (1 Hz bins, no window); between them a
//! lobe peak can fall between two probes, at most 2 Hz from one (4 Hz steps), which costs
//! under 0.15 dB on lobes 80 Hz apart (a 140 dB design with a 720 Hz transition band). The
//! sweep covers the stopband beyond `fe + 200` Hz.

use realfft::RealFftPlanner;

use crate::{Error, Result};

/// Offsets from the band edge of the probe tones, Hz (before fitting; see the module docs).
pub const OFFSETS_HZ: [u32; 56] = [
    1, 2, 3, 4, 6, 8, 10, 12, 14, 16, 20, 24, 28, 32, 36, 40, 44, 48, 52, 56, 60, 64, 68, 72, 76,
    80, 84, 88, 92, 96, 100, 104, 108, 112, 116, 120, 124, 128, 132, 136, 140, 144, 148, 152, 156,
    160, 164, 168, 172, 176, 180, 184, 188, 192, 196, 200,
];

/// Wanted tones just below the edge when downsampling (1, 2 and 3 Hz below): the level at
/// the edge is extrapolated from them.
const PARTNERS: i64 = 3;

/// Seconds of steady tone allowed for a converter to settle before the analysed second,
/// and after it.
pub const SETTLE_SECONDS: f64 = 0.15;

/// Length of the analysed steady stretch, seconds (1 s: 1 Hz bins, every component of an
/// integer-hertz tone on a bin).
pub const ANALYSED_SECONDS: f64 = 1.0;

/// Above this many image families per tone, only the components next to the edge are
/// kept apart (the others of a good converter are far weaker).
const MAX_FAMILIES: u64 = 4096;

/// The probe tones for a rate pair.
#[derive(Debug, Clone, PartialEq)]
pub struct Probes {
    in_rate: u32,
    out_rate: u32,
    /// Tone frequencies (integer Hz, at the input).
    tones: Vec<u32>,
    /// Phases of the tones, radians.
    phases: Vec<f64>,
    /// Amplitude of each tone.
    amplitude: f64,
    /// The tone at the band edge itself (whole hertz), if the edge is a whole number of
    /// hertz and the tone fits (see the module docs).
    edge_tone: Option<u32>,
    /// Phase of the edge tone, radians (in the second analysed second of a downsampling
    /// pair, a quarter period more).
    edge_phase: f64,
}

/// The result of the probe analysis.
#[derive(Debug, Clone, PartialEq)]
pub struct EdgeReport {
    /// The band edge, Hz (the lower Nyquist frequency).
    pub edge_hz: f64,
    /// Number of probe tones.
    pub tones: usize,
    /// Level of each tone, dBFS.
    pub tone_dbfs: f64,
    /// Strongest unwanted component of the analysed second, dB relative to a tone.
    pub worst_db: f64,
    /// Its frequency in the output, Hz.
    pub worst_hz: f64,
    /// The response at the edge, dB relative to a tone: measured by the tone at the edge
    /// ([`EdgeReport::at_edge_measured`]), else interpolated (`None` if the probes do not
    /// straddle the edge).
    pub at_edge_db: Option<f64>,
    /// Whether [`EdgeReport::at_edge_db`] was measured by a tone at the edge itself (exact
    /// for a linear converter) rather than interpolated from its neighbours.
    pub at_edge_measured: bool,
    /// The near-edge stopband components: (distance above the edge of the prototype
    /// frequency, Hz; level dB relative to a tone).
    pub stopband: Vec<(f64, f64)>,
    /// Output time of the analysed second's centre, s.
    pub time_s: f64,
}

/// Fold a frequency (integer Hz) into the band `0..=rate/2` of a signal sampled at `rate`.
fn fold(f: i64, rate: i64) -> i64 {
    let m = f.rem_euclid(rate);
    if 2 * m > rate {
        rate - m
    } else {
        m
    }
}

fn gcd(mut a: u64, mut b: u64) -> u64 {
    while b != 0 {
        (a, b) = (b, a % b);
    }
    a
}

impl Probes {
    /// The probes for converting `in_rate` to `out_rate`, peak level `amplitude` (of the
    /// sum); `None` for equal rates or when no tone fits.
    pub fn new(in_rate: u32, out_rate: u32, amplitude: f64) -> Option<Self> {
        let (edge_tone, tones) = Self::layout(in_rate, out_rate)?;
        // Phases spread quadratically (low crest factor for tones on a regular grid).
        let n = tones.len() as f64;
        let phases: Vec<f64> = (0..tones.len())
            .map(|i| core::f64::consts::PI * (i * i) as f64 / n)
            .collect();
        let mut p = Self {
            in_rate,
            out_rate,
            tones,
            phases,
            amplitude: 1.0,
            edge_tone,
            // Upsampling: phase 0, the whole tone in the input's samples (module docs).
            edge_phase: if out_rate > in_rate {
                0.0
            } else {
                0.25 * core::f64::consts::PI
            },
        };
        // The sum repeats every second: scale its peak over one second to `amplitude`
        // (both seconds, where the edge tone turns between them).
        let turns: &[bool] = if p.two_seconds() {
            &[false, true]
        } else {
            &[false]
        };
        let peak = turns
            .iter()
            .flat_map(|&t| (0..in_rate as usize).map(move |i| (i, t)))
            .map(|(i, t)| p.unit_at(i, t).abs())
            .fold(0.0_f64, f64::max);
        p.amplitude = amplitude / peak.max(f64::MIN_POSITIVE);
        Some(p)
    }

    /// Steady samples between the fades at `in_rate`, for probes placed for `out_rate`:
    /// [`SETTLE_SECONDS`], the analysed second, [`SETTLE_SECONDS`]; with a tone at the
    /// edge of a downsampling pair, twice that (the second analysed second, see the module
    /// docs).
    pub fn steady_len_for(in_rate: u32, out_rate: u32) -> usize {
        let two =
            Self::layout(in_rate, out_rate).is_some_and(|(e, _)| e.is_some() && out_rate < in_rate);
        let seconds = (2.0 * SETTLE_SECONDS + ANALYSED_SECONDS) * if two { 2.0 } else { 1.0 };
        (seconds * f64::from(in_rate)).round() as usize
    }

    /// Whether the steady section holds a second analysed second (a tone at the edge of a
    /// downsampling pair).
    fn two_seconds(&self) -> bool {
        self.edge_tone.is_some() && self.out_rate < self.in_rate
    }

    /// The tone frequencies for a rate pair (see the module docs), or `None`; the tone at
    /// the edge itself is not among them ([`Probes::edge_tone`]).
    pub fn place(in_rate: u32, out_rate: u32) -> Option<Vec<u32>> {
        Self::layout(in_rate, out_rate).map(|(_, tones)| tones)
    }

    /// The tone at the edge, if any, and the other tones for a rate pair, or `None` when
    /// no tone fits.
    fn layout(in_rate: u32, out_rate: u32) -> Option<(Option<u32>, Vec<u32>)> {
        if in_rate == out_rate || in_rate == 0 || out_rate == 0 {
            return None;
        }
        let (a, b) = (i64::from(in_rate), i64::from(out_rate));
        let up = b > a;
        // Twice the edge, so half-hertz edges stay integers.
        let fe2 = a.min(b);
        let families = (b as u64 / gcd(a as u64, b as u64)).min(MAX_FAMILIES) as i64;
        let half = (b / 2) as usize;
        let mut key = vec![false; half + 1];
        let mut comp = vec![false; half + 1];
        let mut tones = Vec::new();
        // Integer tones on each side of the edge: the nearest below is `floor` and above
        // `ceil` of the edge (which may be half-integer).
        let below = |d: i64| (fe2 - 1) / 2 - (d - 1); // d = 1: the integer just below fe
        let above = |d: i64| fe2 / 2 + 1 + (d - 1); // d = 1: the integer just above fe
        let mut candidates: Vec<i64> = Vec::new();
        // The tone at the edge first, when the edge is a whole number of hertz.
        let edge_tone = (fe2 % 2 == 0).then_some(fe2 / 2);
        candidates.extend(edge_tone);
        if up {
            candidates.extend(OFFSETS_HZ.iter().map(|&d| below(i64::from(d))));
        } else {
            // Three partners just below the edge, then the stopband tones from the fourth
            // offset on (the first three would alias onto the partners' bins).
            candidates.extend((1..=PARTNERS).map(below));
            candidates.extend(
                OFFSETS_HZ
                    .iter()
                    .filter(|&&d| i64::from(d) > PARTNERS)
                    .map(|&d| above(i64::from(d))),
            );
        }
        let mut placed_edge = None;
        for f in candidates {
            let at_edge = Some(f) == edge_tone;
            // Strictly between 0 Hz and the input's Nyquist frequency (the edge tone of
            // an upsampling pair: at it).
            if f <= 0 || 2 * f > a || (2 * f == a && !at_edge) {
                continue;
            }
            let wanted = (2 * f < b).then_some(f);
            let near = if up { a - f } else { b - f };
            let mut keys: Vec<i64> = wanted.into_iter().collect();
            if at_edge {
                // Its one output component: at the edge (upsampling) or on the output's
                // Nyquist bin (downsampling).
                keys = vec![fold(f, b)];
            } else if 2 * f > fe2 || up {
                keys.push(fold(near, b));
            }
            let comps: Vec<i64> = if families <= MAX_FAMILIES as i64 {
                (0..families)
                    .flat_map(|k| [fold(f + k * a, b), fold(-f + k * a, b)])
                    .collect()
            } else {
                keys.clone()
            };
            let clash = keys.iter().any(|&k| comp[k as usize] || key[k as usize])
                || comps.iter().any(|&c| key[c as usize]);
            if clash {
                continue;
            }
            for &k in &keys {
                key[k as usize] = true;
            }
            for &c in &comps {
                comp[c as usize] = true;
            }
            if at_edge {
                placed_edge = Some(f as u32);
            } else {
                tones.push(f as u32);
            }
        }
        (!tones.is_empty()).then_some((placed_edge, tones))
    }

    /// The tone at the band edge itself, Hz, if the probes carry one (see the module docs).
    pub fn edge_tone(&self) -> Option<u32> {
        self.edge_tone
    }

    /// How far from the edge the tones reach, Hz (the largest distance of a tone from it).
    /// Up to the last of [`OFFSETS_HZ`] (200 Hz) for most pairs; a pair of whole rates with
    /// a small common divisor (e.g. 47988 -> 8000 Hz, divisor 4) leaves room for a few
    /// tones only, because each tone's images then fall on every bin of its residue
    /// classes. The sweep's frames next to the edge, which read the transition band too,
    /// count where the tones do not reach.
    pub fn reach_hz(&self) -> f64 {
        let edge = self.edge_hz();
        self.tones
            .iter()
            .map(|&f| (f64::from(f) - edge).abs())
            .fold(0.0, f64::max)
    }

    /// The tones' frequencies, Hz.
    pub fn tones(&self) -> &[u32] {
        &self.tones
    }

    /// Amplitude of each tone.
    pub fn amplitude(&self) -> f64 {
        self.amplitude
    }

    /// The output rate the probes were placed for.
    pub fn out_rate(&self) -> u32 {
        self.out_rate
    }

    /// The band edge, Hz.
    pub fn edge_hz(&self) -> f64 {
        f64::from(self.in_rate.min(self.out_rate)) / 2.0
    }

    /// The unscaled sum of the tones at input sample `i` (counted from any whole second);
    /// with `turned`, the edge tone a quarter period on.
    fn unit_at(&self, i: usize, turned: bool) -> f64 {
        let a = u64::from(self.in_rate);
        let two_pi = 2.0 * core::f64::consts::PI;
        let tone = |f: u32, ph: f64| {
            // Reduce f i mod A exactly, so the phase stays accurate for any i.
            let cyc = (u64::from(f) * (i as u64 % a)) % a;
            (two_pi * cyc as f64 / a as f64 + ph).cos()
        };
        let quarter = if turned {
            0.5 * core::f64::consts::PI
        } else {
            0.0
        };
        let edge = self
            .edge_tone
            .map_or(0.0, |f| tone(f, self.edge_phase + quarter));
        self.tones
            .iter()
            .zip(&self.phases)
            .map(|(&f, &ph)| tone(f, ph))
            .sum::<f64>()
            + edge
    }

    /// Steady samples between the fades, at the input rate.
    pub fn steady_len(&self) -> usize {
        Self::steady_len_for(self.in_rate, self.out_rate)
    }

    /// Steady sample (counted from the end of the fade-in) at which the edge tone turns:
    /// half-way between the two analysed seconds.
    fn turn_at(&self) -> usize {
        ((2.0 * SETTLE_SECONDS + ANALYSED_SECONDS) * f64::from(self.in_rate)).round() as usize
    }

    /// The probe section: fade-in (`step`, rising 0 to 1), steady tones, fade-out.
    pub(crate) fn samples(&self, step: &[f64]) -> Vec<f64> {
        let nd = step.len();
        let steady = self.steady_len();
        let mut x = Vec::with_capacity(2 * nd + steady);
        for (i, s) in step.iter().enumerate() {
            x.push(self.amplitude * s * self.unit_at(i, false));
        }
        let turn = if self.two_seconds() {
            self.turn_at()
        } else {
            usize::MAX
        };
        for (j, i) in (nd..nd + steady).enumerate() {
            x.push(self.amplitude * self.unit_at(i, j >= turn));
        }
        let turned = self.two_seconds();
        for (j, s) in step.iter().enumerate() {
            x.push(self.amplitude * (1.0 - s) * self.unit_at(nd + steady + j, turned));
        }
        x
    }

    /// Analyse the probe section of output `y`: the section starts at input time
    /// `start_s` (seconds, its fade-in included, which lasts `fade_s`), the converter's
    /// latency is `latency` output samples.
    pub(crate) fn analyse(
        &self,
        y: &[f64],
        start_s: f64,
        fade_s: f64,
        latency: f64,
    ) -> Result<EdgeReport> {
        let b = self.out_rate as usize;
        let rate = f64::from(self.out_rate);
        let from = ((start_s + fade_s + SETTLE_SECONDS) * rate + latency).round();
        let n = (ANALYSED_SECONDS * rate).round() as usize;
        // The second analysed second (downsampling with a tone at the edge): one analysed
        // second and two settling stretches later.
        let second = self
            .two_seconds()
            .then(|| ((2.0 * SETTLE_SECONDS + ANALYSED_SECONDS) * rate).round() as usize);
        let needs = from.max(0.0) as usize + second.unwrap_or(0) + n;
        if from < 0.0 || needs > y.len() {
            return Err(Error::MeasureSetup {
                problem: format!(
                    "the output ends before the edge probes do (needs {needs} samples, has {})",
                    y.len()
                ),
            });
        }
        let from = from as usize;
        let mut planner = RealFftPlanner::<f64>::new();
        let fft = planner.plan_fft_forward(n);
        let spectrum = |at: usize| {
            let mut buf = y[at..at + n].to_vec();
            let mut spec = fft.make_output_vec();
            fft.process(&mut buf, &mut spec)
                .map_err(|e| Error::MeasureSetup {
                    problem: format!("FFT failed: {e}"),
                })?;
            Ok::<_, Error>(spec)
        };
        let spec = spectrum(from)?;
        // Amplitude of the sinusoid on bin k (1 Hz bins: b == n), relative to a tone; on
        // the bins at 0 Hz and at the Nyquist frequency a sinusoid's whole amplitude is on
        // the one bin (common practice, no source).
        let whole = |k: usize| k == 0 || 2 * k == n;
        let amp = |k: usize, v: f64| if whole(k) { v } else { 2.0 * v } / n as f64;
        let db = |amp: f64| 20.0 * (amp / self.amplitude).max(1e-30).log10();
        let level = |k: usize| db(amp(k, spec[k].norm()));
        let half = b / 2;
        let mut wanted = vec![false; half + 1];
        for &f in &self.tones {
            if 2 * f < self.out_rate {
                wanted[f as usize] = true;
            }
        }
        // The edge tone's bin is read below, exactly, as the level at the edge.
        let edge_bin = self
            .edge_tone
            .map(|f| fold(i64::from(f), b as i64) as usize);
        if let Some(k) = edge_bin {
            wanted[k] = true;
        }
        let at_edge_measured = match (self.edge_tone, edge_bin) {
            (Some(_), Some(k)) => match second {
                // Downsampling: a |H| cos and a |H| sin of one angle on the Nyquist bin.
                Some(later) => {
                    let turned = spectrum(from + later)?;
                    Some(db(spec[k].norm().hypot(turned[k].norm()) / n as f64))
                }
                // Upsampling: 2 a |H| at the edge.
                None => Some(db(0.5 * amp(k, spec[k].norm()))),
            },
            _ => None,
        };
        let (mut worst_db, mut worst_k) = (f64::NEG_INFINITY, 0usize);
        for (k, &w) in wanted.iter().enumerate().take(spec.len().min(half + 1)) {
            if !w {
                let v = level(k);
                if v > worst_db {
                    (worst_db, worst_k) = (v, k);
                }
            }
        }
        // The near-edge components and the edge itself.
        let (a, bi) = (i64::from(self.in_rate), i64::from(self.out_rate));
        let edge = self.edge_hz();
        let up = bi > a;
        let mut stopband = Vec::new();
        let mut below: Vec<(f64, f64)> = Vec::new(); // (Hz below the edge, dB)
        for &f in &self.tones {
            let f = i64::from(f);
            let fh = f as f64;
            if up {
                let img = a - f;
                stopband.push((img as f64 - edge, level(fold(img, bi) as usize)));
                below.push((edge - fh, level(f as usize)));
            } else if fh > edge {
                stopband.push((fh - edge, level(fold(bi - f, bi) as usize)));
            } else {
                below.push((edge - fh, level(f as usize)));
            }
        }
        below.sort_by(|p, q| p.0.total_cmp(&q.0));
        let above = stopband.iter().copied().min_by(|p, q| p.0.total_cmp(&q.0));
        // Across the edge: the line between the nearest components on either side.
        let across = match (below.first(), above) {
            (Some(&(d0, v0)), Some((d1, v1))) if d0 + d1 > 0.0 => {
                Some(v0 + (v1 - v0) * d0 / (d0 + d1))
            }
            _ => None,
        };
        // From below: the parabola through the three nearest wanted components, continued
        // to the edge (Lagrange's formula at distance 0).
        let from_below = match below.as_slice() {
            [p0, p1, p2, ..] if p0.0 < p1.0 && p1.0 < p2.0 => {
                let pts = [*p0, *p1, *p2];
                Some(
                    pts.iter()
                        .enumerate()
                        .map(|(i, &(di, vi))| {
                            let w: f64 = pts
                                .iter()
                                .enumerate()
                                .filter(|&(j, _)| j != i)
                                .map(|(_, &(dj, _))| dj / (dj - di))
                                .product();
                            vi * w
                        })
                        .sum(),
                )
            }
            _ => None,
        };
        // The parabola where there are three; it follows the transition band's curve,
        // which the line across bends away from (up to 2.5 dB pessimistic at 48k -> 16k,
        // 160 dB, with the nearest stopband probe 4 Hz above the edge).
        let at_edge_db = at_edge_measured.or(from_below).or(across);
        Ok(EdgeReport {
            edge_hz: edge,
            tones: self.tones.len(),
            tone_dbfs: 20.0 * self.amplitude.log10(),
            worst_db,
            worst_hz: worst_k as f64,
            at_edge_db,
            at_edge_measured: at_edge_measured.is_some(),
            stopband,
            time_s: (from as f64 + n as f64 / 2.0) / rate,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn components_of_different_tones_never_share_a_key_bin() {
        for (a, b) in [
            (44_100, 48_000),
            (48_000, 44_100),
            (96_000, 44_100),
            (32_000, 96_000),
            (48_000, 16_000),
            (11_025, 48_000),
        ] {
            let p = Probes::new(a, b, 0.5).unwrap();
            assert!(p.tones().len() > 30, "{a} -> {b}: {}", p.tones().len());
            // An even lower rate: a tone at the edge itself.
            let even = a.min(b) % 2 == 0;
            assert_eq!(p.edge_tone(), even.then_some(a.min(b) / 2), "{a} -> {b}");
            let edge = p.edge_hz();
            let (ai, bi) = (i64::from(a), i64::from(b));
            let families = bi / gcd(a.into(), b.into()) as i64;
            // Every output component of every tone, and the bins that must stay clear:
            // each tone's wanted bin and its image or alias next to the edge.
            let comps = |f: i64| -> Vec<i64> {
                (0..families)
                    .flat_map(|k| [fold(f + k * ai, bi), fold(-f + k * ai, bi)])
                    .collect()
            };
            for (i, &f) in p.tones().iter().enumerate() {
                let d = (f64::from(f) - edge).abs();
                assert!(d > 0.0 && d <= 200.5, "{a} -> {b}: tone {f}");
                let f = i64::from(f);
                let mut keys = vec![];
                if 2 * f < bi {
                    keys.push(f);
                }
                if f as f64 > edge || bi > ai {
                    keys.push(fold(if bi > ai { ai - f } else { bi - f }, bi));
                }
                for (j, &g) in p.tones().iter().enumerate() {
                    if i != j {
                        let c = comps(i64::from(g));
                        assert!(
                            keys.iter().all(|k| !c.contains(k)),
                            "{a} -> {b}: {f} vs {g}"
                        );
                    }
                }
                // Nor with the edge tone, whose one key is its own fold.
                if let Some(e) = p.edge_tone().map(i64::from) {
                    assert!(
                        keys.iter().all(|k| !comps(e).contains(k)),
                        "{a} -> {b}: {f}"
                    );
                    assert!(
                        !comps(f).contains(&fold(e, bi)),
                        "{a} -> {b}: {f} on the edge"
                    );
                }
            }
            // The sum's peak is the requested amplitude.
            let peak = [false, b < a]
                .iter()
                .flat_map(|&t| (0..a as usize).map(move |i| (i, t)))
                .map(|(i, t)| (p.amplitude() * p.unit_at(i, t)).abs())
                .fold(0.0, f64::max);
            assert!((peak - 0.5).abs() < 1e-12);
        }
        assert!(Probes::new(48_000, 48_000, 0.5).is_none());
        // An odd lower rate puts the edge on a half hertz: no tone there, one second.
        let odd = Probes::new(11_025, 48_000, 0.5).unwrap();
        assert_eq!(odd.edge_tone(), None);
        assert_eq!(odd.steady_len(), (1.3 * 11_025.0_f64).round() as usize);
        assert_eq!(Probes::steady_len_for(48_000, 44_100), 2 * 62_400);
        // The tones reach the last offset, except where a small common divisor of the
        // rates leaves room for few (47988 -> 8000 Hz: divisor 4).
        assert_eq!(Probes::new(48_000, 8_000, 0.5).unwrap().reach_hz(), 200.0);
        assert!(Probes::new(47_988, 8_000, 0.5).unwrap().reach_hz() < 10.0);
    }

    /// The probe section through `filter` (taps at the higher rate), zero-stuffed by 2 or
    /// decimated by 2 around it, analysed.
    fn through_half_band(a: u32, b: u32, taps: &[f64]) -> EdgeReport {
        let p = Probes::new(a, b, 0.5).unwrap();
        let nd = a as usize / 20;
        let step: Vec<f64> = (0..nd).map(|i| i as f64 / nd as f64).collect();
        let x = p.samples(&step);
        let up = b > a;
        let stuffed: Vec<f64> = if up {
            x.iter().flat_map(|&v| [2.0 * v, 0.0]).collect()
        } else {
            x
        };
        let mut y: Vec<f64> = (0..stuffed.len())
            .map(|i| {
                taps.iter()
                    .enumerate()
                    .filter(|&(k, _)| k <= i)
                    .map(|(k, &h)| h * stuffed[i - k])
                    .sum()
            })
            .collect();
        if !up {
            y = y.into_iter().step_by(2).collect();
        }
        // The filters' delay: one sample of the higher rate.
        let latency = if up { 1.0 } else { 0.5 };
        p.analyse(&y, 0.0, nd as f64 / f64::from(a), latency)
            .unwrap()
    }

    #[test]
    fn the_tone_at_the_edge_reads_the_response_there() {
        // [1/4, 1/2, 1/4] has the response cos^2(pi f / fs) (common practice, no source):
        // at a quarter of its rate, where a 2:1 pair's edge lies, exactly 1/2 (-6.02 dB).
        let want = 20.0 * 0.5_f64.log10();
        for (a, b) in [(48_000, 24_000), (24_000, 48_000)] {
            let r = through_half_band(a, b, &[0.25, 0.5, 0.25]);
            assert!(r.at_edge_measured, "{a} -> {b}");
            let got = r.at_edge_db.unwrap();
            assert!(
                (got - want).abs() < 1e-9,
                "{a} -> {b}: {got} dB, want {want} dB"
            );
        }
    }

    #[test]
    fn a_pure_gain_shows_nothing_unwanted_and_an_ideal_edge() {
        // Identity "converter" at the same rate has no edge; a 2x upsampler by an ideal
        // band-limited interpolation would need the whole signal, so check the analysis
        // itself: the probe section passed through unchanged at a same-rate copy keeps
        // every tone on its bin and nothing else.
        let p = Probes::new(48_000, 44_100, 0.5).unwrap();
        let step: Vec<f64> = (0..2400).map(|i| i as f64 / 2400.0).collect();
        let x = p.samples(&step);
        // Analyse the input itself as if it were the output at the input rate.
        let same = Probes {
            out_rate: 48_000,
            ..p.clone()
        };
        let r = same.analyse(&x, 0.0, 0.05, 0.0).unwrap();
        assert!(r.worst_db < -250.0, "{}", r.worst_db);
    }
}
