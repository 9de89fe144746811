//! Printing a measurement (shared by `verify` and `grade`): one JSON object, or aligned text.

use resample_core::measure::Measurement;
use serde_json::{json, Map, Value};

use super::format::{fixed, hz, num, small_db};

/// The metrics every measuring command prints, under the agreed keys.
pub fn metrics_json(m: &Measurement) -> Map<String, Value> {
    let mut o = Map::new();
    o.insert("rejection_db".into(), num(m.rejection_db));
    o.insert("passband_ripple_db".into(), num(m.passband_ripple_db));
    o.insert(
        "bandwidth_0_1db_hz".into(),
        m.bandwidth_0_1db_hz.map_or(Value::Null, num),
    );
    o.insert(
        "bandwidth_3db_hz".into(),
        m.bandwidth_3db_hz.map_or(Value::Null, num),
    );
    o.insert("latency_samples".into(), num(m.latency_samples));
    o.insert("latency_ms".into(), num(m.latency_ms));
    o.insert("in_rate".into(), json!(m.in_rate));
    o.insert("out_rate".into(), json!(m.out_rate));
    o.insert("reference_dbfs".into(), num(m.reference_dbfs));
    o.insert("reference_hz".into(), num(m.reference_hz));
    o.insert("passband_edge_hz".into(), num(m.passband_edge_hz));
    o.insert("worst_unwanted_dbfs".into(), num(m.worst.unwanted_dbfs));
    o.insert("worst_unwanted_hz".into(), num(m.worst.unwanted_hz));
    o.insert("worst_unwanted_time_s".into(), num(m.worst.time_s));
    o
}

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
