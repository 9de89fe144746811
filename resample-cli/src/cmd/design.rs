//! `rerate design`: show (or export) the filter a conversion would use.

use std::io::Write;
use std::path::{Path, PathBuf};

use anyhow::{Context, Result};
use clap::Args;
use resample_core::{DesignReport, FilterSpec};
use serde_json::json;

use resample_cli::staged::StagedFile;

use crate::cmd::sweep::wav_error;
use crate::output::fmt_db;
use crate::rate::parse_rate;

/// Options of `rerate design`.
#[derive(Debug, Args)]
pub struct DesignArgs {
    /// Input sample rate (48000, 48k, 44.1k, 44.1kHz).
    #[arg(long, value_parser = parse_rate)]
    pub in_rate: u32,
    /// Output sample rate.
    #[arg(long, value_parser = parse_rate)]
    pub out_rate: u32,
    /// Minimum stopband attenuation in dB (20 to 200).
    #[arg(long, default_value_t = resample_core::limits::DEFAULT_STOPBAND_DB)]
    pub stopband_db: f64,
    /// Passband edge as a fraction of the lower Nyquist frequency (0.5 to 0.995).
    #[arg(long, default_value_t = resample_core::limits::DEFAULT_PASSBAND)]
    pub passband: f64,
    /// Print the report as one JSON object.
    #[arg(long)]
    pub json: bool,
    /// Write the prototype taps to FILE, one per line, in full f64 precision.
    #[arg(long, value_name = "FILE")]
    pub export: Option<PathBuf>,
    /// Overwrite FILE given to --export if it exists.
    #[arg(long)]
    pub force: bool,
}

/// Run `rerate design`.
pub fn run(args: &DesignArgs) -> Result<()> {
    let design = FilterSpec::new(args.in_rate, args.out_rate)
        .stopband_db(args.stopband_db)
        .passband(args.passband)
        .design()
        .context("cannot design the filter")?;
    if let Some(path) = &args.export {
        let mut text = String::with_capacity(design.taps().len() * 24);
        for t in design.taps() {
            // Rust prints the shortest decimal that parses back to the same bits.
            text.push_str(&format!("{t:e}\n"));
        }
        export(path, text.as_bytes(), args.force)?;
    }
    let r = design.report();
    let mut out = std::io::stdout().lock();
    if args.json {
        writeln!(out, "{}", report_json(r))?;
    } else {
        write!(out, "{}", report_text(r))?;
        if let Some(path) = &args.export {
            writeln!(out, "taps written to {}", path.display())?;
        }
    }
    Ok(())
}

/// Write `bytes` to `path` through a temporary file moved into place when complete; never
/// replace an existing file unless `force`.
fn export(path: &Path, bytes: &[u8], force: bool) -> Result<()> {
    let (staged, mut file) = StagedFile::create(path, force).map_err(|e| wav_error(path, e))?;
    file.write_all(bytes)
        .with_context(|| format!("{}: cannot write", path.display()))?;
    drop(file);
    staged.commit().map_err(|e| wav_error(path, e))?;
    Ok(())
}

/// The report as a JSON value (non-finite numbers become null).
pub fn report_json(r: &DesignReport) -> serde_json::Value {
    let finite = |v: f64| if v.is_finite() { json!(v) } else { json!(null) };
    json!({
        "in_rate": r.in_rate,
        "out_rate": r.out_rate,
        "up": r.up,
        "down": r.down,
        "total_taps": r.total_taps,
        "taps_per_phase": r.taps_per_phase,
        "padded_taps_per_phase": r.padded_taps_per_phase,
        "formula_taps_per_phase": r.formula_taps_per_phase,
        "beta": r.beta,
        "passband_edge_hz": r.passband_edge_hz,
        "stopband_edge_hz": r.stopband_edge_hz,
        "cutoff_hz": r.cutoff_hz,
        "requested_stopband_db": r.requested_stopband_db,
        "measured_stopband_db": finite(r.measured_stopband_db),
        "passband_ripple_db": r.passband_ripple_db,
        "measured_on_phases": r.measured_on_phases,
        "attempts": r.attempts,
        "latency_input_samples": r.latency_input_frames,
        "latency_output_samples": r.latency_output_frames,
        "latency_ms": r.latency_ms,
        "table_bytes_f32": r.table_bytes_f32,
        "table_bytes_f64": r.table_bytes_f64,
    })
}

/// The report as aligned text.
pub fn report_text(r: &DesignReport) -> String {
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
    line(
        "table memory",
        format!(
            "{} bytes (f32), {} bytes (f64)",
            r.table_bytes_f32, r.table_bytes_f64
        ),
    );
    s
}

fn fmt_ripple(db: f64) -> String {
    if db < 1e-4 {
        format!("{db:.2e}")
    } else {
        format!("{db:.4}")
    }
}
