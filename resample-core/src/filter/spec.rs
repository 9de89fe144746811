//! What a caller asks of a conversion filter: the rate pair, the stopband attenuation, the
//! passband edge and the memory budget, checked only when a design is asked for.

use crate::limits::{DEFAULT_PASSBAND, DEFAULT_STOPBAND_DB, DEFAULT_TABLE_BUDGET};

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
