//! Converting one WAV file to another sample rate, streaming block by block (memory does
//! not grow with the file's length), in the precision and with the stopband that follow
//! the output format ([`crate::quality`]).

mod anyratio;
mod cache;
mod memory;
mod pipeline;

use std::path::Path;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Arc;
use std::time::Instant;

use resample_core::{ChainConverter, Phase, Sample, StageChoice, StagePlan};

pub use crate::report::file::{FileReport, Overs};
pub use anyratio::{AnyRatioRun, Chosen, Why, ANY_RATIO_ENGINE, FIXED_ENGINE};
pub use cache::DesignCache;
pub use memory::{run_glide, run_plan};

use crate::audio::wav::metadata::carry;
use crate::audio::wav::{
    Chunk, Dither, Encoding, LevelStats, MetadataPolicy, NonFinite, Retiming, WavError, WavWriter,
    WriterOptions,
};
use crate::audio::Input;
use crate::quality::{default_stopband_db, precision_for, Precision};

/// Input frames read per block.
pub const BLOCK_FRAMES: usize = 8192;
/// The writer has the disk catch up every this many bytes (see [`WavWriter::sync_every`]).
const SYNC_EVERY_BYTES: u64 = 4 << 20;

/// What a conversion should do (the same for every file of a batch).
#[derive(Debug, Clone, PartialEq)]
pub struct Settings {
    /// Output sample rate, Hz.
    pub out_rate: u32,
    /// Stopband attenuation, dB; `None` follows the output format
    /// ([`crate::quality::default_stopband_db`]).
    pub stopband_db: Option<f64>,
    /// Passband edge, fraction of the lower Nyquist frequency.
    pub passband: f64,
    /// The filter's phase response.
    pub phase: Phase,
    /// Output encoding; `None` keeps the input's.
    pub encoding: Option<Encoding>,
    /// Dither for integer output.
    pub dither: Dither,
    /// Gain applied before conversion, dB.
    pub gain_db: f64,
    /// Replace NaN / infinite float input samples with 0 (and count them) instead of
    /// refusing the file.
    pub sanitize: bool,
    /// Replace an existing output file.
    pub force: bool,
    /// Integer output with samples over full scale (limited) is an error: the output is
    /// not kept.
    pub refuse_clipping: bool,
    /// Read and decode, and write, on two helper threads, and convert segments of the file
    /// side by side on as many worker threads as rayon's pool has (for a file converted
    /// while cores are free). The output is the same either way.
    pub pipeline: bool,
    /// What to do with the input's metadata chunks.
    pub metadata: MetadataPolicy,
    /// Clock correction of the input (`--clock-ppm`): non-zero runs the any-ratio engine.
    pub clock: crate::clock::ClockPpm,
    /// One stage or two for the fixed-ratio engine (`--one-stage` forces one).
    pub stages: StageChoice,
}

impl Settings {
    /// Defaults for `out_rate`: stopband by format, passband 0.91, linear phase, keep the
    /// encoding, TPDF dither, no gain, refuse non-finite samples, never overwrite, pipelined.
    pub fn new(out_rate: u32) -> Self {
        Self {
            out_rate,
            stopband_db: None,
            passband: resample_core::limits::DEFAULT_PASSBAND,
            phase: Phase::Linear,
            encoding: None,
            dither: Dither::Tpdf,
            gain_db: 0.0,
            sanitize: false,
            force: false,
            refuse_clipping: false,
            pipeline: true,
            metadata: MetadataPolicy::Carry,
            clock: crate::clock::ClockPpm::ZERO,
            stages: StageChoice::Auto,
        }
    }
}

/// Why a file could not be converted.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum ConvertError {
    /// Reading or writing the WAV files.
    #[error(transparent)]
    Wav(#[from] WavError),
    /// The files as files: an existing output, an interruption, ...
    #[error(transparent)]
    File(#[from] crate::error::FileError),
    /// The filter could not be designed or the converter built.
    #[error("cannot convert: {0}")]
    Core(#[from] resample_core::Error),
    /// Samples over full scale were limited and `refuse_clipping` was set (the output was
    /// not kept).
    #[error(
        "{over} samples over full scale (peak {peak} dBFS before limiting); {headroom} dB of \
         headroom needed: --gain {gain}; output not kept (--refuse-clipping)"
    )]
    Clipped {
        /// Samples limited.
        over: u64,
        /// Peak before limiting, dBFS, as printed.
        peak: String,
        /// Headroom needed, dB, as printed.
        headroom: String,
        /// Gain that avoids it, dB, as printed.
        gain: String,
    },
    /// The engine produced a different number of frames than promised (a bug).
    #[error("internal error: wrote {written} frames, expected {expected}")]
    Length {
        /// Frames written.
        written: u64,
        /// Frames expected.
        expected: u64,
    },
}

impl ConvertError {
    /// Whether the output turned out to exist (made meanwhile by someone else).
    pub fn is_exists(&self) -> bool {
        use crate::error::FileError::Exists;
        matches!(
            self,
            Self::File(Exists(_)) | Self::Wav(WavError::File(Exists(_)))
        )
    }
}

/// Cancellation and progress for one conversion.
#[derive(Clone, Copy)]
pub struct Control<'a> {
    /// Set to stop at the next block (the output is then removed).
    pub cancel: &'a AtomicBool,
    /// Called with the number of input bytes consumed by each block.
    pub progress: &'a (dyn Fn(u64) + Sync),
}

impl std::fmt::Debug for Control<'_> {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Control")
            .field("cancel", &self.cancel)
            .finish_non_exhaustive()
    }
}

/// Convert `input` to `output`. The output appears under its name only when complete; on
/// any error nothing is left behind.
pub fn convert_file(
    input: &Path,
    output: &Path,
    settings: &Settings,
    designs: &DesignCache,
    ctl: Control<'_>,
) -> Result<FileReport, ConvertError> {
    let start = Instant::now();
    let reader = Input::open(input)?;
    convert_input(reader, input, Some(output), settings, designs, ctl, start).map(|(r, _)| r)
}

/// Convert a WAV file held in memory, end to end (header checks, design, conversion,
/// requantization, encoding) as [`convert_file`] does, with no file anywhere: the report
/// (its paths empty) and the output file's bytes.
pub fn convert_in_memory(
    input: Vec<u8>,
    settings: &Settings,
    designs: &DesignCache,
    ctl: Control<'_>,
) -> Result<(FileReport, Vec<u8>), ConvertError> {
    let start = Instant::now();
    let reader = Input::from_reader(std::io::Cursor::new(input))?;
    convert_input(reader, Path::new(""), None, settings, designs, ctl, start)
}

/// The conversion behind [`convert_file`] and [`convert_in_memory`]: to `output`, or to
/// memory when it is `None` (then the bytes are returned).
fn convert_input(
    mut reader: Input,
    input: &Path,
    output: Option<&Path>,
    settings: &Settings,
    designs: &DesignCache,
    ctl: Control<'_>,
    start: Instant,
) -> Result<(FileReport, Vec<u8>), ConvertError> {
    let info = reader.info().clone();
    let encoding = settings.encoding.unwrap_or(info.encoding);
    let stopband = settings
        .stopband_db
        .unwrap_or_else(|| default_stopband_db(encoding));
    // A clock correction, or a pair whose fixed table is over the budget: the any-ratio
    // engine (its own module); everything else below is the fixed engine.
    if let Some(why) = anyratio::route(info.sample_rate, settings, stopband, designs) {
        return anyratio::convert_input(reader, input, output, settings, designs, why, ctl, start);
    }
    let precision = precision_for(stopband);
    // The metadata before the audio, rescaled for the output rate.
    let retiming = Retiming {
        in_rate: info.sample_rate,
        out_rate: settings.out_rate,
        in_block_align: info.channels.saturating_mul(info.container_bits / 8),
        out_block_align: info.channels.saturating_mul(encoding.bytes()),
        out_bits: encoding.bits(),
        coding_history: coding_history_line(&info, settings.out_rate, encoding, stopband),
        clock: crate::clock::ClockPpm::ZERO,
    };
    let mut cues = std::collections::HashMap::new();
    let (before, mut metadata) = carry(
        reader.chunks_before_data(),
        settings.metadata,
        &retiming,
        &mut cues,
    );
    let channel_mask = reader.channel_mask();
    // Designing the filter and creating the output: done by the engine once the input is
    // being read (the pipelined engine reads ahead meanwhile, and creates the output on a
    // thread of its own while it designs).
    let setup = Setup {
        design: || {
            designs
                .plan(
                    info.sample_rate,
                    settings.out_rate,
                    stopband,
                    settings.passband,
                    settings.phase,
                    settings.stages,
                )
                .map_err(ConvertError::from)
        },
        create: move || -> Result<WavWriter, ConvertError> {
            Ok(open_output(
                output,
                settings,
                info.channels,
                encoding,
                channel_mask,
                before,
            )?)
        },
    };
    let non_finite = if settings.sanitize {
        NonFinite::Zero
    } else {
        NonFinite::Refuse
    };
    let run = Run {
        gain: 10f64.powf(settings.gain_db / 20.0),
        non_finite,
        bytes_per_frame: u64::from(info.channels) * u64::from(info.encoding.bytes()),
        ctl,
    };
    let (design, mut writer) = match (precision, settings.pipeline) {
        (Precision::F32, false) => run.sequential::<f32, _, _>(&mut reader, setup)?,
        (Precision::F64, false) => run.sequential::<f64, _, _>(&mut reader, setup)?,
        (Precision::F32, true) => run.pipelined::<f32, _, _>(&mut reader, setup)?,
        (Precision::F64, true) => run.pipelined::<f64, _, _>(&mut reader, setup)?,
    };
    // The metadata after the audio goes after the output's audio.
    let (found, notes) = reader.chunks_after_data()?;
    let (after, more) = carry(&found, settings.metadata, &retiming, &mut cues);
    metadata.extend(more);
    metadata.dropped.extend(notes);
    writer.set_chunks_after_data(after);
    // A stream read to its end knows its length (and a partial last frame) only now.
    let header_warning = reader.header_warning().map(str::to_owned);
    let frames_in = reader.info().frames;
    let frames_out = design.pair().output_len(frames_in);
    let (levels, bytes) = finish_writer(writer, frames_out, settings)?;
    // Dither is claimed only when some sample got it (not for silence).
    let dithered = levels.dithered > 0;
    let stages = crate::report::stages::StageFacts::of(&design);
    let report = FileReport {
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
        measured_stopband_db: design.measured_stopband_db(),
        passband: settings.passband,
        taps_per_phase: stages.polyphase_taps_per_phase(),
        precision,
        dithered,
        dither_asked: settings.dither == Dither::Tpdf,
        gain_db: settings.gain_db,
        sanitized: reader.sanitized(),
        levels,
        metadata,
        warnings: header_warning.into_iter().collect(),
        any_ratio: None,
        stages: Some(stages),
    };
    Ok((report, bytes))
}

/// The CodingHistory line that states this conversion, in EBU R 98 syntax (from memory):
/// `A=PCM,F=<rate>,W=<bits>,M=<mode>,T=<text>`; the mode is `mono` or `stereo` (R 98 names
/// no mode for more channels, so `M=` is left out then and the text gives the count); the
/// text has no commas (they separate the fields).
pub fn coding_history_line(
    info: &crate::audio::WavInfo,
    out_rate: u32,
    out: Encoding,
    stopband_db: f64,
) -> String {
    let mode = match info.channels {
        1 => ",M=mono".to_owned(),
        2 => ",M=stereo".to_owned(),
        _ => String::new(),
    };
    let mut text = format!(
        "rerate {}; {} Hz to {out_rate} Hz; stopband {} dB",
        env!("CARGO_PKG_VERSION"),
        info.sample_rate,
        stopband_db
    );
    if info.channels > 2 {
        text.push_str(&format!("; {} channels", info.channels));
    }
    if out.is_float() {
        text.push_str("; 32-bit float");
    }
    format!("A=PCM,F={out_rate},W={}{mode},T={text}", out.bits())
}

/// Check the written length (`frames_out`) and, when clipping is refused, that nothing
/// clipped; then complete the output. Dropping the writer on an error removes the
/// unfinished output.
pub(crate) fn finish_writer(
    writer: WavWriter,
    frames_out: u64,
    settings: &Settings,
) -> Result<(LevelStats, Vec<u8>), ConvertError> {
    if writer.frames() != frames_out {
        return Err(ConvertError::Length {
            written: writer.frames(),
            expected: frames_out,
        });
    }
    let stats = writer.stats();
    if settings.refuse_clipping && stats.clipped > 0 {
        drop(writer);
        let over = Overs::new(&stats, settings.gain_db);
        return Err(ConvertError::Clipped {
            over: stats.clipped,
            peak: crate::report::format::fmt_db(stats.peak_dbfs()),
            headroom: over.headroom,
            gain: over.gain,
        });
    }
    Ok(writer.finish_in_memory()?)
}

/// The output of a conversion with `settings` (either engine): the file at `output`, or
/// memory for `None`; `channels`, `encoding`, the input's `channel_mask` and the metadata
/// `chunks` to write before the audio.
fn open_output(
    output: Option<&Path>,
    settings: &Settings,
    channels: u16,
    encoding: Encoding,
    channel_mask: Option<u32>,
    chunks: Vec<Chunk>,
) -> Result<WavWriter, WavError> {
    let opts = WriterOptions {
        sample_rate: settings.out_rate,
        channels,
        encoding,
        dither: settings.dither,
        force: settings.force,
        channel_mask,
        chunks,
    };
    match output {
        Some(path) => WavWriter::create(path, &opts),
        None => WavWriter::in_memory(&opts),
    }
}

/// What an engine does before converting: design the filter (`design`) and create the
/// output (`create`), in that order of importance (a failed design is the error reported,
/// and an output created meanwhile is removed).
struct Setup<D, C> {
    design: D,
    create: C,
}

/// What the engines need besides the design.
struct Run<'a> {
    gain: f64,
    non_finite: NonFinite,
    bytes_per_frame: u64,
    ctl: Control<'a>,
}

impl Run<'_> {
    /// Read one block of at most [`BLOCK_FRAMES`] frames into `buf` (resized to what was
    /// read), gain applied. Returns the frames read; 0 at the end.
    fn read_block<T: Sample>(
        &self,
        reader: &mut Input,
        buf: &mut Vec<T>,
    ) -> Result<usize, ConvertError> {
        self.read_frames(reader, buf, BLOCK_FRAMES)
    }

    /// [`Run::read_block`] with blocks of at most `frames` frames.
    fn read_frames<T: Sample>(
        &self,
        reader: &mut Input,
        buf: &mut Vec<T>,
        frames: usize,
    ) -> Result<usize, ConvertError> {
        let ch = usize::from(reader.info().channels);
        buf.resize(frames * ch, T::zero());
        let n = reader.read_frames(buf, self.non_finite)?;
        buf.truncate(n * ch);
        if self.gain != 1.0 {
            let gain = T::from_f64_lossy(self.gain);
            buf.iter_mut().for_each(|v| *v = *v * gain);
        }
        Ok(n)
    }

    /// Everything on this thread: read a block, convert it, write the result.
    fn sequential<T: Sample, D, C>(
        &self,
        reader: &mut Input,
        setup: Setup<D, C>,
    ) -> Result<(Arc<StagePlan>, WavWriter), ConvertError>
    where
        D: FnOnce() -> Result<Arc<StagePlan>, ConvertError>,
        C: FnOnce() -> Result<WavWriter, ConvertError>,
    {
        let design = (setup.design)()?;
        let mut writer = (setup.create)()?;
        // The disk catches up on a thread of its own while the file is written, so that
        // this thread (a core of a batch) does not wait for the whole file at the end.
        writer.sync_every(SYNC_EVERY_BYTES)?;
        let mut engine = Engine::<T>::new(&design, usize::from(reader.info().channels))?;
        let mut inb = Vec::new();
        let mut emit = |out: &mut Vec<T>, n: usize| writer.write_frames(&out[..n]);
        loop {
            if self.ctl.cancel.load(Ordering::Relaxed) {
                return Err(crate::error::FileError::Interrupted.into());
            }
            let n = self.read_block(reader, &mut inb)?;
            if n == 0 {
                break;
            }
            engine.block(&inb, &mut emit)?;
            (self.ctl.progress)(n as u64 * self.bytes_per_frame);
        }
        engine.flush(&mut emit)?;
        Ok((design, writer))
    }
}

/// The converter (one stage: exactly the stage's stream converter; or two stages) and its
/// output buffer.
pub(crate) struct Engine<T> {
    conv: ChainConverter<T>,
    ch: usize,
    out: Vec<T>,
}

impl<T: Sample> Engine<T> {
    pub(crate) fn new(plan: &StagePlan, ch: usize) -> Result<Self, ConvertError> {
        let conv = ChainConverter::<T>::new(plan, ch)?;
        let out_frames = usize::try_from(plan.pair().output_len(BLOCK_FRAMES as u64))
            .unwrap_or(BLOCK_FRAMES)
            .max(conv.max_output_frames(BLOCK_FRAMES))
            .max(1)
            + 1;
        Ok(Self {
            conv,
            ch,
            out: vec![T::zero(); out_frames * ch],
        })
    }

    /// Convert one block of interleaved input; `emit(buffer, samples)` takes each piece of
    /// output (it may swap the buffer for another of the same length).
    pub(crate) fn block<E>(&mut self, input: &[T], emit: &mut E) -> Result<(), ConvertError>
    where
        E: FnMut(&mut Vec<T>, usize) -> Result<(), WavError>,
    {
        let ch = self.ch;
        let n = input.len() / ch;
        let mut off = 0;
        while off < n {
            let p = self
                .conv
                .process_interleaved(&input[off * ch..], &mut self.out)?;
            emit(&mut self.out, p.frames_written * ch)?;
            off += p.frames_read;
            if p.frames_read == 0 && p.frames_written == 0 {
                break;
            }
        }
        Ok(())
    }

    /// The converter's tail after the last block.
    pub(crate) fn flush<E>(&mut self, emit: &mut E) -> Result<(), ConvertError>
    where
        E: FnMut(&mut Vec<T>, usize) -> Result<(), WavError>,
    {
        loop {
            let k = self.conv.flush_interleaved(&mut self.out)?;
            if k == 0 {
                return Ok(());
            }
            emit(&mut self.out, k * self.ch)?;
        }
    }
}
