//! The numbers that bound what a caller may ask for, and the defaults: one home for every
//! limit the error messages, the filter spec and the applications quote.

/// Highest sample rate accepted, Hz (10 MHz).
pub const MAX_RATE: u32 = 10_000_000;

/// Most channels a converter accepts.
pub const MAX_CHANNELS: usize = 1024;

/// Smallest accepted stopband attenuation, dB.
pub const MIN_STOPBAND_DB: f64 = 20.0;
/// Largest accepted stopband attenuation, dB.
pub const MAX_STOPBAND_DB: f64 = 200.0;
/// Smallest accepted passband edge, as a fraction of the lower Nyquist frequency.
pub const MIN_PASSBAND: f64 = 0.5;
/// Largest accepted passband edge, as a fraction of the lower Nyquist frequency.
pub const MAX_PASSBAND: f64 = 0.995;
/// Default stopband attenuation of [`crate::FilterSpec::new`], dB.
pub const DEFAULT_STOPBAND_DB: f64 = 140.0;
/// Default passband edge of [`crate::FilterSpec::new`] (fraction of the lower Nyquist frequency).
pub const DEFAULT_PASSBAND: f64 = 0.91;
/// Default memory budget for one polyphase table in `f64`, bytes (64 MiB).
pub const DEFAULT_TABLE_BUDGET: u64 = 64 << 20;
/// Taps per phase are padded to a multiple of this, for whole-vector loads.
pub const PHASE_ALIGN: usize = 8;

/// Extra attenuation required when a long prototype is measured on a copy with fewer phases
/// (the copy's window length is rounded to its grid, which moves the lobes next to the
/// stopband edge by about 0.1 dB).
pub const SURROGATE_MARGIN_DB: f64 = 0.5;

/// Smallest ratio (output rate / input rate) the any-ratio engine accepts.
pub const MIN_GLIDE_RATIO: f64 = 1.0 / 16.0;
/// Largest ratio (output rate / input rate) the any-ratio engine accepts.
pub const MAX_GLIDE_RATIO: f64 = 16.0;
/// Largest table the any-ratio design lays out with linear interpolation, bytes in `f64`
/// (2 MiB); a request whose linear table would be larger gets cubic interpolation.
pub const GLIDE_TABLE_LIMIT: u64 = 2 << 20;
/// Most phases per input sample of an any-ratio table.
pub const MAX_GLIDE_PHASES: usize = 1 << 14;
/// Half-width of the band of ratios around the starting ratio (relative: +-0.1 %) for which
/// an any-ratio design below ratio 1 gets a table of its own, read without stretching the
/// kernel: wide enough for any pair of audio clocks (tens to hundreds of ppm).
pub const GLIDE_BAND: f64 = 1e-3;
/// How far under the requested stopband the measured interpolation error must stay, dB.
pub const GLIDE_ERROR_MARGIN_DB: f64 = 3.0;

/// Default natural frequency of the drift follower's loop, rad/s (it settles within a few
/// tens of seconds): slow enough that timing jitter of a few milliseconds moves the ratio
/// by tens of ppm at most, fast enough to follow a clock that wanders by tens of ppm over
/// minutes.
pub const DEFAULT_LOOP_RAD_S: f64 = 0.2;
/// Largest correction the drift follower applies to the nominal ratio (2000 ppm either
/// way): more than any pair of audio clocks drifts apart, so a stalled producer cannot run
/// the ratio away.
pub const MAX_CORRECTION: f64 = 2000e-6;
/// Default window of the drift follower's peak hold, seconds: the loop acts on the highest
/// fill measured over about the last second. A write can only arrive late, never early, so
/// the highest fill is the one least shortened by late arrivals; one second holds a hundred
/// 10 ms writes (its low-frequency noise is a few times lower than a mean's) and adds little
/// lag for a loop of 0.2 rad/s (two seconds and more destabilise it; measured in
/// `tests/two_clocks.rs`).
pub const DEFAULT_PEAK_HOLD_S: f64 = 1.0;
/// Longest peak-hold window the drift follower accepts, seconds.
pub const MAX_PEAK_HOLD_S: f64 = 10.0;

/// Largest clock correction a file conversion accepts, parts per million either way: the
/// input's true rate is its header rate times `1 + ppm / 1e6`. Crystal clocks of audio
/// devices stay within about +-100 ppm (common practice, no source); ten times that covers
/// any recorder that still works.
pub const MAX_CLOCK_PPM: f64 = 1000.0;
/// Decimal places a clock correction may be given with (so that the true rate is an exact
/// fraction: header rate x (10^12 + ppm x 10^6) / 10^12).
pub const CLOCK_PPM_DECIMALS: u32 = 6;
