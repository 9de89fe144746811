//! The one error type of the core: every way a caller's parameters or buffers can be wrong.

/// Everything that can go wrong when designing a filter or feeding a converter.
///
/// No function in this crate panics on values a caller passes; it returns one of these.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum Error {
    /// A sample rate was zero or above [`crate::MAX_RATE`].
    #[error("sample rate {rate} Hz is out of range (1 to {max} Hz)", max = crate::MAX_RATE)]
    RateOutOfRange {
        /// The rate that was given, in Hz.
        rate: u64,
    },
    /// The requested stopband attenuation is outside the supported range.
    #[error(
        "stopband attenuation {db} dB is out of range ({min} to {max} dB)",
        min = crate::limits::MIN_STOPBAND_DB,
        max = crate::limits::MAX_STOPBAND_DB
    )]
    StopbandOutOfRange {
        /// The attenuation that was asked for, in dB.
        db: f64,
    },
    /// The requested passband edge is outside the supported range.
    #[error(
        "passband edge {fraction} is out of range ({min} to {max} of the lower Nyquist frequency)",
        min = crate::limits::MIN_PASSBAND,
        max = crate::limits::MAX_PASSBAND
    )]
    PassbandOutOfRange {
        /// The fraction of the lower Nyquist frequency that was asked for.
        fraction: f64,
    },
    /// The polyphase table for this rate pair would be larger than the memory budget.
    #[error(
        "the polyphase table for the ratio {up}/{down} would need {needed_bytes} bytes, \
         over the budget of {budget_bytes} bytes; choose rates with a simpler ratio, \
         a lower stopband attenuation, or a larger budget"
    )]
    TableTooLarge {
        /// Reduced up-sampling factor L.
        up: u64,
        /// Reduced down-sampling factor M.
        down: u64,
        /// Bytes the table would take.
        needed_bytes: u64,
        /// The budget in force, in bytes.
        budget_bytes: u64,
    },
    /// The iterative design could not reach the requested attenuation.
    #[error(
        "the filter design reached only {best_db:.2} dB of the requested {requested_db} dB \
         stopband attenuation"
    )]
    DesignNotMet {
        /// What was asked for, in dB.
        requested_db: f64,
        /// The best measured stopband attenuation, in dB.
        best_db: f64,
    },
    /// A minimum-phase design would need a prototype longer than can be made minimum
    /// phase and measured in full.
    #[error(
        "a minimum-phase filter of {taps} taps is longer than the {max_taps} taps that can be \
         derived and measured; ask for less attenuation or a wider transition band"
    )]
    MinimumPhaseTooLong {
        /// Prototype length the request needs.
        taps: usize,
        /// Longest minimum-phase prototype.
        max_taps: usize,
    },
    /// A converter was asked for zero channels, or more than [`crate::MAX_CHANNELS`].
    #[error("channel count {channels} is out of range (1 to {max})", max = crate::MAX_CHANNELS)]
    ChannelsOutOfRange {
        /// The number of channels that was given.
        channels: usize,
    },
    /// A buffer passed to a converter does not have the shape the converter expects.
    #[error("{what}: expected {expected}, got {got}")]
    BufferShape {
        /// Which property of which buffer is wrong.
        what: &'static str,
        /// The value the converter expected.
        expected: usize,
        /// The value it got.
        got: usize,
    },
    /// The requested kernel cannot run on this CPU.
    #[error("the {name} kernel is not available on this CPU")]
    KernelUnavailable {
        /// The kernel's name.
        name: &'static str,
    },
    /// Input was given to a converter after [`crate::StreamConverter::flush_interleaved`]
    /// (or its planar twin) began; call `reset` first.
    #[error("input given after flushing began; reset the converter first")]
    InputAfterFlush,
    /// A conversion ratio outside the any-ratio engine's range, or not finite.
    #[error(
        "conversion ratio {ratio} is out of range ({min} to {max})",
        min = crate::limits::MIN_GLIDE_RATIO,
        max = crate::limits::MAX_GLIDE_RATIO
    )]
    RatioOutOfRange {
        /// The ratio (output rate / input rate) that was given.
        ratio: f64,
    },
    /// A drift follower was given a setting it cannot work with.
    #[error("drift follower: {problem}")]
    FollowerSetup {
        /// What is wrong, in words.
        problem: &'static str,
    },
    /// A measurement could not be set up or run: bad sweep parameters, or a signal too
    /// short, empty or not finite.
    #[error("measurement: {problem}")]
    MeasureSetup {
        /// What is wrong, in words.
        problem: String,
    },
}

/// Shorthand for results of this crate.
pub type Result<T> = core::result::Result<T, Error>;
