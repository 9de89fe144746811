//! One file through the any-ratio engine ([`GlideConverter`]): for a clock correction
//! (`--clock-ppm P`, the input's true rate is its header rate times `1 + P x 1e-6`), and for
//! rate pairs whose fixed polyphase table would exceed the table budget (44100 -> 48001).
//!
//! Output sample `m` is the input at time `m / R` seconds on the input's true clock (zero
//! added delay: the converter's clock starts at the first input frame and its look-ahead is
//! filled with zeros after the input's end, not shifted), and there are exactly
//! `ceil(n x R / true rate)` of them ([`ClockPpm::output_len`], exact integers). The file
//! streams block by block like the fixed engine's sequential path, so memory does not grow
//! with the file's length. Metadata positions move by the true ratio
//! ([`crate::audio::wav::Retiming::clock`]).

use std::path::Path;
use std::sync::atomic::Ordering;
use std::time::Instant;

use resample_core::{GlideConverter, GlideDesign, Kernel, Phase, Sample};

use super::{
    open_output, Control, ConvertError, DesignCache, FileReport, Run, Settings, BLOCK_FRAMES,
    SYNC_EVERY_BYTES,
};
use crate::audio::wav::metadata::carry;
use crate::audio::wav::{Dither, NonFinite, Retiming, WavWriter};
use crate::audio::Input;
use crate::clock::ClockPpm;
use crate::quality::{default_stopband_db, precision_for, Precision};

/// Name of the fixed engine in reports.
pub const FIXED_ENGINE: &str = "fixed-ratio";
/// Name of the any-ratio engine in reports.
pub const ANY_RATIO_ENGINE: &str = "any-ratio";

/// Why the any-ratio engine runs instead of the fixed one.
#[derive(Debug, Clone, PartialEq)]
pub enum Why {
    /// A clock correction was asked for.
    Clock(ClockPpm),
    /// The fixed table for the pair would be larger than the budget.
    TableBudget {
        /// Up and down factors of the pair.
        up: u64,
        /// Down factor.
        down: u64,
        /// Bytes (f64) the fixed table would need.
        needed_bytes: u64,
        /// The budget, bytes.
        budget_bytes: u64,
    },
    /// A minimum-phase fixed filter for the pair would be longer than can be made minimum
    /// phase (the any-ratio engine's prototype, for the pair 1 -> P, is far shorter).
    MinimumPhaseLength {
        /// Taps the fixed filter would need.
        taps: usize,
        /// The most taps that can be made minimum phase.
        max_taps: usize,
    },
}

impl Why {
    /// The reason in words, for reports.
    pub fn words(&self) -> String {
        match self {
            Why::Clock(p) => format!("input clock corrected by {p} ppm"),
            Why::TableBudget {
                up,
                down,
                needed_bytes,
                budget_bytes,
            } => format!(
                "the fixed table for ratio {up}/{down} would need {} MiB, over the {} MiB \
                 budget",
                needed_bytes.div_ceil(1 << 20),
                budget_bytes >> 20
            ),
            Why::MinimumPhaseLength { taps, max_taps } => format!(
                "the minimum-phase fixed filter would need {taps} taps, over the {max_taps} \
                 that can be made minimum phase"
            ),
        }
    }

    /// The reason to take the any-ratio engine when the fixed engine's plan for a pair
    /// failed with `e` (none for errors the any-ratio engine would not avoid).
    pub fn instead_of(e: &resample_core::Error) -> Option<Self> {
        match *e {
            resample_core::Error::TableTooLarge {
                up,
                down,
                needed_bytes,
                budget_bytes,
            } => Some(Why::TableBudget {
                up,
                down,
                needed_bytes,
                budget_bytes,
            }),
            resample_core::Error::MinimumPhaseTooLong { taps, max_taps } => {
                Some(Why::MinimumPhaseLength { taps, max_taps })
            }
            _ => None,
        }
    }

    /// The clock correction (zero for a table-budget run).
    pub fn clock(&self) -> ClockPpm {
        match self {
            Why::Clock(p) => *p,
            Why::TableBudget { .. } | Why::MinimumPhaseLength { .. } => ClockPpm::ZERO,
        }
    }
}

/// What the any-ratio engine ran with, for the report.
#[derive(Debug, Clone, PartialEq)]
pub struct AnyRatioRun {
    /// Why it ran.
    pub why: Why,
    /// The input's true rate, Hz (header rate times the clock correction).
    pub true_in_rate: f64,
    /// The ratio it ran at, output rate / true input rate.
    pub ratio: f64,
    /// Phases per input sample of its table.
    pub phases: u64,
    /// Interpolation between phases ("linear", "cubic").
    pub interpolation: &'static str,
    /// Measured error of the interpolated taps, dB.
    pub interpolation_error_db: f64,
}

/// Which engine a pair and settings call for: `None` for the fixed engine, the reason for
/// the any-ratio one. A clock correction always takes the any-ratio engine; otherwise the
/// fixed plan is made (cached under the key the conversion then reads), and a table over
/// the budget, or a minimum-phase filter too long to be made minimum phase, moves the pair
/// to the any-ratio engine ([`Why::instead_of`]). Other design errors are left to the fixed
/// path.
pub fn route(
    in_rate: u32,
    settings: &Settings,
    stopband_db: f64,
    designs: &DesignCache,
) -> Option<Why> {
    if !settings.clock.is_zero() {
        return Some(Why::Clock(settings.clock));
    }
    // Most linear-phase pairs fit the table budget whatever the design turns out to be:
    // then the fixed engine designs its filter while the input is being read. Only the
    // others are designed here, before reading, and minimum-phase ones, whose length limit
    // only the design tells.
    if settings.phase == Phase::Linear
        && designs.surely_fits(
            in_rate,
            settings.out_rate,
            stopband_db,
            settings.passband,
            settings.phase,
        )
    {
        return None;
    }
    // The plan the conversion runs (cached, so the conversion does not design it again).
    designs
        .plan(
            in_rate,
            settings.out_rate,
            stopband_db,
            settings.passband,
            settings.phase,
            settings.stages,
        )
        .err()
        .and_then(|e| Why::instead_of(&e))
}

/// The clock correction's words for the CodingHistory text (no commas).
fn history_note(why: &Why) -> String {
    match why {
        Why::Clock(p) => format!("; any-ratio engine; input clock corrected by {p} ppm"),
        Why::TableBudget { .. } | Why::MinimumPhaseLength { .. } => "; any-ratio engine".into(),
    }
}

/// Convert `reader` with the any-ratio engine (see the module documentation); the
/// counterpart of the fixed engine's conversion, with the same metadata, writer, level and
/// clipping rules.
#[allow(clippy::too_many_arguments)]
pub(super) fn convert_input(
    mut reader: Input,
    input: &Path,
    output: Option<&Path>,
    settings: &Settings,
    designs: &DesignCache,
    why: Why,
    ctl: Control<'_>,
    start: Instant,
) -> Result<(FileReport, Vec<u8>), ConvertError> {
    let info = reader.info().clone();
    let encoding = settings.encoding.unwrap_or(info.encoding);
    let stopband = settings
        .stopband_db
        .unwrap_or_else(|| default_stopband_db(encoding));
    let precision = precision_for(stopband);
    let clock = why.clock();
    let retiming = Retiming {
        in_rate: info.sample_rate,
        out_rate: settings.out_rate,
        in_block_align: info.channels.saturating_mul(info.container_bits / 8),
        out_block_align: info.channels.saturating_mul(encoding.bytes()),
        out_bits: encoding.bits(),
        coding_history: format!(
            "{}{}",
            super::coding_history_line(&info, settings.out_rate, encoding, stopband),
            history_note(&why)
        ),
        clock,
    };
    let mut cues = std::collections::HashMap::new();
    let (before, mut metadata) = carry(
        reader.chunks_before_data(),
        settings.metadata,
        &retiming,
        &mut cues,
    );
    let design = designs.glide(
        info.sample_rate,
        settings.out_rate,
        stopband,
        settings.passband,
        settings.phase,
    )?;
    let ratio = clock.ratio(info.sample_rate, settings.out_rate);
    let mut writer = open_output(
        output,
        settings,
        info.channels,
        encoding,
        reader.channel_mask(),
        before,
    )?;
    // As in the fixed engine: the disk catches up on a thread of its own meanwhile.
    writer.sync_every(SYNC_EVERY_BYTES)?;
    let run = Run {
        gain: 10f64.powf(settings.gain_db / 20.0),
        non_finite: if settings.sanitize {
            NonFinite::Zero
        } else {
            NonFinite::Refuse
        },
        bytes_per_frame: u64::from(info.channels) * u64::from(info.encoding.bytes()),
        ctl,
    };
    let mut job = Job {
        run: &run,
        design: &design,
        ratio,
        clock,
        in_rate: info.sample_rate,
        out_rate: settings.out_rate,
    };
    let frames_in = match precision {
        Precision::F32 => job.stream::<f32>(&mut reader, &mut writer)?,
        Precision::F64 => job.stream::<f64>(&mut reader, &mut writer)?,
    };
    let (found, notes) = reader.chunks_after_data()?;
    let (after, more) = carry(&found, settings.metadata, &retiming, &mut cues);
    metadata.extend(more);
    metadata.dropped.extend(notes);
    writer.set_chunks_after_data(after);
    let header_warning = reader.header_warning().map(str::to_owned);
    let frames_out = clock.output_len(frames_in, info.sample_rate, settings.out_rate);
    let (levels, bytes) = super::finish_writer(writer, frames_out, settings)?;
    let dithered = levels.dithered > 0;
    let r = design.report();
    let report = FileReport {
        stages: None,
        input: input.to_path_buf(),
        output: output.map(Path::to_path_buf).unwrap_or_default(),
        in_rate: info.sample_rate,
        out_rate: settings.out_rate,
        channels: info.channels,
        in_encoding: info.encoding,
        out_encoding: encoding,
        frames_in,
        frames_out,
        seconds: frames_in as f64 / f64::from(info.sample_rate),
        elapsed_s: start.elapsed().as_secs_f64(),
        requested_stopband_db: stopband,
        measured_stopband_db: r.kernel_stopband_db.min(-r.interpolation_error_db),
        passband: settings.passband,
        taps_per_phase: r.taps_per_output,
        precision,
        dithered,
        dither_asked: settings.dither == Dither::Tpdf,
        gain_db: settings.gain_db,
        sanitized: reader.sanitized(),
        levels,
        metadata,
        warnings: header_warning.into_iter().collect(),
        any_ratio: Some(AnyRatioRun {
            true_in_rate: clock.true_rate(info.sample_rate),
            ratio,
            phases: r.phases,
            interpolation: r.interpolation.name(),
            interpolation_error_db: r.interpolation_error_db,
            why,
        }),
    };
    Ok((report, bytes))
}

/// One conversion's engine inputs.
struct Job<'a> {
    run: &'a Run<'a>,
    design: &'a GlideDesign,
    ratio: f64,
    clock: ClockPpm,
    in_rate: u32,
    out_rate: u32,
}

impl Job<'_> {
    /// Read, convert and write the whole input; returns the input frames read. After the
    /// input, zeros are fed until exactly `ceil(n x R / true rate)` frames are written.
    fn stream<T: Sample>(
        &mut self,
        reader: &mut Input,
        writer: &mut WavWriter,
    ) -> Result<u64, ConvertError> {
        let ch = usize::from(reader.info().channels);
        let mut conv =
            GlideConverter::<T>::with_kernel(self.design, ch, self.ratio, Kernel::detect())?;
        let room = conv.max_output_frames(BLOCK_FRAMES).max(1);
        let mut out = vec![T::zero(); room * ch];
        let mut inb = Vec::new();
        let mut written = 0u64;
        loop {
            if self.run.ctl.cancel.load(Ordering::Relaxed) {
                return Err(crate::error::FileError::Interrupted.into());
            }
            let n = self.run.read_block(reader, &mut inb)?;
            if n == 0 {
                break;
            }
            let mut off = 0;
            while off < n {
                let p = conv.process_interleaved(&inb[off * ch..n * ch], &mut out)?;
                writer.write_frames(&out[..p.frames_written * ch])?;
                written += p.frames_written as u64;
                off += p.frames_read;
                if p.frames_read == 0 && p.frames_written == 0 {
                    break;
                }
            }
            self.run.progress(n as u64 * self.run.bytes_per_frame);
        }
        let frames_in = conv.input_frames();
        let want = self
            .clock
            .output_len(frames_in, self.in_rate, self.out_rate);
        // The outputs whose times fall before the end of the input but whose kernels reach
        // past it: computed with zeros after the input (the same as a flush), and no more.
        let zeros = vec![T::zero(); BLOCK_FRAMES * ch];
        while written < want {
            let k = usize::try_from(want - written)
                .unwrap_or(usize::MAX)
                .min(room);
            let p = conv.process_interleaved(&zeros, &mut out[..k * ch])?;
            if p.frames_written == 0 && p.frames_read == 0 {
                break;
            }
            writer.write_frames(&out[..p.frames_written * ch])?;
            written += p.frames_written as u64;
        }
        Ok(frames_in)
    }
}

impl Run<'_> {
    /// Report progress of `bytes` input bytes.
    fn progress(&self, bytes: u64) {
        (self.ctl.progress)(bytes);
    }
}

/// The engine a measurement (`verify`, `tradeoff`) runs: the one `convert` would run for
/// the same request.
#[derive(Debug)]
// Made once per measurement: the size difference of the variants costs nothing.
#[allow(clippy::large_enum_variant)]
pub enum Chosen {
    /// The fixed-ratio engine and its stages (one, or two where `convert` runs two).
    Fixed(resample_core::StagePlan),
    /// The any-ratio engine.
    AnyRatio {
        /// Its table.
        design: GlideDesign,
        /// Why it runs.
        why: Why,
        /// Output rate / true input rate.
        ratio: f64,
        /// The input's rate as the measurement takes it, Hz.
        in_rate: f64,
    },
}

impl Chosen {
    /// Choose as `convert` does: a non-zero clock correction, or a fixed plan that fails
    /// in a way the any-ratio engine avoids ([`Why::instead_of`]), takes the any-ratio
    /// engine; otherwise the stages `spec` plans ([`resample_core::FilterSpec::plan`], its
    /// stage choice).
    pub fn new(
        spec: &resample_core::FilterSpec,
        clock: ClockPpm,
    ) -> Result<Self, resample_core::Error> {
        let why = if clock.is_zero() {
            match spec.plan() {
                Ok(p) => return Ok(Self::Fixed(p)),
                Err(e) => Why::instead_of(&e).ok_or(e)?,
            }
        } else {
            Why::Clock(clock)
        };
        Ok(Self::AnyRatio {
            design: spec.design_glide()?,
            ratio: clock.ratio(spec.in_rate(), spec.out_rate()),
            in_rate: clock.true_rate(spec.in_rate()),
            why,
        })
    }

    /// The same engine measured between the whole rates `a -> b` (the sweep analyser's
    /// rates; [`ClockPpm::analysis_pair`]): the any-ratio engine then runs at `b / a`.
    pub fn measured_between(mut self, a: u32, b: u32) -> Self {
        if let Self::AnyRatio { ratio, in_rate, .. } = &mut self {
            *ratio = f64::from(b) / f64::from(a);
            *in_rate = f64::from(a);
        }
        self
    }

    /// Run `x` through the engine in `T`, as `convert` does.
    pub fn run<T: Sample>(&self, x: &[f64]) -> anyhow::Result<Vec<f64>> {
        match self {
            Self::Fixed(p) => super::run_plan::<T>(p, x),
            Self::AnyRatio { design, ratio, .. } => super::run_glide::<T>(design, *ratio, x),
        }
    }

    /// The engine's name for reports.
    pub fn name(&self) -> &'static str {
        match self {
            Self::Fixed(_) => FIXED_ENGINE,
            Self::AnyRatio { .. } => ANY_RATIO_ENGINE,
        }
    }

    /// Why the any-ratio engine runs, in words (`None` for the fixed one).
    pub fn reason(&self) -> Option<String> {
        match self {
            Self::Fixed(_) => None,
            Self::AnyRatio { why, .. } => Some(why.words()),
        }
    }

    /// The passband edge of the design, Hz: the fraction of the lower Nyquist frequency,
    /// `in_rate x min(1, ratio) / 2`.
    pub fn passband_edge_hz(&self) -> f64 {
        match self {
            Self::Fixed(p) => p.passband_edge_hz(),
            Self::AnyRatio {
                design,
                ratio,
                in_rate,
                ..
            } => design.report().passband_fraction * in_rate * ratio.min(1.0) / 2.0,
        }
    }

    /// The design's own stopband figure, dB: the fixed prototype's measured stopband, or
    /// for the any-ratio table the lower of its prototype's stopband and its measured
    /// interpolation error.
    pub fn design_stopband_db(&self) -> f64 {
        match self {
            Self::Fixed(p) => p.measured_stopband_db(),
            Self::AnyRatio { design, .. } => {
                let r = design.report();
                r.kernel_stopband_db.min(-r.interpolation_error_db)
            }
        }
    }

    /// The filter's delay in a live stream, output samples and ms.
    pub fn latency(&self) -> (f64, f64) {
        match self {
            Self::Fixed(p) => (p.latency_output_frames(), p.latency_ms()),
            Self::AnyRatio {
                design,
                ratio,
                in_rate,
                ..
            } => {
                let delay_in = design.report().delay_input_frames / ratio.min(1.0);
                (delay_in * ratio, 1000.0 * delay_in / in_rate)
            }
        }
    }
}
