//! The design report (`rerate design`): aligned text, or one JSON object. A minimum-phase
//! design adds its phase, its group delay at 1 kHz and the passband group-delay variation
//! (a linear-phase report is unchanged: its group delay is the latency, flat).

use resample_core::{DesignReport, Phase};

use super::format::{fmt_db, fmt_ripple};

/// The report as one line of JSON (non-finite numbers become null).
pub fn report_json(r: &DesignReport, phase: Phase) -> String {
    super::json::line(&super::json::Design::new(r, phase == Phase::Minimum))
}

/// The report as aligned text.
pub fn report_text(r: &DesignReport, phase: Phase) -> String {
    let mut s = String::new();
    let mut line = |k: &str, v: String| s.push_str(&format!("{k:<22}{v}\n"));
    line("rates", format!("{} Hz -> {} Hz", r.in_rate, r.out_rate));
    line("ratio (up/down)", format!("{}/{}", r.up, r.down));
    if r.up == 1 && r.down == 1 {
        line("filter", "none (equal rates: samples are copied)".into());
        return s;
    }
    line(
        "taps",
        format!(
            "{} total, {} per phase, Kaiser formula alone: {} per phase",
            r.total_taps, r.taps_per_phase, r.formula_taps_per_phase
        ),
    );
    line("Kaiser beta", format!("{:.4}", r.beta));
    line(
        "passband edge",
        format!(
            "{:.1} Hz (ripple {} dB p-p, measured)",
            r.passband_edge_hz,
            fmt_ripple(r.passband_ripple_db)
        ),
    );
    line("stopband edge", format!("{:.1} Hz", r.stopband_edge_hz));
    line(
        "stopband",
        format!(
            "{} dB measured, {} dB requested",
            fmt_db(r.measured_stopband_db),
            fmt_db(r.requested_stopband_db)
        ),
    );
    line(
        "latency",
        format!(
            "{:.2} input samples, {:.2} output samples, {:.3} ms",
            r.latency_input_frames, r.latency_output_frames, r.latency_ms
        ),
    );
    if phase == Phase::Minimum {
        line(
            "phase",
            format!(
                "minimum: group delay {:.3} ms at 1 kHz (the latency above, rounded to a \
                 tap), varies by {:.3} ms over the passband",
                r.group_delay_1khz_ms, r.group_delay_variation_ms
            ),
        );
    }
    line(
        "table memory",
        format!(
            "{} bytes (f32), {} bytes (f64)",
            r.table_bytes_f32, r.table_bytes_f64
        ),
    );
    s
}
