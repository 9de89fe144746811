//! What one conversion did, for the per-file report line and `--json`.

use std::path::PathBuf;

use super::format::{fixed, fmt_db};
use crate::audio::wav::{Encoding, LevelStats, MetadataSummary};
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
    /// Whether TPDF dither was added (to at least one sample).
    pub dithered: bool,
    /// Whether dither was asked for (it applies to integer output of 24 bits or fewer, and
    /// only to samples off the output's code grid).
    pub dither_asked: bool,
    /// Gain applied, dB.
    pub gain_db: f64,
    /// Non-finite input samples replaced by 0.
    pub sanitized: u64,
    /// Output level figures.
    pub levels: LevelStats,
    /// What became of the input's metadata chunks.
    pub metadata: MetadataSummary,
    /// Problems with the input that were worked around (a header whose sizes were never
    /// completed), for stderr and the JSON.
    pub warnings: Vec<String>,
    /// The any-ratio engine's run (clock correction, or a pair over the fixed table's
    /// budget); `None` when the fixed-ratio engine ran.
    pub any_ratio: Option<crate::convert::AnyRatioRun>,
    /// The stages the fixed-ratio engine ran (one, or two); `None` for the any-ratio engine.
    pub stages: Option<super::stages::StageFacts>,
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

/// An encoding in few characters: "16-bit", "float".
fn short(e: Encoding) -> String {
    match e {
        Encoding::Int(b) => format!("{b}-bit"),
        Encoding::Float32 => "float".into(),
    }
}

/// What samples over full scale call for, as printed: the headroom needed and the `--gain`
/// that gives it (on top of the gain already applied).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Overs {
    /// Headroom needed, dB (one decimal).
    pub headroom: String,
    /// The `--gain` value that avoids the overs, dB (one decimal).
    pub gain: String,
}

impl Overs {
    /// From the level figures and the gain already applied.
    pub fn new(levels: &LevelStats, gain_db: f64) -> Self {
        let step = levels.suggested_gain_db().unwrap_or(0.0);
        Self {
            headroom: fixed(-step, 1),
            gain: fixed(step + gain_db, 1),
        }
    }
}

impl FileReport {
    /// The report: the paths, then two lines of at most 80 columns for usual values: rates,
    /// channels, format, duration and speed; then the peak (measured before any limiting)
    /// and overs, and how (stopband, arithmetic, dither, gain); then, for two stages or a
    /// forced single stage, the stages that ran.
    pub fn line(&self) -> String {
        let enc = if self.in_encoding == self.out_encoding {
            short(self.out_encoding)
        } else {
            format!(
                "{} -> {}",
                short(self.in_encoding),
                short(self.out_encoding)
            )
        };
        let first = format!(
            "  {} -> {} Hz, {} ch, {enc}, {:.3} s, {:.0}x real time",
            self.in_rate,
            self.out_rate,
            self.channels,
            self.seconds,
            self.speed(),
        );
        let mut second = format!("  peak {} dBFS", fmt_db(self.levels.peak_dbfs()));
        if self.levels.clipped > 0 {
            second.push_str(&format!(", {} limited", self.levels.clipped));
        } else if self.levels.over > 0 {
            second.push_str(&format!(", {} over 0 dBFS (kept)", self.levels.over));
        }
        second.push_str(&format!(
            "; {} dB stopband, {}, {}",
            fmt_db(self.requested_stopband_db),
            self.precision,
            self.dither_words(),
        ));
        if self.gain_db != 0.0 {
            second.push_str(&format!(", gain {} dB", self.gain_db));
        }
        if self.sanitized > 0 {
            second.push_str(&format!(", {} non-finite zeroed", self.sanitized));
        }
        let mut text = format!(
            "{} -> {}\n{first}\n{second}",
            self.input.display(),
            self.output.display()
        );
        if let Some(s) = self.stages.as_ref().filter(|s| s.worth_a_line()) {
            text.push_str(&format!("\n  {}", s.words()));
        }
        if let Some(a) = &self.any_ratio {
            text.push_str(&format!(
                "\n  {} engine: {}\n  true input rate {} Hz, ratio {:.9}\n  table of {} phases, {} \
                 interpolation ({} dB error)",
                crate::convert::ANY_RATIO_ENGINE,
                a.why.words(),
                crate::report::format::plain(a.true_in_rate),
                a.ratio,
                a.phases,
                a.interpolation,
                fmt_db(a.interpolation_error_db),
            ));
        }
        let m = &self.metadata;
        for (what, list) in [
            ("metadata carried", &m.carried),
            ("rescaled", &m.rescaled),
            ("dropped", &m.dropped),
        ] {
            if !list.is_empty() {
                text.push_str(&format!("\n  {what}: {}", list.join("; ")));
            }
        }
        text
    }

    /// The dither actually used, in words.
    fn dither_words(&self) -> &'static str {
        if self.dithered {
            "TPDF dither"
        } else if self.levels.samples > 0
            && self.levels.dithered == 0
            && matches!(self.out_encoding, Encoding::Int(b) if b <= 24)
            && self.dither_asked
        {
            "no dither needed"
        } else {
            "no dither"
        }
    }

    /// The warning for stderr when samples over full scale were limited (integer output).
    pub fn limit_warning(&self) -> Option<String> {
        if self.levels.clipped == 0 {
            return None;
        }
        let o = Overs::new(&self.levels, self.gain_db);
        Some(format!(
            "{}: {} samples over full scale, limited (peak {} dBFS, measured before \
             limiting); {} dB of headroom needed: --gain {}",
            self.output.display(),
            self.levels.clipped,
            fmt_db(self.levels.peak_dbfs()),
            o.headroom,
            o.gain
        ))
    }

    /// The report as one line of JSON (non-finite numbers become null).
    pub fn json(&self) -> String {
        super::json::line(&super::json::Converted {
            status: "converted",
            input: self.input.display().to_string(),
            output: self.output.display().to_string(),
            in_rate: self.in_rate,
            out_rate: self.out_rate,
            channels: self.channels,
            in_format: self.in_encoding.to_string(),
            out_format: self.out_encoding.to_string(),
            frames_in: self.frames_in,
            frames_out: self.frames_out,
            duration_s: self.seconds,
            elapsed_s: self.elapsed_s,
            speed_x_real_time: self.speed(),
            peak_dbfs: self.levels.peak_dbfs(),
            over_full_scale: self.levels.over,
            clipped: self.levels.clipped,
            suggested_gain_db: self.levels.suggested_gain_db().map(|g| g + self.gain_db),
            gain_db: self.gain_db,
            sanitized: self.sanitized,
            requested_stopband_db: self.requested_stopband_db,
            measured_stopband_db: self.measured_stopband_db,
            passband: self.passband,
            taps_per_phase: self.taps_per_phase,
            precision: self.precision.to_string(),
            dither: if self.dithered { "tpdf" } else { "none" },
            dithered_samples: self.levels.dithered,
            peak_measured: "before limiting",
            metadata: super::json::MetadataRecord {
                carried: self.metadata.carried.clone(),
                rescaled: self.metadata.rescaled.clone(),
                dropped: self.metadata.dropped.clone(),
            },
            warnings: self.warnings.clone(),
            engine: match &self.any_ratio {
                Some(_) => crate::convert::ANY_RATIO_ENGINE,
                None => crate::convert::FIXED_ENGINE,
            },
            engine_reason: self.any_ratio.as_ref().map(|a| a.why.words()),
            clock_ppm: self.any_ratio.as_ref().map(|a| a.why.clock().ppm()),
            true_in_rate_hz: self.any_ratio.as_ref().map(|a| a.true_in_rate),
            interpolation_error_db: self.any_ratio.as_ref().map(|a| a.interpolation_error_db),
            stages: self.stages.as_ref().map(|s| s.list.clone()),
        })
    }
}
