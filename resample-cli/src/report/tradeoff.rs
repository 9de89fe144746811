//! One row of the `tradeoff` table, as the command measures it and the table and the plot
//! show it.

/// One row of the table.
#[derive(Debug, Clone)]
pub struct Row {
    /// "windowed-sinc" or a baseline's name.
    pub method: String,
    /// Requested stopband attenuation (designs only), dB.
    pub requested_db: Option<f64>,
    /// Taps per phase (designs only).
    pub taps_per_phase: Option<usize>,
    /// Measured image / alias rejection, dB.
    pub rejection_db: f64,
    /// Measured passband ripple, dB peak to peak.
    pub ripple_db: f64,
    /// Latency a live stream adds: how far ahead of an output's instant its input reaches,
    /// ms (design group delay for windowed sinc; 0 for the causal baselines, one input
    /// sample for linear interpolation).
    pub latency_ms: f64,
    /// Delay of the output measured on the sweep (offline, so ~0 for windowed sinc, which
    /// compensates its delay), ms.
    pub measured_delay_ms: f64,
    /// Throughput of one thread, multiple of real time (mono, f32 for designs).
    pub speed_x_realtime: f64,
    /// Table memory in f32, bytes (designs only).
    pub table_bytes: Option<u64>,
    /// Why a design row measures below its request, and what to try.
    pub note: Option<String>,
}
