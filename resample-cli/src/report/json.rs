//! Every JSON record the CLI prints, as serde-derived structs: the key names live here and
//! nowhere else.
//!
//! Each record is one JSON object on one line. Numbers that are not finite (an infinite
//! rejection of a perfect converter, a speed too fast to time) are written as `null`, which
//! is what serde_json does with non-finite floats. Optional keys are left out when they do
//! not apply (the minimum-phase figures of a linear-phase design, the verdict of a `grade`
//! without `--expect-db`).

use resample_core::measure::Measurement;
use resample_core::DesignReport;
use serde::Serialize;

/// One line of JSON for a record.
pub fn line<T: Serialize>(record: &T) -> String {
    // Serializing these structs (strings, numbers, options) cannot fail; the fallback keeps
    // a line on stdout anyway.
    serde_json::to_string(record).unwrap_or_else(|e| format!("{{\"error\":\"{e}\"}}"))
}

/// A converted file (`convert --json`, `demo --json`).
#[derive(Debug, Serialize)]
pub struct Converted {
    /// Always "converted".
    pub status: &'static str,
    /// Input path.
    pub input: String,
    /// Output path.
    pub output: String,
    /// Input rate, Hz.
    pub in_rate: u32,
    /// Output rate, Hz.
    pub out_rate: u32,
    /// Channels.
    pub channels: u16,
    /// Input encoding, as printed.
    pub in_format: String,
    /// Output encoding, as printed.
    pub out_format: String,
    /// Input frames.
    pub frames_in: u64,
    /// Output frames.
    pub frames_out: u64,
    /// Duration, seconds.
    pub duration_s: f64,
    /// Wall-clock time, seconds.
    pub elapsed_s: f64,
    /// Audio seconds per wall-clock second.
    pub speed_x_real_time: f64,
    /// Output peak, dBFS, measured before any limiting.
    pub peak_dbfs: f64,
    /// Samples over full scale.
    pub over_full_scale: u64,
    /// Samples limited to full scale.
    pub clipped: u64,
    /// The `--gain` that avoids the overs, dB (absent when there are none).
    pub suggested_gain_db: Option<f64>,
    /// Gain applied, dB.
    pub gain_db: f64,
    /// Non-finite input samples replaced by 0.
    pub sanitized: u64,
    /// Stopband asked of the design, dB.
    pub requested_stopband_db: f64,
    /// Stopband measured on the design's prototype, dB.
    pub measured_stopband_db: f64,
    /// Passband edge, fraction of the lower Nyquist frequency.
    pub passband: f64,
    /// Filter taps per output sample.
    pub taps_per_phase: usize,
    /// Arithmetic precision, as printed.
    pub precision: String,
    /// "tpdf" or "none".
    pub dither: &'static str,
    /// Samples that received dither.
    pub dithered_samples: u64,
    /// Always "before limiting".
    pub peak_measured: &'static str,
    /// What became of the input's metadata chunks.
    pub metadata: MetadataRecord,
    /// Problems with the input that were worked around (a header never completed).
    pub warnings: Vec<String>,
    /// The engine that ran: "fixed-ratio" or "any-ratio".
    pub engine: &'static str,
    /// Why the any-ratio engine ran, in words (absent for the fixed-ratio engine).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub engine_reason: Option<String>,
    /// Clock correction applied, ppm (absent for the fixed-ratio engine; 0 for a pair over
    /// the fixed table's budget).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub clock_ppm: Option<f64>,
    /// The input's true rate, Hz (any-ratio engine).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub true_in_rate_hz: Option<f64>,
    /// Measured error of the any-ratio engine's interpolated taps, dB.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub interpolation_error_db: Option<f64>,
    /// The fixed-ratio engine's stages in signal order (one, or two: a half-band 2:1
    /// stage then the polyphase stage, or the polyphase stage then a half-band 1:2);
    /// absent for the any-ratio engine.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub stages: Option<Vec<super::stages::StageFact>>,
}

/// What became of a converted file's metadata chunks.
#[derive(Debug, Serialize)]
pub struct MetadataRecord {
    /// Chunks written to the output ("bext", "LIST-INFO", ...).
    pub carried: Vec<String>,
    /// Positions and fields changed for the new rate, in words.
    pub rescaled: Vec<String>,
    /// Chunks not written, each with the reason.
    pub dropped: Vec<String>,
}

/// A file that was not converted: skipped, failed, interrupted or not started.
#[derive(Debug, Serialize)]
pub struct NotConverted<'a> {
    /// "skipped", "failed", "interrupted" or "not started".
    pub status: &'static str,
    /// Input path.
    pub input: String,
    /// Output path.
    pub output: String,
    /// Why a file was skipped.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub reason: Option<&'a str>,
    /// Why a file failed.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub error: Option<&'a str>,
}

/// The last record of `convert --json`: `{"summary": {...}}`.
#[derive(Debug, Serialize)]
pub struct SummaryRecord {
    /// The counts.
    pub summary: Summary,
}

/// The counts of a `convert` run.
#[derive(Debug, Serialize)]
pub struct Summary {
    /// Files converted.
    pub converted: usize,
    /// Files skipped (output exists).
    pub skipped: usize,
    /// Files failed.
    pub failed: usize,
    /// Files stopped under way by a signal.
    pub interrupted: usize,
    /// Files not started because of a signal.
    pub not_started: usize,
    /// Files this run was to convert.
    pub selected: usize,
    /// Files found.
    pub found: usize,
    /// Files left out because this run writes them.
    pub excluded_own_outputs: usize,
    /// "i/n" of `--shard`.
    pub shard: Option<String>,
    /// Whether a signal stopped the run.
    pub stopped_by_signal: bool,
}

/// A filter design (`design --json`).
#[derive(Debug, Serialize)]
pub struct Design {
    /// Input rate, Hz.
    pub in_rate: u32,
    /// Output rate, Hz.
    pub out_rate: u32,
    /// Upsampling factor L.
    pub up: u32,
    /// Downsampling factor M.
    pub down: u32,
    /// Prototype taps.
    pub total_taps: usize,
    /// Taps per phase.
    pub taps_per_phase: usize,
    /// Taps per phase padded for the kernels.
    pub padded_taps_per_phase: usize,
    /// Taps per phase by Kaiser's formula alone.
    pub formula_taps_per_phase: usize,
    /// Kaiser beta.
    pub beta: f64,
    /// Passband edge, Hz.
    pub passband_edge_hz: f64,
    /// Stopband edge, Hz.
    pub stopband_edge_hz: f64,
    /// Cutoff, Hz.
    pub cutoff_hz: f64,
    /// Stopband asked for, dB.
    pub requested_stopband_db: f64,
    /// Stopband measured, dB.
    pub measured_stopband_db: f64,
    /// Passband ripple, dB peak to peak.
    pub passband_ripple_db: f64,
    /// Phases the measurement was made on.
    pub measured_on_phases: u64,
    /// Lengths tried.
    pub attempts: usize,
    /// Latency, input samples.
    pub latency_input_samples: f64,
    /// Latency, output samples.
    pub latency_output_samples: f64,
    /// Latency, ms.
    pub latency_ms: f64,
    /// Table bytes in f32.
    pub table_bytes_f32: u64,
    /// Table bytes in f64.
    pub table_bytes_f64: u64,
    /// The minimum-phase figures, for a minimum-phase design.
    #[serde(flatten)]
    pub minimum: Option<MinimumPhase>,
    /// The stages a conversion runs, in signal order, each with its own figures (one
    /// entry, or two: then the keys above are the whole conversion's: its rates and
    /// factors, the lower measured stopband, the ripples added, the delays added, the
    /// tables added; the taps and beta are the polyphase stage's). Absent inside a stage.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub stages: Option<Vec<Design>>,
    /// "half-band" or "polyphase", inside `stages`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub kind: Option<&'static str>,
}

/// An any-ratio design (`design --json` with `--clock-ppm`, or for a pair over the fixed
/// table's budget).
#[derive(Debug, Serialize)]
pub struct GlideDesignRecord {
    /// Always "any-ratio".
    pub engine: &'static str,
    /// Why the any-ratio engine, in words.
    pub engine_reason: String,
    /// Header input rate, Hz.
    pub in_rate: u32,
    /// Output rate, Hz.
    pub out_rate: u32,
    /// Clock correction, ppm.
    pub clock_ppm: f64,
    /// True input rate, Hz.
    pub true_in_rate_hz: f64,
    /// Output rate / true input rate.
    pub ratio: f64,
    /// Phases per input sample of the table.
    pub phases: u64,
    /// "linear" or "cubic".
    pub interpolation: &'static str,
    /// Polynomial order of the interpolation.
    pub interpolation_order: usize,
    /// Taps per output at a ratio of 1 or more.
    pub taps_per_output: usize,
    /// Prototype taps.
    pub prototype_taps: usize,
    /// Kaiser beta.
    pub beta: f64,
    /// Passband edge, Hz.
    pub passband_edge_hz: f64,
    /// Stopband edge, Hz.
    pub stopband_edge_hz: f64,
    /// Stopband asked for, dB.
    pub requested_stopband_db: f64,
    /// Stopband measured on the prototype, dB.
    pub kernel_stopband_db: f64,
    /// Measured error of the interpolated taps, dB.
    pub interpolation_error_db: f64,
    /// The same for linear interpolation of the table, dB.
    pub linear_error_db: f64,
    /// Positions the error was measured at.
    pub error_positions: usize,
    /// Passband ripple, dB peak to peak.
    pub passband_ripple_db: f64,
    /// Latency, input samples.
    pub latency_input_samples: f64,
    /// Latency, output samples.
    pub latency_output_samples: f64,
    /// Latency, ms.
    pub latency_ms: f64,
    /// Table bytes in f32.
    pub table_bytes_f32: u64,
    /// Table bytes in f64.
    pub table_bytes_f64: u64,
}

/// The figures of a minimum-phase design.
#[derive(Debug, Serialize)]
pub struct MinimumPhase {
    /// Always "minimum".
    pub phase: &'static str,
    /// Group delay at 1 kHz, ms.
    pub group_delay_1khz_ms: f64,
    /// Group-delay variation over the passband, ms.
    pub group_delay_variation_ms: f64,
}

impl Design {
    /// From a design's report; `minimum` for a minimum-phase design.
    pub fn new(r: &DesignReport, minimum: bool) -> Self {
        Self {
            in_rate: r.in_rate,
            out_rate: r.out_rate,
            up: r.up,
            down: r.down,
            total_taps: r.total_taps,
            taps_per_phase: r.taps_per_phase,
            padded_taps_per_phase: r.padded_taps_per_phase,
            formula_taps_per_phase: r.formula_taps_per_phase,
            beta: r.beta,
            passband_edge_hz: r.passband_edge_hz,
            stopband_edge_hz: r.stopband_edge_hz,
            cutoff_hz: r.cutoff_hz,
            requested_stopband_db: r.requested_stopband_db,
            measured_stopband_db: r.measured_stopband_db,
            passband_ripple_db: r.passband_ripple_db,
            measured_on_phases: r.measured_on_phases,
            attempts: r.attempts,
            latency_input_samples: r.latency_input_frames,
            latency_output_samples: r.latency_output_frames,
            latency_ms: r.latency_ms,
            table_bytes_f32: r.table_bytes_f32,
            table_bytes_f64: r.table_bytes_f64,
            minimum: minimum.then_some(MinimumPhase {
                phase: "minimum",
                group_delay_1khz_ms: r.group_delay_1khz_ms,
                group_delay_variation_ms: r.group_delay_variation_ms,
            }),
            stages: None,
            kind: None,
        }
    }

    /// The record of a whole plan: for one stage that stage's with `stages` listing it;
    /// for two, the whole conversion's figures (see `stages`).
    pub fn of_plan(plan: &resample_core::StagePlan, minimum: bool) -> Self {
        let facts = super::stages::StageFacts::of(plan);
        let stages: Vec<Design> = plan
            .stages()
            .iter()
            .zip(&facts.list)
            .map(|(d, f)| Self {
                kind: Some(f.kind),
                ..Self::new(d.report(), minimum)
            })
            .collect();
        let long = plan
            .stages()
            .iter()
            .enumerate()
            .find(|&(i, _)| plan.half_band_stage() != Some(i))
            .map_or(&plan.stages()[0], |(_, d)| d);
        let mut top = Self::new(long.report(), minimum);
        if plan.is_two_stage() {
            let pair = plan.pair();
            top.in_rate = pair.in_rate();
            top.out_rate = pair.out_rate();
            top.up = pair.up();
            top.down = pair.down();
            top.requested_stopband_db = plan.spec().requested_stopband_db();
            top.measured_stopband_db = plan.measured_stopband_db();
            top.passband_ripple_db = plan.passband_ripple_db();
            top.passband_edge_hz = plan.passband_edge_hz();
            top.latency_input_samples = plan.latency_input_frames();
            top.latency_output_samples = plan.latency_output_frames();
            top.latency_ms = plan.latency_ms();
            top.table_bytes_f32 = plan
                .stages()
                .iter()
                .map(|d| d.report().table_bytes_f32)
                .sum();
            top.table_bytes_f64 = plan
                .stages()
                .iter()
                .map(|d| d.report().table_bytes_f64)
                .sum();
        }
        top.stages = Some(stages);
        top
    }
}

/// What a sweep-through measurement found, under the keys `verify` and `grade` share.
#[derive(Debug, Serialize)]
pub struct Metrics {
    /// Rejection, dB.
    pub rejection_db: f64,
    /// Passband ripple, dB peak to peak.
    pub passband_ripple_db: f64,
    /// -0.1 dB bandwidth, Hz (null when not reached).
    pub bandwidth_0_1db_hz: Option<f64>,
    /// -3 dB bandwidth, Hz (null when not reached).
    pub bandwidth_3db_hz: Option<f64>,
    /// Latency by correlation, output samples.
    pub latency_samples: f64,
    /// Latency by correlation, ms.
    pub latency_ms: f64,
    /// Input (sweep) rate, Hz.
    pub in_rate: u32,
    /// Output rate, Hz.
    pub out_rate: u32,
    /// Level of the wanted tone, dBFS.
    pub reference_dbfs: f64,
    /// Frequency of the wanted tone, Hz.
    pub reference_hz: f64,
    /// Passband edge used for the ripple, Hz.
    pub passband_edge_hz: f64,
    /// Strongest unwanted component, dBFS.
    pub worst_unwanted_dbfs: f64,
    /// Its frequency, Hz.
    pub worst_unwanted_hz: f64,
    /// Its time in the output, s.
    pub worst_unwanted_time_s: f64,
}

impl Metrics {
    /// From a measurement.
    pub fn new(m: &Measurement) -> Self {
        Self {
            rejection_db: m.rejection_db,
            passband_ripple_db: m.passband_ripple_db,
            bandwidth_0_1db_hz: m.bandwidth_0_1db_hz,
            bandwidth_3db_hz: m.bandwidth_3db_hz,
            latency_samples: m.latency_samples,
            latency_ms: m.latency_ms,
            in_rate: m.in_rate,
            out_rate: m.out_rate,
            reference_dbfs: m.reference_dbfs,
            reference_hz: m.reference_hz,
            passband_edge_hz: m.passband_edge_hz,
            worst_unwanted_dbfs: m.worst.unwanted_dbfs,
            worst_unwanted_hz: m.worst.unwanted_hz,
            worst_unwanted_time_s: m.worst.time_s,
        }
    }
}

/// `verify --json`.
#[derive(Debug, Serialize)]
pub struct Verify {
    /// The measurement.
    #[serde(flatten)]
    pub metrics: Metrics,
    /// Stopband asked for, dB.
    pub requested_stopband_db: f64,
    /// The ripple a pass allows, dB.
    pub ripple_limit_db: f64,
    /// The design's measured stopband, dB.
    pub design_stopband_db: f64,
    /// The design's latency, output samples.
    pub design_latency_samples: f64,
    /// The minimum-phase figures of the design.
    #[serde(flatten)]
    pub minimum: Option<VerifyMinimumPhase>,
    /// Arithmetic precision, as printed.
    pub precision: String,
    /// Sweep length, s.
    pub sweep_seconds: f64,
    /// The verdict.
    pub pass: bool,
    /// The engine measured: "fixed-ratio" or "any-ratio".
    pub engine: &'static str,
    /// Why the any-ratio engine, in words.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub engine_reason: Option<String>,
    /// Clock correction measured, ppm.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub clock_ppm: Option<f64>,
    /// Under a clock correction: the whole input rate the sweep was made at (near the true
    /// rate), Hz.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub measured_in_rate: Option<u32>,
    /// The whole output rate it was measured at, Hz.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub measured_out_rate: Option<u32>,
    /// Relative difference of the measured ratio from the exact one, ppm.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub ratio_difference_ppm: Option<f64>,
    /// The stages measured (one, or two: what `convert` runs); absent for the any-ratio
    /// engine.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub stages: Option<Vec<super::stages::StageFact>>,
    /// Why the rejection reads below the request, with a hint (absent when it meets it).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub note: Option<String>,
}

/// The minimum-phase figures `verify` adds.
#[derive(Debug, Serialize)]
pub struct VerifyMinimumPhase {
    /// Always "minimum".
    pub phase: &'static str,
    /// The design's group delay at 1 kHz, ms.
    pub design_group_delay_1khz_ms: f64,
    /// The design's group-delay variation over the passband, ms.
    pub design_group_delay_variation_ms: f64,
}

/// `grade --json`.
#[derive(Debug, Serialize)]
pub struct Grade {
    /// The measurement.
    #[serde(flatten)]
    pub metrics: Metrics,
    /// The channel measured, from 1.
    pub channel: usize,
    /// Channels in the file.
    pub channels: usize,
    /// `--expect-db`, when given.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub expected_db: Option<f64>,
    /// The verdict, when `--expect-db` is given.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub pass: Option<bool>,
}

/// `tradeoff --json`.
#[derive(Debug, Serialize)]
pub struct Tradeoff<'a> {
    /// Input rate, Hz.
    pub in_rate: u32,
    /// Output rate, Hz.
    pub out_rate: u32,
    /// Sweep length, s.
    pub sweep_seconds: f64,
    /// Clock correction measured (the any-ratio engine), ppm.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub clock_ppm: Option<f64>,
    /// How speed is measured, in words.
    pub speed: &'static str,
    /// One row per method.
    pub rows: Vec<TradeoffRow<'a>>,
}

/// One row of `tradeoff --json`.
#[derive(Debug, Serialize)]
pub struct TradeoffRow<'a> {
    /// Method.
    pub method: &'a str,
    /// Filter phase, "linear" or "minimum" (sinc rows).
    pub phase: Option<&'static str>,
    /// Stopband asked for, dB (sinc rows).
    pub requested_db: Option<f64>,
    /// Taps per phase (sinc rows).
    pub taps_per_phase: Option<usize>,
    /// Rejection measured, dB.
    pub rejection_db: f64,
    /// Passband ripple measured, dB.
    pub passband_ripple_db: f64,
    /// Latency, ms.
    pub latency_ms: f64,
    /// Delay measured by correlation, ms.
    pub measured_delay_ms: f64,
    /// Latency of a live stream measured: `latency_ms + measured_delay_ms`.
    pub measured_latency_ms: f64,
    /// Speed, multiple of real time.
    pub speed_x_realtime: f64,
    /// Table bytes in f32 (sinc rows).
    pub table_bytes_f32: Option<u64>,
    /// Why a row measures below its request.
    pub note: Option<&'a str>,
    /// The stages in words, for a design run in two stages (absent otherwise).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub stages: Option<&'a str>,
}

#[cfg(test)]
mod tests {
    use super::*;

    // Non-finite numbers become null and optional keys are left out (serde_json's
    // documented behaviour for non-finite floats).
    #[test]
    fn non_finite_numbers_are_null_and_absent_options_are_left_out() {
        let g = Grade {
            metrics: Metrics {
                rejection_db: f64::INFINITY,
                passband_ripple_db: 0.0,
                bandwidth_0_1db_hz: None,
                bandwidth_3db_hz: Some(20_000.0),
                latency_samples: f64::NAN,
                latency_ms: 0.5,
                in_rate: 44_100,
                out_rate: 48_000,
                reference_dbfs: -6.0,
                reference_hz: 1000.0,
                passband_edge_hz: 20_000.0,
                worst_unwanted_dbfs: -150.0,
                worst_unwanted_hz: 23_000.0,
                worst_unwanted_time_s: 9.5,
            },
            channel: 1,
            channels: 2,
            expected_db: None,
            pass: None,
        };
        let v: serde_json::Value = serde_json::from_str(&line(&g)).unwrap();
        assert!(v["rejection_db"].is_null());
        assert!(v["latency_samples"].is_null());
        assert!(v["bandwidth_0_1db_hz"].is_null());
        assert_eq!(v["bandwidth_3db_hz"], 20_000.0);
        assert_eq!(v["channel"], 1);
        let o = v.as_object().unwrap();
        assert!(!o.contains_key("pass") && !o.contains_key("expected_db"));
        assert!(!o.contains_key("metrics"));
    }
}
