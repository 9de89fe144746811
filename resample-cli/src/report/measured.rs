//! Printing a measurement (shared by `verify` and `grade`): one JSON object, or aligned text.

use resample_core::measure::Measurement;

use super::format::{fixed, hz, small_db};

/// The measured lines (no verdict), aligned like the other reports.
pub fn metrics_text(m: &Measurement) -> String {
    let mut s = String::new();
    let mut line = |k: &str, v: String| s.push_str(&format!("{k:<22}{v}\n"));
    line(
        "rejection",
        format!(
            "{:.2} dB (strongest unwanted: {:.1} dBFS at {:.0} Hz, {:.3} s into the output)",
            m.rejection_db, m.worst.unwanted_dbfs, m.worst.unwanted_hz, m.worst.time_s
        ),
    );
    line(
        "reference level",
        format!(
            "{:.2} dBFS (wanted tone at {:.0} Hz)",
            m.reference_dbfs, m.reference_hz
        ),
    );
    line(
        "passband ripple",
        format!(
            "{} dB peak to peak (up to {:.0} Hz)",
            small_db(m.passband_ripple_db),
            m.passband_edge_hz
        ),
    );
    line("-0.1 dB bandwidth", hz(m.bandwidth_0_1db_hz));
    line("-3 dB bandwidth", hz(m.bandwidth_3db_hz));
    line(
        "latency",
        format!(
            "{} output samples ({} ms), by correlation",
            fixed(m.latency_samples, 3),
            fixed(m.latency_ms, 4)
        ),
    );
    s
}
