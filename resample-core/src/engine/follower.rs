//! The drift follower ([`DriftFollower`]): a proportional-integral control loop that keeps
//! the FIFO between two clock domains at a target fill by steering a [`crate::GlideConverter`]'s
//! ratio from the measured fill, starting from the nominal rates.

use crate::limits::{
    DEFAULT_LOOP_RAD_S, DEFAULT_PEAK_HOLD_S, MAX_CORRECTION, MAX_GLIDE_RATIO, MAX_PEAK_HOLD_S,
    MIN_GLIDE_RATIO,
};

/// Completed blocks the peak hold keeps; with the block being filled the hold covers
/// between `HOLD_BLOCKS` and `HOLD_BLOCKS + 1` block lengths.
const HOLD_BLOCKS: usize = 4;
use crate::{Error, RatePair, Result};

/// Steers the ratio of a converter between two clock domains from the fill of the FIFO
/// between them.
///
/// The producer (input clock) writes frames into a FIFO; the consumer (output clock) takes
/// them through a [`crate::GlideConverter`]. Once per consumer callback, pass
/// [`DriftFollower::update`] the fill (input frames written but not yet reached by the
/// converter's output clock: the FIFO's frames plus
/// `conv.input_frames() - conv.next_output_time()`) and the callback's output frames; it
/// returns the ratio to glide to over the next callback
/// ([`crate::GlideConverter::glide_to`]).
///
/// The loop first takes the highest fill of about the last second (a peak hold, window
/// [`crate::limits::DEFAULT_PEAK_HOLD_S`], [`DriftFollower::with_peak_hold`]): a producer's
/// write is never early, only late, and a late write only lowers the measured fill (with
/// [`DriftFollower::fill_between_writes`] the fill is the truth minus the lateness of the
/// last write), so the highest fill of a window is the one nearest the truth. Taking the
/// lower envelope of one-way delays rather than their mean is the idea of Moon, Skelly and
/// Towsley, "Estimation and removal of clock skew from network delay measurements", IEEE
/// INFOCOM 1999 (from memory). With 2 ms of arrival jitter this cut the worst one-minute
/// mean ratio error from 2.3 ppm to a few tenths (`tests/two_clocks.rs`): the jitter's
/// slow part, which a mean lets through to the fill, is what moves a minute's mean ratio.
///
/// The held fill is then smoothed by two one-pole low-passes (time constant `0.1 / omega` each, so
/// the saw-tooth of bursty producers and jittery callback sizes hardly reach the ratio),
/// then a proportional-integral law, critically damped at the natural frequency `omega`,
/// corrects the nominal ratio: `ratio = nominal / (1 + c)`, `c = kp e + ki ∫ e dt`,
/// `e` the smoothed fill minus the target, with `kp = 2 omega / in_rate` and
/// `ki = omega² / in_rate` (the FIFO integrates the rate difference: its fill moves by
/// `in_rate (drift - c)` frames per second). With the FIFO's own integration this is a
/// type-2 loop in phase-locked-loop terms (two integrators in the loop; F. M. Gardner,
/// Phaselock Techniques, 3rd ed., Wiley 2005, the second-order loop with an active
/// proportional-integral filter, from memory): a constant drift is followed with no ratio
/// error, and a drift changing at a steady rate with no ratio error either (only a constant
/// fill offset of `in_rate drift' / omega²` frames); a sine wander of angular frequency
/// `w` leaves a ratio error of about `(w / omega)²` of its amplitude (0.14 ppm for +-50 ppm
/// over 10 minutes at the default loop). Nothing allocates; `update` is cheap enough for
/// the audio callback.
///
/// ```
/// use resample_core::DriftFollower;
/// let mut f = DriftFollower::new(48_000, 48_000, 960.0)?;
/// // A consumer callback of 128 frames found 1000 frames pending: slightly too many.
/// let ratio = f.update(1000.0, 128);
/// assert!(ratio < 1.0);
/// # Ok::<(), resample_core::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct DriftFollower {
    nominal: f64,
    in_rate: f64,
    out_rate: f64,
    target: f64,
    omega: f64,
    kp: f64,
    ki: f64,
    tau: f64,
    /// Peak-hold window, seconds (0: off).
    hold_s: f64,
    /// Highest fill of each completed block of `hold_s / HOLD_BLOCKS` seconds, newest first
    /// (`-inf` where none yet).
    hold: [f64; HOLD_BLOCKS],
    /// Highest fill of the block being filled, and the seconds it has covered.
    hold_now: (f64, f64),
    /// The two smoothing stages (None until the first update).
    smooth: Option<(f64, f64)>,
    integral: f64,
    correction: f64,
}

impl DriftFollower {
    /// A follower for nominal `in_rate` -> `out_rate` (Hz) that keeps the fill at
    /// `target_fill` input frames, with the default loop
    /// ([`crate::limits::DEFAULT_LOOP_RAD_S`]).
    pub fn new(in_rate: u32, out_rate: u32, target_fill: f64) -> Result<Self> {
        let pair = RatePair::new(in_rate, out_rate)?;
        if !target_fill.is_finite() || target_fill < 0.0 {
            return Err(Error::FollowerSetup {
                problem: "the target fill must be a finite number of frames, 0 or more",
            });
        }
        let mut f = Self {
            nominal: f64::from(pair.out_rate()) / f64::from(pair.in_rate()),
            in_rate: f64::from(in_rate),
            out_rate: f64::from(out_rate),
            target: target_fill,
            omega: 0.0,
            kp: 0.0,
            ki: 0.0,
            tau: 0.0,
            hold_s: DEFAULT_PEAK_HOLD_S,
            hold: [f64::NEG_INFINITY; HOLD_BLOCKS],
            hold_now: (f64::NEG_INFINITY, 0.0),
            smooth: None,
            integral: 0.0,
            correction: 0.0,
        };
        f.set_loop(DEFAULT_LOOP_RAD_S)?;
        Ok(f)
    }

    /// The same follower with a loop of natural frequency `omega` rad/s (0.01 to 10):
    /// faster loops follow faster wander but pass more of the fill's jitter to the ratio.
    pub fn with_loop(mut self, omega: f64) -> Result<Self> {
        self.set_loop(omega)?;
        Ok(self)
    }

    /// The same follower with a peak hold of `seconds` (0 to
    /// [`crate::limits::MAX_PEAK_HOLD_S`]; 0 turns it off and the loop acts on every fill
    /// as measured). Use 0 when the fill can also read high by chance (a fill that is not a
    /// lower bound of the truth); longer windows cut more jitter but add lag: keep the
    /// window under about `0.3 / omega` seconds.
    pub fn with_peak_hold(mut self, seconds: f64) -> Result<Self> {
        if !(0.0..=MAX_PEAK_HOLD_S).contains(&seconds) {
            return Err(Error::FollowerSetup {
                problem: "the peak-hold window must be 0 to 10 seconds",
            });
        }
        self.hold_s = seconds;
        self.clear_hold();
        Ok(self)
    }

    fn clear_hold(&mut self) {
        self.hold = [f64::NEG_INFINITY; HOLD_BLOCKS];
        self.hold_now = (f64::NEG_INFINITY, 0.0);
    }

    /// The highest fill of the hold window, `fill` included (`fill` itself without a hold).
    fn held(&mut self, fill: f64, dt: f64) -> f64 {
        if self.hold_s <= 0.0 {
            return fill;
        }
        let block = self.hold_s / HOLD_BLOCKS as f64;
        let (top, covered) = self.hold_now;
        let top = top.max(fill);
        let held = self.hold.iter().fold(top, |m, &v| m.max(v));
        let covered = covered + dt;
        if covered >= block {
            self.hold.rotate_right(1);
            self.hold[0] = top;
            self.hold_now = (f64::NEG_INFINITY, 0.0);
        } else {
            self.hold_now = (top, covered);
        }
        held
    }

    fn set_loop(&mut self, omega: f64) -> Result<()> {
        if !(0.01..=10.0).contains(&omega) {
            return Err(Error::FollowerSetup {
                problem: "the loop's natural frequency must be 0.01 to 10 rad/s",
            });
        }
        self.omega = omega;
        self.kp = 2.0 * omega / self.in_rate;
        self.ki = omega * omega / self.in_rate;
        self.tau = 0.1 / omega;
        Ok(())
    }

    /// Take one measurement: `fill` input frames pending, measured at a consumer callback
    /// of `out_frames` output frames (the time since the previous one). Returns the ratio
    /// (output / input) to use next.
    pub fn update(&mut self, fill: f64, out_frames: usize) -> f64 {
        if !fill.is_finite() {
            return self.ratio();
        }
        let dt = out_frames as f64 / self.out_rate;
        let fill = self.held(fill, dt);
        let a = 1.0 - (-dt / self.tau).exp();
        let (s1, s2) = match self.smooth {
            None => (fill, fill),
            Some((s1, s2)) => {
                let s1 = s1 + a * (fill - s1);
                (s1, s2 + a * (s1 - s2))
            }
        };
        self.smooth = Some((s1, s2));
        let e = s2 - self.target;
        // Integrate only while the output is not clamped (no wind-up).
        let next = self.integral + e * dt;
        let c = self.kp * e + self.ki * next;
        if c.abs() <= MAX_CORRECTION {
            self.integral = next;
        }
        self.correction =
            (self.kp * e + self.ki * self.integral).clamp(-MAX_CORRECTION, MAX_CORRECTION);
        self.ratio()
    }

    /// The fill with the producer's last write spread over the time it covers: `pending`
    /// frames, of which the last write brought `last_write_frames`, `since_write_s` seconds
    /// ago (on the consumer's clock); counts `min(last_write_frames, since_write_s
    /// in_rate)` of that write. Removes the saw-tooth of a bursty producer from the
    /// measurement, leaving only its timing jitter.
    pub fn fill_between_writes(
        &self,
        pending: f64,
        last_write_frames: usize,
        since_write_s: f64,
    ) -> f64 {
        let w = last_write_frames as f64;
        pending - w + (since_write_s.max(0.0) * self.in_rate).min(w)
    }

    /// The ratio (output / input) the loop asks for now.
    pub fn ratio(&self) -> f64 {
        (self.nominal / (1.0 + self.correction)).clamp(MIN_GLIDE_RATIO, MAX_GLIDE_RATIO)
    }

    /// The nominal ratio (output rate / input rate).
    pub fn nominal_ratio(&self) -> f64 {
        self.nominal
    }

    /// The peak-hold window, seconds (0: off).
    pub fn peak_hold(&self) -> f64 {
        self.hold_s
    }

    /// The smoothed fill the loop acts on, frames (the target before the first update).
    pub fn smoothed_fill(&self) -> f64 {
        self.smooth.map_or(self.target, |s| s.1)
    }

    /// The target fill, frames.
    pub fn target_fill(&self) -> f64 {
        self.target
    }

    /// The correction applied: the input clock's estimated speed-up relative to nominal
    /// (`2e-6` means the input runs 2 ppm fast against the output), a plain ratio.
    pub fn correction(&self) -> f64 {
        self.correction
    }

    /// Start over (same rates, target and loop).
    pub fn reset(&mut self) {
        self.smooth = None;
        self.integral = 0.0;
        self.correction = 0.0;
        self.clear_hold();
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bad_setups_are_errors() {
        assert!(DriftFollower::new(0, 48_000, 10.0).is_err());
        assert!(DriftFollower::new(48_000, 48_000, f64::NAN).is_err());
        assert!(DriftFollower::new(48_000, 48_000, -1.0).is_err());
        let f = DriftFollower::new(48_000, 44_100, 10.0).unwrap();
        assert!(f.clone().with_loop(0.0).is_err());
        assert!(f.clone().with_loop(f64::NAN).is_err());
        assert!(f.clone().with_peak_hold(-1.0).is_err());
        assert!(f.clone().with_peak_hold(f64::NAN).is_err());
        assert!(f.with_peak_hold(11.0).is_err());
    }

    #[test]
    fn the_hold_keeps_the_highest_fill_of_its_window() {
        // 1 s window in blocks of 0.25 s; 128-frame callbacks at 48 kHz (2.67 ms).
        let mut f = DriftFollower::new(48_000, 48_000, 0.0).unwrap();
        assert_eq!(f.held(10.0, 128.0 / 48e3), 10.0);
        // Lower fills for the next 0.9 s: the 10 is still held.
        for _ in 0..337 {
            assert_eq!(f.held(5.0, 128.0 / 48e3), 10.0);
        }
        // After 1.25 s at most it has left the window.
        let mut last = 10.0;
        for _ in 0..(0.4 * 375.0) as usize {
            last = f.held(5.0, 128.0 / 48e3);
        }
        assert_eq!(last, 5.0);
        // Off: every fill as measured.
        let mut g = DriftFollower::new(48_000, 48_000, 0.0)
            .unwrap()
            .with_peak_hold(0.0)
            .unwrap();
        assert_eq!(g.held(10.0, 0.01), 10.0);
        assert_eq!(g.held(5.0, 0.01), 5.0);
    }

    #[test]
    fn a_constant_drift_is_found_exactly() {
        // The plant alone: the fill integrates the rate difference (no converter needed).
        let drift = 150e-6;
        let mut f = DriftFollower::new(48_000, 48_000, 500.0).unwrap();
        let mut fill = 500.0;
        for _ in 0..(300 * 375) {
            let r = f.update(fill, 128);
            // 128 outputs consume 128 / r input frames; the producer adds 128 (1 + drift).
            fill += 128.0 * (1.0 + drift) - 128.0 / r;
        }
        assert!((f.correction() - drift).abs() < 1e-9, "{}", f.correction());
        assert!((f.smoothed_fill() - 500.0).abs() < 0.01);
    }
}
