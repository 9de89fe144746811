//! One row of the `tradeoff` table, as the command measures it and the table and the plot
//! show it.

/// One row of the table.
#[derive(Debug, Clone)]
pub struct Row {
    /// "windowed-sinc" or a baseline's name.
    pub method: String,
    /// Filter phase, "linear" or "minimum" (designs only).
    pub phase: Option<&'static str>,
    /// Requested stopband attenuation (designs only), dB.
    pub requested_db: Option<f64>,
    /// Taps per phase (designs only).
    pub taps_per_phase: Option<usize>,
    /// Measured image / alias rejection, dB.
    pub rejection_db: f64,
    /// Measured passband ripple, dB peak to peak.
    pub ripple_db: f64,
    /// Latency a live stream adds as stated: how far ahead of an output's instant its input
    /// reaches, ms (the design's delay for windowed sinc, `Design::delay`: the group delay
    /// for linear phase, the group delay at 1 kHz rounded to a tap for minimum phase; 0 for
    /// the causal baselines, one input sample for linear interpolation).
    pub latency_ms: f64,
    /// Delay of the output measured on the sweep by correlation (offline, where windowed
    /// sinc compensates its stated delay, so ~0 for linear phase), ms.
    pub measured_delay_ms: f64,
    /// Throughput of one thread, multiple of real time (mono, f32 for designs).
    pub speed_x_realtime: f64,
    /// Table memory in f32, bytes (designs only).
    pub table_bytes: Option<u64>,
    /// Why a design row measures below its request, and what to try.
    pub note: Option<String>,
    /// The stages in words, for a design run in two stages (its taps and its table are
    /// then the polyphase stage's and both stages' together).
    pub stages: Option<String>,
}

impl Row {
    /// The latency a live stream has, measured: the stated look-ahead plus the delay
    /// measured on the offline output (which is shifted back by exactly that look-ahead),
    /// ms.
    pub fn measured_latency_ms(&self) -> f64 {
        self.latency_ms + self.measured_delay_ms
    }
}
