//! What one conversion did, for the per-file report line and `--json`.

use std::path::PathBuf;

use super::format::fmt_db;
use crate::audio::wav::{Encoding, LevelStats};
use crate::quality::Precision;

/// The facts of one converted file.
#[derive(Debug, Clone, PartialEq)]
pub struct FileReport {
    /// Input path.
    pub input: PathBuf,
    /// Output path.
    pub output: PathBuf,
    /// Input rate, Hz.
    pub in_rate: u32,
    /// Output rate, Hz.
    pub out_rate: u32,
    /// Channels.
    pub channels: u16,
    /// Input encoding.
    pub in_encoding: Encoding,
    /// Output encoding.
    pub out_encoding: Encoding,
    /// Input frames.
    pub frames_in: u64,
    /// Output frames.
    pub frames_out: u64,
    /// Duration, seconds.
    pub seconds: f64,
    /// Wall-clock time taken, seconds.
    pub elapsed_s: f64,
    /// Stopband attenuation asked of the design, dB.
    pub requested_stopband_db: f64,
    /// Stopband attenuation measured on the design's prototype, dB.
    pub measured_stopband_db: f64,
    /// Passband edge (fraction of the lower Nyquist frequency).
    pub passband: f64,
    /// Filter taps per output sample.
    pub taps_per_phase: usize,
    /// Arithmetic precision.
    pub precision: Precision,
    /// Whether TPDF dither was added.
    pub dithered: bool,
    /// Gain applied, dB.
    pub gain_db: f64,
    /// Non-finite input samples replaced by 0.
    pub sanitized: u64,
    /// Output level figures.
    pub levels: LevelStats,
}

impl FileReport {
    /// Audio seconds converted per second of wall-clock time.
    pub fn speed(&self) -> f64 {
        if self.elapsed_s > 0.0 {
            self.seconds / self.elapsed_s
        } else {
            f64::INFINITY
        }
    }
}

impl FileReport {
    /// The one-line report: in -> out, rates, frames, duration, speed, peak, clipped, and
    /// how (stopband, precision, dither).
    pub fn line(&self) -> String {
        let enc = if self.in_encoding == self.out_encoding {
            self.out_encoding.to_string()
        } else {
            format!("{} -> {}", self.in_encoding, self.out_encoding)
        };
        let mut s = format!(
            "{} -> {}: {} -> {} Hz, {} ch, {enc}, {} -> {} frames, {:.3} s, {:.1}x real time, \
             peak {} dBFS",
            self.input.display(),
            self.output.display(),
            self.in_rate,
            self.out_rate,
            self.channels,
            self.frames_in,
            self.frames_out,
            self.seconds,
            self.speed(),
            fmt_db(self.levels.peak_dbfs()),
        );
        if self.out_encoding.is_float() {
            s.push_str(&format!(", {} over 0 dBFS (kept: float)", self.levels.over));
        } else {
            s.push_str(&format!(", clipped {}", self.levels.clipped));
        }
        if let Some(g) = self.levels.suggested_gain_db() {
            s.push_str(&format!(" (try --gain {:.1})", g + self.gain_db));
        }
        if self.sanitized > 0 {
            s.push_str(&format!(", {} non-finite samples zeroed", self.sanitized));
        }
        s.push_str(&format!(
            " [stopband {} dB, {} arithmetic, {}{}]",
            fmt_db(self.requested_stopband_db),
            self.precision,
            if self.dithered {
                "TPDF dither"
            } else {
                "no dither"
            },
            if self.gain_db != 0.0 {
                format!(", gain {:+.2} dB", self.gain_db)
            } else {
                String::new()
            }
        ));
        s
    }

    /// The report as a JSON object (non-finite numbers become null).
    pub fn json(&self) -> serde_json::Value {
        let num = |v: f64| {
            if v.is_finite() {
                serde_json::json!(v)
            } else {
                serde_json::Value::Null
            }
        };
        serde_json::json!({
            "status": "converted",
            "input": self.input.display().to_string(),
            "output": self.output.display().to_string(),
            "in_rate": self.in_rate,
            "out_rate": self.out_rate,
            "channels": self.channels,
            "in_format": self.in_encoding.to_string(),
            "out_format": self.out_encoding.to_string(),
            "frames_in": self.frames_in,
            "frames_out": self.frames_out,
            "duration_s": self.seconds,
            "elapsed_s": self.elapsed_s,
            "speed_x_real_time": num(self.speed()),
            "peak_dbfs": num(self.levels.peak_dbfs()),
            "over_full_scale": self.levels.over,
            "clipped": self.levels.clipped,
            "suggested_gain_db": self.levels.suggested_gain_db().map(|g| g + self.gain_db),
            "gain_db": self.gain_db,
            "sanitized": self.sanitized,
            "requested_stopband_db": self.requested_stopband_db,
            "measured_stopband_db": num(self.measured_stopband_db),
            "passband": self.passband,
            "taps_per_phase": self.taps_per_phase,
            "precision": self.precision.to_string(),
            "dither": if self.dithered { "tpdf" } else { "none" },
        })
    }
}
