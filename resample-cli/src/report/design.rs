//! The design report (`rerate design`): aligned text, or one JSON object. A minimum-phase
//! design adds its phase, its group delay at 1 kHz and the passband group-delay variation
//! (a linear-phase report is unchanged: its group delay is the latency, flat).

use resample_core::{DesignReport, GlideReport, Phase};

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

/// The report of two stages: the whole conversion, the structure, then each stage's own
/// report (indented), then the totals.
pub fn plan_text(plan: &resample_core::StagePlan) -> String {
    let mut s = String::new();
    let pair = plan.pair();
    let facts = super::stages::StageFacts::of(plan);
    let line = |s: &mut String, k: &str, v: String| s.push_str(&format!("{k:<22}{v}\n"));
    line(
        &mut s,
        "rates",
        format!("{} Hz -> {} Hz", pair.in_rate(), pair.out_rate()),
    );
    line(
        &mut s,
        "ratio (up/down)",
        format!("{}/{}", pair.up(), pair.down()),
    );
    line(&mut s, "structure", facts.words());
    let n = plan.stages().len();
    for (k, d) in plan.stages().iter().enumerate() {
        line(
            &mut s,
            &format!("stage {} of {n}", k + 1),
            facts.list[k].kind.to_owned(),
        );
        for l in report_text(d.report(), d.spec().phase_response()).lines() {
            s.push_str(&format!("  {l}\n"));
        }
    }
    line(
        &mut s,
        "stopband (total)",
        format!(
            "{} dB measured (the lower of the stages'), {} dB requested",
            fmt_db(plan.measured_stopband_db()),
            fmt_db(plan.spec().requested_stopband_db())
        ),
    );
    line(
        &mut s,
        "ripple (total)",
        format!(
            "{} dB p-p at most (the stages' measured ripples added)",
            fmt_ripple(plan.passband_ripple_db())
        ),
    );
    line(
        &mut s,
        "latency (total)",
        format!(
            "{:.2} input samples, {:.2} output samples, {:.3} ms",
            plan.latency_input_frames(),
            plan.latency_output_frames(),
            plan.latency_ms()
        ),
    );
    let (b32, b64) = plan.stages().iter().fold((0, 0), |(a, b), d| {
        (
            a + d.report().table_bytes_f32,
            b + d.report().table_bytes_f64,
        )
    });
    line(
        &mut s,
        "table memory (total)",
        format!("{b32} bytes (f32), {b64} bytes (f64)"),
    );
    s
}

/// What the any-ratio design report states besides the table: the pair, the clock
/// correction, why this engine, and the figures that follow from the ratio.
#[derive(Debug, Clone)]
pub struct GlideContext {
    /// Header input rate, Hz.
    pub in_rate: u32,
    /// Output rate, Hz.
    pub out_rate: u32,
    /// Clock correction, ppm.
    pub clock_ppm: f64,
    /// The correction as given ("+500").
    pub clock_text: String,
    /// True input rate, Hz.
    pub true_in_rate: f64,
    /// Output rate / true input rate.
    pub ratio: f64,
    /// Why the any-ratio engine, in words.
    pub why: String,
}

impl GlideContext {
    /// Delay in input frames at this ratio (stretched by 1 / ratio below 1).
    fn delay_in(&self, r: &GlideReport) -> f64 {
        r.delay_input_frames / self.ratio.min(1.0)
    }

    /// Lower Nyquist frequency of the true pair, Hz.
    fn lower_nyquist(&self) -> f64 {
        self.true_in_rate.min(f64::from(self.out_rate)) / 2.0
    }
}

/// The any-ratio design report as one line of JSON.
pub fn glide_json(r: &GlideReport, c: &GlideContext) -> String {
    let delay_in = c.delay_in(r);
    super::json::line(&super::json::GlideDesignRecord {
        engine: crate::convert::ANY_RATIO_ENGINE,
        engine_reason: c.why.clone(),
        in_rate: c.in_rate,
        out_rate: c.out_rate,
        clock_ppm: c.clock_ppm,
        true_in_rate_hz: c.true_in_rate,
        ratio: c.ratio,
        phases: r.phases,
        interpolation: r.interpolation.name(),
        interpolation_order: r.interpolation.order(),
        taps_per_output: r.taps_per_output,
        prototype_taps: r.prototype_taps,
        beta: r.beta,
        passband_edge_hz: r.passband_fraction * c.lower_nyquist(),
        stopband_edge_hz: c.lower_nyquist(),
        requested_stopband_db: r.requested_stopband_db,
        kernel_stopband_db: r.kernel_stopband_db,
        interpolation_error_db: r.interpolation_error_db,
        linear_error_db: r.linear_error_db,
        error_positions: r.error_positions,
        passband_ripple_db: r.passband_ripple_db,
        latency_input_samples: delay_in,
        latency_output_samples: delay_in * c.ratio,
        latency_ms: 1000.0 * delay_in / c.true_in_rate,
        table_bytes_f32: r.table_bytes_f32,
        table_bytes_f64: r.table_bytes_f64,
    })
}

/// The any-ratio design report as aligned text.
pub fn glide_text(r: &GlideReport, c: &GlideContext) -> String {
    let mut s = String::new();
    let mut line = |k: &str, v: String| s.push_str(&format!("{k:<22}{v}\n"));
    line("rates", format!("{} Hz -> {} Hz", c.in_rate, c.out_rate));
    line(
        "engine",
        format!("{} ({})", crate::convert::ANY_RATIO_ENGINE, c.why),
    );
    line(
        "true input rate",
        format!(
            "{} Hz (clock {} ppm), ratio {:.9}",
            super::format::plain(c.true_in_rate),
            c.clock_text,
            c.ratio
        ),
    );
    line(
        "table",
        format!(
            "{} phases per input sample, {} interpolation (order {})",
            r.phases,
            r.interpolation.name(),
            r.interpolation.order()
        ),
    );
    line(
        "taps",
        format!(
            "{} per output at ratio >= 1 (stretched by 1/ratio below), prototype {}",
            r.taps_per_output, r.prototype_taps
        ),
    );
    line("Kaiser beta", format!("{:.4}", r.beta));
    let nyq = c.lower_nyquist();
    line(
        "passband edge",
        format!(
            "{:.1} Hz (ripple {} dB p-p, measured)",
            r.passband_fraction * nyq,
            fmt_ripple(r.passband_ripple_db)
        ),
    );
    line("stopband edge", format!("{nyq:.1} Hz"));
    line(
        "stopband",
        format!(
            "{} dB measured (prototype), {} dB requested",
            fmt_db(r.kernel_stopband_db),
            fmt_db(r.requested_stopband_db)
        ),
    );
    line(
        "interpolation error",
        format!(
            "{} dB measured at {} positions between phases (linear would give {} dB)",
            fmt_db(r.interpolation_error_db),
            r.error_positions,
            fmt_db(r.linear_error_db)
        ),
    );
    let delay_in = c.delay_in(r);
    line(
        "latency",
        format!(
            "{:.2} input samples, {:.2} output samples, {:.3} ms (compensated in convert)",
            delay_in,
            delay_in * c.ratio,
            1000.0 * delay_in / c.true_in_rate
        ),
    );
    line(
        "table memory",
        format!(
            "{} bytes (f32), {} bytes (f64)",
            r.table_bytes_f32, r.table_bytes_f64
        ),
    );
    s
}
