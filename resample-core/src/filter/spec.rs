//! What a caller asks of a conversion filter: the rate pair, the stopband attenuation, the
//! passband edge, the phase response and the memory budget, checked only when a design is
//! asked for.

use super::minphase::FLOOR_MARGIN_DB;
use crate::limits::{DEFAULT_PASSBAND, DEFAULT_STOPBAND_DB, DEFAULT_TABLE_BUDGET};

/// The phase response of a designed filter.
///
/// Both have the same magnitude response (the minimum-phase prototype is derived from the
/// linear-phase one and measured on its own); they differ in when the output responds.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
pub enum Phase {
    /// Symmetric taps: every frequency is delayed by the same time, half the prototype's
    /// length (the default).
    #[default]
    Linear,
    /// The minimum-phase filter with the same magnitude response: most of its energy comes
    /// first, so the delay is a fraction of the linear-phase one, but it varies with
    /// frequency (largest near the passband edge). See [`crate::Design::delay`] for the
    /// delay conversions compensate.
    Minimum,
}

/// What the user asks of a conversion filter.
///
/// ```
/// use resample_core::FilterSpec;
/// let design = FilterSpec::new(44_100, 48_000).stopband_db(100.0).design()?;
/// assert!(design.report().measured_stopband_db >= 100.0);
/// # Ok::<(), resample_core::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FilterSpec {
    in_rate: u32,
    out_rate: u32,
    pub(crate) stopband_db: f64,
    pub(crate) passband: f64,
    pub(crate) table_budget: u64,
    pub(crate) phase: Phase,
    pub(crate) stages: StageChoice,
    /// How far under the requested stopband a minimum-phase design floors the prototype's
    /// magnitudes (dB, see `minphase::minimum_phase_on`): [`FLOOR_MARGIN_DB`], or deeper
    /// where the any-ratio engine interpolates between the prototype's phases and the floor
    /// would show in that error (`glide.rs`).
    pub(crate) floor_margin_db: f64,
}

/// One stage or two for a conversion ([`FilterSpec::stage_choice`], read by
/// [`FilterSpec::plan`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
pub enum StageChoice {
    /// Two stages where the cost model says they pay (see [`FilterSpec::plan`]); the
    /// default.
    #[default]
    Auto,
    /// Always one stage.
    Single,
    /// Two stages wherever the rate pair has a two-stage layout (a half-band stage fits),
    /// whatever the cost model says: for measuring and testing them.
    Two,
}

impl FilterSpec {
    /// A spec with the defaults: [`DEFAULT_STOPBAND_DB`], [`DEFAULT_PASSBAND`],
    /// [`DEFAULT_TABLE_BUDGET`]. Nothing is checked until [`FilterSpec::design`] (which
    /// lives with the design search).
    pub fn new(in_rate: u32, out_rate: u32) -> Self {
        Self {
            in_rate,
            out_rate,
            stopband_db: DEFAULT_STOPBAND_DB,
            passband: DEFAULT_PASSBAND,
            table_budget: DEFAULT_TABLE_BUDGET,
            phase: Phase::Linear,
            stages: StageChoice::Auto,
            floor_margin_db: FLOOR_MARGIN_DB,
        }
    }

    /// Minimum stopband attenuation in dB (accepted: 20 to 200).
    pub fn stopband_db(mut self, db: f64) -> Self {
        self.stopband_db = db;
        self
    }

    /// Passband edge as a fraction of the lower Nyquist frequency (accepted: 0.5 to 0.995).
    pub fn passband(mut self, fraction: f64) -> Self {
        self.passband = fraction;
        self
    }

    /// Largest polyphase table (in `f64`) the design may produce, bytes.
    pub fn table_budget_bytes(mut self, bytes: u64) -> Self {
        self.table_budget = bytes;
        self
    }

    /// Phase response of the designed filter ([`Phase::Linear`] unless asked). Applies to
    /// [`FilterSpec::design`]; a prototype given to [`FilterSpec::with_taps`] keeps its own.
    ///
    /// ```
    /// use resample_core::{FilterSpec, Phase};
    /// let spec = FilterSpec::new(44_100, 48_000).stopband_db(100.0);
    /// let lin = spec.design()?;
    /// let min = spec.phase(Phase::Minimum).design()?;
    /// assert!(min.report().measured_stopband_db >= 100.0);
    /// assert!(min.report().group_delay_1khz_ms < 0.25 * lin.report().group_delay_1khz_ms);
    /// # Ok::<(), resample_core::Error>(())
    /// ```
    pub fn phase(mut self, phase: Phase) -> Self {
        self.phase = phase;
        self
    }

    /// One stage or two for [`FilterSpec::plan`] ([`StageChoice::Auto`] unless asked).
    /// [`FilterSpec::design`] always designs one stage.
    pub fn stage_choice(mut self, choice: StageChoice) -> Self {
        self.stages = choice;
        self
    }

    /// The stage choice asked for.
    pub fn stage_choice_asked(&self) -> StageChoice {
        self.stages
    }

    /// The phase response asked for.
    pub fn phase_response(&self) -> Phase {
        self.phase
    }

    /// Input rate in Hz.
    pub fn in_rate(&self) -> u32 {
        self.in_rate
    }

    /// Output rate in Hz.
    pub fn out_rate(&self) -> u32 {
        self.out_rate
    }

    /// Requested stopband attenuation in dB.
    pub fn requested_stopband_db(&self) -> f64 {
        self.stopband_db
    }

    /// Requested passband edge (fraction of the lower Nyquist frequency).
    pub fn passband_fraction(&self) -> f64 {
        self.passband
    }
}
