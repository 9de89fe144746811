//! Measuring what a converter delivers, from its output alone: an exponential sweep goes
//! in, the output is analysed, and the numbers come out (feature `measure`).
//!
//! * [`Sweep`]: the test signal (Farina's exponential sweep, short fades, silence around).
//! * [`measure_converter`]: run any converter (a closure from input samples at rate A to
//!   output samples at rate B) on the sweep and analyse its output.
//! * [`analyse`]: the same for an output obtained elsewhere (a file another program made).
//!
//! The metrics ([`Measurement`]):
//!
//! * **rejection**: level of the wanted tone in the passband (at 997 Hz, the reference
//!   frequency of AES17) minus the strongest unwanted component anywhere in the output, in
//!   dB, worst case over the whole sweep. In each STFT frame the wanted tone is known from
//!   the sweep's formula and the measured latency; everything outside a guard band around it
//!   is unwanted, and so is everything in a frame where the tone is above the output's
//!   Nyquist frequency. When the output rate is the higher one, the output above the input's
//!   Nyquist frequency holds nothing but images; it is split off on the whole-signal spectrum
//!   and searched without a guard band, so images right above the input's Nyquist frequency
//!   (where a filter's stopband starts) are measured too. When the sweep carries edge probes
//!   ([`Sweep::edge_probes`], see [`edge`]), steady tones across the lower Nyquist frequency
//!   measure the stopband there to the hertz, each image or alias on its own bin of a
//!   one-second FFT, and the level at the edge itself is read from a tone there (a second
//!   analysed second when downsampling; interpolated from the nearest components when the
//!   edge falls on a half hertz); the worst of sweep and probes counts. Without probes the edge
//!   is only as sharp as the sweep (tens of hertz at its top, several dB either way).
//! * **passband ripple**: peak-to-peak spread of the converter's measured response from
//!   twice the sweep's start frequency up to the passband edge.
//! * **-0.1 dB and -3 dB bandwidth**: where that response first falls 0.1 dB and 3 dB below
//!   its level at the reference frequency.
//! * **latency**: by whitened cross-correlation of output with input, in output samples and
//!   milliseconds: the centre of the band-limited impulse response's main lobe.
//!
//! ```
//! use resample_core::measure::{measure_converter, Settings, Sweep};
//! // A "converter" from 8 kHz to 8 kHz that only scales by a half: no unwanted output.
//! let sweep = Sweep::new(8_000).seconds(1.0);
//! let m = measure_converter(&sweep, 8_000, &Settings::default(), |x| {
//!     x.iter().map(|v| 0.5 * v).collect()
//! })?;
//! assert!(m.rejection_db > 180.0);
//! assert!(m.passband_ripple_db < 1e-6);
//! assert!(m.latency_samples.abs() < 1e-6);
//! # Ok::<(), resample_core::Error>(())
//! ```

mod baseline;
pub mod edge;
mod stft;
mod sweep;
mod transfer;

use realfft::RealFftPlanner;

pub use baseline::Baseline;
pub use edge::{EdgeReport, Probes};
pub use stft::{strongest_band, Analyser, ANALYSIS_BETA, OVERLAP};
pub use sweep::{
    Law, Sweep, DEFAULT_END_FRACTION, DEFAULT_LEVEL_DBFS, DEFAULT_SECONDS, DEFAULT_START_HZ,
    FADE_BETA, FADE_SECONDS, LEAD_SECONDS, MAX_SECONDS, MIN_LEVEL_DBFS, MIN_SECONDS, TAIL_SECONDS,
};
pub use transfer::Transfer;

use crate::{Error, Result};

/// Reference frequency for the wanted tone's level, Hz (AES17's 997 Hz).
pub const REFERENCE_HZ: f64 = 997.0;

/// Levels are floored here, dBFS (a frame of digital silence).
pub const FLOOR_DBFS: f64 = -400.0;

/// The passband ripple a request for `stopband_db` of attenuation allows, dB peak to peak:
/// `20 log10((1 + 2 d) / (1 - 2 d))`, `d = 10^(-A / 20)`.
///
/// A Kaiser-windowed sinc deviates about equally in passband and stopband (J. F. Kaiser,
/// ISCAS 1974; Oppenheim & Schafer, Discrete-Time Signal Processing, sec. 7.5, from memory);
/// the factor 2 covers the approximation in Kaiser's formulas. A converter whose passband
/// deviates more than this from flat has a fault that its stopband figure does not show.
pub fn ripple_limit_db(stopband_db: f64) -> f64 {
    crate::filter::response::ripple_allowance_db(stopband_db)
}

/// What to measure beyond the defaults.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Settings {
    /// Passband edge for the ripple, Hz; default 0.91 of the lower Nyquist frequency.
    pub passband_edge_hz: Option<f64>,
    /// Keep every frame's spectrum (for plots).
    pub keep_spectrogram: bool,
}

/// One analysis frame.
#[derive(Debug, Clone, Copy, PartialEq)]
#[non_exhaustive]
pub struct Frame {
    /// Output time of the frame's centre, seconds.
    pub time_s: f64,
    /// Lowest and highest frequency of the wanted tone during the frame (Hz), if it is
    /// present below the output's Nyquist frequency.
    pub wanted_hz: Option<(f64, f64)>,
    /// Level of the wanted tone (power inside its guard band), dBFS.
    pub wanted_dbfs: f64,
    /// Strongest unwanted component, dBFS.
    pub unwanted_dbfs: f64,
    /// Its frequency, Hz.
    pub unwanted_hz: f64,
    /// The sweep's frequency at the input at the frame's centre, Hz: the input frequency
    /// that caused what the frame holds (`None` for frames outside the sweep's steady part:
    /// silence and the fades, where the tone is fading in or out, and for the probes' frame).
    pub tone_hz: Option<f64>,
    /// True when the frame's stopband was left to the edge probes (its strongest unwanted
    /// component is not counted, and `unwanted_dbfs` is the floor).
    pub left_to_probes: bool,
}

/// Every frame's bin levels in dBFS, for pictures.
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub struct Spectrogram {
    /// Bin spacing, Hz.
    pub bin_hz: f64,
    /// Hop between frames, seconds.
    pub hop_s: f64,
    /// Per frame, per bin (0 Hz to Nyquist), dBFS.
    pub levels_dbfs: Vec<Vec<f32>>,
}

/// One point of [`Measurement::unwanted_by_tone`]: the strongest unwanted component an
/// input tone caused.
///
/// With [`Measurement::response_curve`] (passband and transition band), the points at
/// [`Unwanted::filter_hz`] are the converter's magnitude response down to its stopband
/// floor, read from its output alone.
#[derive(Debug, Clone, Copy, PartialEq)]
#[non_exhaustive]
pub struct Unwanted {
    /// The input tone, Hz.
    pub tone_hz: f64,
    /// The strongest unwanted component while it played, dB relative to the wanted tone at
    /// the reference frequency.
    pub level_db: f64,
    /// Where the converter's low-pass filter let it through, Hz
    /// ([`Measurement::filter_hz_of`]; exact for the probes).
    pub filter_hz: f64,
    /// True for a point of the edge probes, false for a frame of the sweep.
    pub from_probe: bool,
}

/// The result of a measurement.
#[derive(Debug, Clone)]
#[non_exhaustive]
pub struct Measurement {
    /// Input (sweep) rate, Hz.
    pub in_rate: u32,
    /// Output rate, Hz.
    pub out_rate: u32,
    /// Wanted tone at [`REFERENCE_HZ`] minus the strongest unwanted component, dB.
    pub rejection_db: f64,
    /// Level of the wanted tone at the reference frequency, dBFS.
    pub reference_dbfs: f64,
    /// The reference frequency, Hz ([`REFERENCE_HZ`] unless outside the passband).
    pub reference_hz: f64,
    /// The converter's gain at the reference frequency, dB.
    pub reference_gain_db: f64,
    /// The frame holding the strongest unwanted component.
    pub worst: Frame,
    /// Passband ripple, dB peak to peak.
    pub passband_ripple_db: f64,
    /// Upper end of the band the ripple was measured over, Hz.
    pub passband_edge_hz: f64,
    /// Where the response falls 0.1 dB below its reference level, Hz (`None`: not inside
    /// the swept band).
    pub bandwidth_0_1db_hz: Option<f64>,
    /// Where the response falls 3 dB below its reference level, Hz.
    pub bandwidth_3db_hz: Option<f64>,
    /// Latency, output samples.
    pub latency_samples: f64,
    /// Latency, milliseconds.
    pub latency_ms: f64,
    /// Every analysis frame.
    pub frames: Vec<Frame>,
    /// The measured linear response.
    pub transfer: Transfer,
    /// Bin levels of every frame, when [`Settings::keep_spectrogram`] was set.
    pub spectrogram: Option<Spectrogram>,
    /// What the edge probes found, when the sweep carried them ([`Sweep::edge_probes`]).
    pub edge: Option<EdgeReport>,
}

impl Measurement {
    /// The strongest unwanted component against the input frequency that caused it, sorted
    /// by that frequency: one point per analysis frame that holds the sweep
    /// ([`Frame::tone_hz`]; frames left to the edge probes are skipped), then, when the
    /// sweep carried edge probes, one per probe tone: the level of its image (upsampling)
    /// or alias (downsampling) next to the band edge ([`EdgeReport::stopband`]). The worst
    /// point is [`Measurement::rejection_db`] below 0 dB, unless the level interpolated at
    /// the edge itself counted ([`EdgeReport::at_edge_db`]), which lies between points.
    pub fn unwanted_by_tone(&self) -> Vec<Unwanted> {
        let mut pts: Vec<Unwanted> = self
            .frames
            .iter()
            .filter(|f| !f.left_to_probes)
            .filter_map(|f| {
                f.tone_hz.map(|hz| Unwanted {
                    tone_hz: hz,
                    level_db: f.unwanted_dbfs - self.reference_dbfs,
                    filter_hz: self.filter_hz_of(hz),
                    from_probe: false,
                })
            })
            .collect();
        if let Some(e) = &self.edge {
            let up = self.out_rate > self.in_rate;
            for &(d, db) in &e.stopband {
                let tone = if up { e.edge_hz - d } else { e.edge_hz + d };
                pts.push(Unwanted {
                    tone_hz: tone,
                    // Probe levels are relative to one probe tone at the sweep's level.
                    level_db: db - self.reference_gain_db,
                    filter_hz: e.edge_hz + d,
                    from_probe: true,
                });
            }
        }
        pts.sort_by(|a, b| a.tone_hz.total_cmp(&b.tone_hz));
        pts
    }

    /// Where a linear converter's low-pass filter (at the up-sampled rate) let an unwanted
    /// component of the input tone `tone_hz` through, Hz, when that component is the first
    /// image or alias (usually the strongest): the tone itself above the lower Nyquist
    /// frequency (its alias), else its first image at `in_rate - tone_hz`.
    pub fn filter_hz_of(&self, tone_hz: f64) -> f64 {
        let lower_nyq = f64::from(self.in_rate.min(self.out_rate)) / 2.0;
        if tone_hz > lower_nyq {
            tone_hz
        } else {
            f64::from(self.in_rate) - tone_hz
        }
    }

    /// The measured response on `points` log-spaced frequencies over the swept band:
    /// `(Hz, dB relative to the reference frequency)`.
    pub fn response_curve(&self, points: usize) -> Vec<(f64, f64)> {
        let (lo, hi) = self.transfer.band();
        let gain0 = self.reference_gain_db;
        let points = points.max(2);
        let ratio = (hi / lo).ln() / points as f64;
        (0..points)
            .filter_map(|i| {
                let a = lo * (ratio * i as f64).exp();
                let b = lo * (ratio * (i + 1) as f64).exp();
                let mut sum = 0.0;
                let mut n = 0.0;
                for (_, v) in self.transfer.smoothed_db(a, b) {
                    sum += 10f64.powf(v / 10.0);
                    n += 1.0;
                }
                (n > 0.0).then(|| ((a * b).sqrt(), 10.0 * (sum / n).max(1e-300).log10() - gain0))
            })
            .collect()
    }
}

/// Run `convert` on `sweep` (rate A) and measure its output (rate `out_rate`).
///
/// `convert` gets the whole test signal and returns the whole output; any delay it adds is
/// measured, not assumed.
pub fn measure_converter<F>(
    sweep: &Sweep,
    out_rate: u32,
    settings: &Settings,
    convert: F,
) -> Result<Measurement>
where
    F: FnOnce(&[f64]) -> Vec<f64>,
{
    let x = sweep.samples()?;
    let y = convert(&x);
    analyse_with_input(sweep, &x, &y, out_rate, settings)
}

/// Measure `output` (rate `out_rate`), a converter's output of `sweep`.
pub fn analyse(
    sweep: &Sweep,
    output: &[f64],
    out_rate: u32,
    settings: &Settings,
) -> Result<Measurement> {
    let x = sweep.samples()?;
    analyse_with_input(sweep, &x, output, out_rate, settings)
}

/// Analysis frame length for a sweep at an output rate: the Kaiser window (close to a
/// Gaussian of width `sigma = len / (2 sqrt(beta))`) is sized so that the spread of the
/// fastest part of the sweep over the frame equals the window's spread in frequency,
/// `sigma_t = 1 / sqrt(2 pi rate)`, which keeps the guard band narrowest.
pub fn frame_len(sweep: &Sweep, out_rate: u32) -> usize {
    let chirp = sweep.f2() * (sweep.f2() / sweep.f1()).ln() / sweep.duration();
    let sigma_t = 1.0 / (2.0 * core::f64::consts::PI * chirp).sqrt();
    let tw = 2.0 * sigma_t * ANALYSIS_BETA.sqrt();
    let n = (tw * f64::from(out_rate) / 2.0).round() as usize * 2;
    n.clamp(64, 1 << 16)
}

/// How much wider than the window's own spectrum a frame's spectrum is when the tone in it
/// rises at `rate` Hz per second, for a window close to a Gaussian of `sigma_t` seconds.
///
/// A Gaussian-windowed linear chirp has a Gaussian spectrum whose width is the window's
/// times `sqrt(1 + (2 pi rate sigma_t^2)^2)` (the Fourier transform of `exp(-a t^2)` with
/// complex `a`; common practice, no source). The guard band around the wanted tone is
/// widened by this factor, so the skirt of a fast part of the sweep is not read as an
/// unwanted component (at the top of a 10 s sweep it reached -190 dBFS just outside an
/// unwidened guard, the floor of every measurement there).
fn chirp_broadening(rate: f64, sigma_t: f64) -> f64 {
    let x = 2.0 * core::f64::consts::PI * rate * sigma_t * sigma_t;
    (1.0 + x * x).sqrt()
}

fn db(p: f64) -> f64 {
    if p > 0.0 {
        (10.0 * p.log10()).max(FLOOR_DBFS)
    } else {
        FLOOR_DBFS
    }
}

fn analyse_with_input(
    sweep: &Sweep,
    x: &[f64],
    y: &[f64],
    out_rate: u32,
    settings: &Settings,
) -> Result<Measurement> {
    sweep.check()?;
    crate::RatePair::new(sweep.rate(), out_rate)?;
    if let Some(i) = y.iter().position(|v| !v.is_finite()) {
        return Err(Error::MeasureSetup {
            problem: format!("output sample {i} is not a finite number"),
        });
    }
    let in_rate = sweep.rate();
    let (a_hz, b_hz) = (f64::from(in_rate), f64::from(out_rate));
    let lower_nyq = a_hz.min(b_hz) / 2.0;
    let len = frame_len(sweep, out_rate);
    if y.len() < 2 * len {
        return Err(Error::MeasureSetup {
            problem: format!(
                "the output has {} samples; the analysis needs at least {}",
                y.len(),
                2 * len
            ),
        });
    }
    let f_top = sweep.f2().min(0.999 * lower_nyq);
    let lo = 2.0 * sweep.f1();
    let edge = settings
        .passband_edge_hz
        .unwrap_or(crate::limits::DEFAULT_PASSBAND * lower_nyq)
        .min(f_top);
    if edge.is_nan() || edge <= lo {
        return Err(Error::MeasureSetup {
            problem: format!("passband edge {edge} Hz is below the swept band"),
        });
    }
    let probes = sweep.probes();
    if let Some(r) = sweep.edge_rate() {
        if r != out_rate {
            return Err(Error::MeasureSetup {
                problem: format!(
                    "the sweep carries edge probes for {r} Hz, but the output is at {out_rate} Hz"
                ),
            });
        }
    }
    let transfer = transfer::Transfer::measure(x, in_rate, y, out_rate, lo, f_top, edge)?;
    let tau = transfer.latency_samples();
    // With probes, the frames stop short of the probe section (a tenth of a second before
    // its fade-in reaches the output), and in downsampling they leave the stretch of the
    // sweep just above the edge to the probes: there the converter's impulse response and
    // the frame both reach back into the transition band.
    let (frames_end, skip) = match &probes {
        Some(p) => {
            let end = ((sweep.probe_start() - 0.1) * b_hz + tau).floor().max(0.0) as usize;
            let skip = (b_hz < a_hz).then_some((lower_nyq, lower_nyq + p.reach_hz()));
            (end.min(y.len()), skip)
        }
        None => (y.len(), None),
    };
    // Upsampling: everything above the input's Nyquist frequency is an image. With probes,
    // the split is made on the sweep's part alone (the probe tones sit right under the
    // split, and their fades would ring across it).
    let high = if b_hz <= a_hz {
        None
    } else if probes.is_some() {
        Some(transfer::above_cut(&y[..frames_end], out_rate, a_hz / 2.0)?)
    } else {
        Some(transfer.output_above(a_hz / 2.0, y.len())?)
    };
    let f_ref = if REFERENCE_HZ > lo && REFERENCE_HZ < edge {
        REFERENCE_HZ
    } else {
        (lo * edge).sqrt()
    };
    let ref_gain = transfer.mean_db(f_ref, 5.0).unwrap_or(FLOOR_DBFS);
    let reference_dbfs = sweep.level() + ref_gain;
    let passband_ripple_db = transfer.ripple_db(lo, edge);
    let bw01 = transfer.bandwidth(f_ref, ref_gain, 0.1);
    let bw3 = transfer.bandwidth(f_ref, ref_gain, 3.0);

    let an = Analyser::new(len, out_rate)?;
    let bin = an.bin_hz();
    let lobe_bins = an.lobe_bins();
    let lobe_hz = lobe_bins * bin;
    // The fades are shaped by a Kaiser window of beta FADE_BETA: its main lobe, plus a bin.
    let fade_lobe_hz =
        ((1.0 + (sweep::FADE_BETA / core::f64::consts::PI).powi(2)).sqrt() + 1.0) / FADE_SECONDS;
    let nbins = len / 2 + 1;
    let cut = match high {
        Some(_) => ((a_hz / 2.0 / bin).ceil() as usize).min(nbins),
        None => nbins,
    };
    let law = sweep.law();
    let (ts, te) = law.tone_span();
    // The sweep's frequency rises by `f r / T` hertz per second at frequency f (the glide
    // at its end only slows down), and the window is close to a Gaussian of this width.
    let chirp_per_hz = (sweep.f2() / sweep.f1()).ln() / sweep.duration();
    let sigma_t = len as f64 / (2.0 * ANALYSIS_BETA.sqrt() * b_hz);
    let mut planner = RealFftPlanner::new();
    let mut frames = Vec::new();
    let mut levels = Vec::new();
    let mut start = 0usize;
    while start + len <= frames_end {
        let s0 = (start as f64 - tau) / b_hz;
        let s1 = ((start + len - 1) as f64 - tau) / b_hz;
        let p = an.powers(y, start, &mut planner)?;
        let (mut wanted, mut guard, mut span_hz) = (None, None, 0.0);
        let mut left_to_probes = false;
        let mid = 0.5 * (s0 + s1);
        // Frames touching a fade hold a tone that is fading in or out: no steady cause.
        let steady = s0 >= ts + FADE_SECONDS && s1 <= te - FADE_SECONDS;
        let tone_hz = steady.then(|| law.tone_at(mid)).flatten();
        if s1 >= ts && s0 <= te {
            let fa = law.tone_at(s0.max(ts)).unwrap_or(sweep.f1());
            let fb = law.tone_at(s1.min(te)).unwrap_or(sweep.f2());
            if let Some((k0, k1)) = skip {
                left_to_probes = fb > k0 && fa < k1;
            }
            span_hz = fb - fa;
            // A frame that holds part of a fade also holds the fade's spread.
            let in_fade = s0 < ts + FADE_SECONDS || s1 > te - FADE_SECONDS;
            let spread = lobe_hz * chirp_broadening(fb * chirp_per_hz, sigma_t)
                + if in_fade { fade_lobe_hz } else { 0.0 };
            if fa < b_hz / 2.0 {
                wanted = Some((fa, fb));
                let g0 = ((fa - spread) / bin).floor().max(0.0) as usize;
                let g1 = (((fb.min(b_hz / 2.0) + spread) / bin).ceil() as usize).min(nbins - 1);
                guard = Some((g0, g1));
            }
        }
        let width = (span_hz / bin + 2.0 * lobe_bins).ceil() as usize + 1;
        let mut best: (f64, usize) = (0.0, 0);
        let mut wanted_p = 0.0;
        let mut consider = |r: Option<(f64, usize)>| {
            if let Some((v, k)) = r {
                if v > best.0 {
                    best = (v, k);
                }
            }
        };
        match guard {
            Some((g0, g1)) => {
                wanted_p = p[g0..=g1].iter().sum();
                consider(strongest_band(&p, 0, g0.min(cut), width));
                consider(strongest_band(&p, g1 + 1, cut, width));
            }
            None => consider(strongest_band(&p, 0, cut, width)),
        }
        if let Some(h) = &high {
            let ph = an.powers(h, start, &mut planner)?;
            consider(strongest_band(&ph, 0, nbins, width));
        }
        if left_to_probes {
            best = (0.0, 0);
        }
        frames.push(Frame {
            time_s: (start as f64 + len as f64 / 2.0) / b_hz,
            wanted_hz: wanted,
            wanted_dbfs: db(wanted_p),
            unwanted_dbfs: db(best.0),
            unwanted_hz: best.1 as f64 * bin,
            tone_hz,
            left_to_probes,
        });
        if settings.keep_spectrogram {
            levels.push(p.iter().map(|&v| db(v) as f32).collect());
        }
        start += an.hop();
    }
    let mut worst = frames
        .iter()
        .copied()
        .max_by(|a, b| a.unwanted_dbfs.total_cmp(&b.unwanted_dbfs))
        .ok_or_else(|| Error::MeasureSetup {
            problem: "no analysis frame fits in the output".into(),
        })?;
    let edge_report = match &probes {
        Some(p) => {
            let r = p.analyse(y, sweep.probe_start(), FADE_SECONDS, tau)?;
            // Probe levels are relative to one tone; a tone at the sweep's level would put
            // them this much higher.
            let (mut rel, mut hz) = (r.worst_db, r.worst_hz);
            if let Some(e) = r.at_edge_db {
                if e > rel {
                    (rel, hz) = (e, r.edge_hz);
                }
            }
            let dbfs = sweep.level() + rel;
            if dbfs > worst.unwanted_dbfs {
                worst = Frame {
                    time_s: r.time_s,
                    wanted_hz: None,
                    wanted_dbfs: FLOOR_DBFS,
                    unwanted_dbfs: dbfs,
                    unwanted_hz: hz,
                    tone_hz: None,
                    left_to_probes: false,
                };
            }
            Some(r)
        }
        None => None,
    };
    Ok(Measurement {
        in_rate,
        out_rate,
        rejection_db: reference_dbfs - worst.unwanted_dbfs,
        reference_dbfs,
        reference_hz: f_ref,
        reference_gain_db: ref_gain,
        worst,
        passband_ripple_db,
        passband_edge_hz: edge,
        bandwidth_0_1db_hz: bw01,
        bandwidth_3db_hz: bw3,
        latency_samples: tau,
        latency_ms: 1000.0 * tau / b_hz,
        frames,
        transfer,
        spectrogram: settings.keep_spectrogram.then(|| Spectrogram {
            bin_hz: bin,
            hop_s: an.hop() as f64 / b_hz,
            levels_dbfs: levels,
        }),
        edge: edge_report,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    // The floor of the measurement itself: the default sweep, passed through unchanged, must
    // read far under any stopband a user can ask for here (the widest guard in use is the
    // chirp-widened one at the top of the sweep; without it the floor was 189 dB at 44.1
    // kHz). The remaining floor is the sweep's own phase rounding in f64.
    #[test]
    fn an_unchanged_sweep_reads_over_205_db() {
        for rate in [44_100, 48_000] {
            let sweep = Sweep::new(rate);
            let m = measure_converter(&sweep, rate, &Settings::default(), |x| x.to_vec())
                .expect("measured");
            assert!(m.rejection_db > 205.0, "{rate} Hz: {}", m.rejection_db);
        }
    }

    #[test]
    fn chirp_broadening_is_one_for_a_steady_tone_and_root_two_at_the_matched_rate() {
        assert_eq!(chirp_broadening(0.0, 0.01), 1.0);
        let sigma_t = 0.004;
        let matched = 1.0 / (2.0 * core::f64::consts::PI * sigma_t * sigma_t);
        assert!((chirp_broadening(matched, sigma_t) - 2f64.sqrt()).abs() < 1e-12);
    }
}
