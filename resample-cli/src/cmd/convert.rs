//! `rerate convert`: WAV files (one, several, or folders) to another sample rate, in
//! parallel, safely, with a report line per file and a summary.

use std::io::{IsTerminal, Write};
use std::path::PathBuf;
use std::process::ExitCode;
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::sync::Mutex;
use std::time::{Duration, Instant};

use anyhow::{Context, Result};
use clap::{Args, ValueEnum};
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use rayon::prelude::*;
use resample_cli::batch::{self, file_id, Plan, Shard, Task};
use resample_cli::convert::{convert_file, Control, DesignCache, Settings};
use resample_cli::wav::{Dither, Encoding, WavError};
use serde_json::json;

use super::signals::{self, CANCEL, EXIT_INTERRUPTED};
use crate::rate::parse_rate;

/// Exit code for a command-line mistake.
const EXIT_USAGE: u8 = 2;

/// Dither choices.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum DitherArg {
    /// Triangular-PDF dither, 2 LSB peak to peak.
    Tpdf,
    /// Plain rounding.
    None,
}

/// Options of `rerate convert`.
#[derive(Debug, Args)]
pub struct ConvertArgs {
    /// WAV files or folders to convert.
    #[arg(required = true, value_name = "IN")]
    pub inputs: Vec<PathBuf>,
    /// Output sample rate (48000, 48k, 44.1k, 44.1kHz).
    #[arg(long, value_parser = parse_rate)]
    pub out_rate: u32,
    /// Output file (one input file) or folder (several inputs, or a folder: its structure is
    /// mirrored). Default: NAME-RATE.wav beside each input (e.g. take-48k.wav).
    #[arg(short = 'o', long = "output", value_name = "PATH")]
    pub output: Option<PathBuf>,
    /// Descend into sub-folders of folder inputs.
    #[arg(short = 'r', long)]
    pub recursive: bool,
    /// Output integer word length (default: keep the input's format).
    #[arg(long, value_parser = ["16", "24", "32"], conflicts_with = "float")]
    pub bits: Option<String>,
    /// Output 32-bit float.
    #[arg(long)]
    pub float: bool,
    /// Minimum stopband attenuation in dB (default: follows the output format: 8-bit 60,
    /// 16-bit 110, 24-bit and float 160, 32-bit 200).
    #[arg(long, value_name = "DB")]
    pub stopband_db: Option<f64>,
    /// Passband edge as a fraction of the lower Nyquist frequency (0.5 to 0.995).
    #[arg(long, value_name = "FRACTION", default_value_t = resample_core::limits::DEFAULT_PASSBAND)]
    pub passband: f64,
    /// Dither when writing 8-, 16- or 24-bit integers (fixed seed: same input, same bytes).
    #[arg(long, value_enum, default_value_t = DitherArg::Tpdf)]
    pub dither: DitherArg,
    /// Gain in dB applied before conversion (e.g. -1.5 to make room for inter-sample peaks).
    #[arg(
        long,
        value_name = "DB",
        default_value_t = 0.0,
        allow_negative_numbers = true
    )]
    pub gain: f64,
    /// Replace NaN/infinite float samples with 0 and count them, instead of refusing the file.
    #[arg(long)]
    pub sanitize: bool,
    /// Files converted in parallel (default: all cores). Output bytes do not depend on it.
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u32).range(1..=4096))]
    pub jobs: Option<u32>,
    /// Only this share of the sorted batch, K/N with 0 <= K < N (for job arrays).
    #[arg(long, value_name = "K/N")]
    pub shard: Option<Shard>,
    /// Skip files whose output already exists (to resume an interrupted batch).
    #[arg(long, conflicts_with = "force")]
    pub skip_existing: bool,
    /// Overwrite existing outputs (never an input).
    #[arg(long)]
    pub force: bool,
    /// One JSON object per file and a summary object, one per line, on stdout.
    #[arg(long)]
    pub json: bool,
}

/// How one task ended.
enum Outcome {
    Converted,
    Skipped,
    Failed,
}

/// Run `rerate convert`.
pub fn run(args: &ConvertArgs) -> Result<ExitCode> {
    let encoding = match (&args.bits, args.float) {
        (_, true) => Some(Encoding::Float32),
        (Some(b), false) => Encoding::int(b.parse().unwrap_or(0)),
        (None, false) => None,
    };
    let mut settings = Settings {
        out_rate: args.out_rate,
        stopband_db: args.stopband_db,
        passband: args.passband,
        encoding,
        dither: match args.dither {
            DitherArg::Tpdf => Dither::Tpdf,
            DitherArg::None => Dither::None,
        },
        gain_db: args.gain,
        sanitize: args.sanitize,
        force: args.force,
        pipeline: false,
    };
    if !args.gain.is_finite() {
        return usage("--gain must be a finite number of dB");
    }
    // Check the filter parameters once, up front, rather than once per file.
    if let Some(db) = args.stopband_db {
        let r = resample_core::limits::MIN_STOPBAND_DB..=resample_core::limits::MAX_STOPBAND_DB;
        if !r.contains(&db) {
            return usage(&format!(
                "--stopband-db {db} is out of range ({} to {} dB)",
                r.start(),
                r.end()
            ));
        }
    }
    let pr = resample_core::limits::MIN_PASSBAND..=resample_core::limits::MAX_PASSBAND;
    if !pr.contains(&args.passband) {
        return usage(&format!(
            "--passband {} is out of range ({} to {} of the lower Nyquist frequency)",
            args.passband,
            pr.start(),
            pr.end()
        ));
    }
    let plan = match batch::plan(
        &args.inputs,
        args.output.as_deref(),
        args.recursive,
        args.out_rate,
    ) {
        Ok(p) => p,
        Err(e) => return usage(&e.0),
    };
    let Plan {
        tasks,
        inputs,
        is_batch,
    } = plan;
    let total_found = tasks.len();
    let tasks = match args.shard {
        Some(s) => s.select(tasks),
        None => tasks,
    };
    signals::install();
    let jobs = args
        .jobs
        .map(|j| j as usize)
        .unwrap_or_else(|| std::thread::available_parallelism().map_or(1, |n| n.get()));
    // Files run in parallel, one per worker; a file also gets a reader and a writer thread
    // when there are fewer files than workers (otherwise every core already has a file).
    settings.pipeline = tasks.len() < jobs;
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(jobs)
        .build()
        .context("cannot start worker threads")?;

    let total_bytes: u64 = tasks
        .iter()
        .filter_map(|t| std::fs::metadata(&t.input).ok())
        .map(|m| m.len())
        .sum();
    let bar = Bar::new(total_bytes);
    let designs = DesignCache::new();
    let out = Mutex::new(std::io::stdout());
    let emit = |line: String| {
        bar.bar.suspend(|| {
            if let Ok(mut o) = out.lock() {
                let _ = writeln!(o, "{line}");
            }
        });
    };
    let failed = AtomicUsize::new(0);
    let outcomes: Vec<Outcome> = pool.install(|| {
        tasks
            .par_iter()
            .map(|task| {
                let r = one(task, &inputs, &settings, args, &designs, &bar);
                match r {
                    Ok(Some(report)) => {
                        emit(if args.json {
                            report.json().to_string()
                        } else {
                            report.line()
                        });
                        Outcome::Converted
                    }
                    Ok(None) => {
                        emit(if args.json {
                            json!({"status": "skipped", "input": task.input.display().to_string(),
                                   "output": task.output.display().to_string(),
                                   "reason": "output exists"})
                            .to_string()
                        } else {
                            format!(
                                "{} -> {}: skipped (output exists)",
                                task.input.display(),
                                task.output.display()
                            )
                        });
                        Outcome::Skipped
                    }
                    Err(e) => {
                        failed.fetch_add(1, Ordering::Relaxed);
                        let msg = format!("{}: {e}", task.input.display());
                        bar.bar.suspend(|| eprintln!("rerate: {msg}"));
                        if args.json {
                            emit(
                                json!({"status": "failed", "input": task.input.display().to_string(),
                                       "output": task.output.display().to_string(),
                                       "error": e.to_string()})
                                .to_string(),
                            );
                        }
                        Outcome::Failed
                    }
                }
            })
            .collect()
    });
    bar.bar.finish_and_clear();
    let count = |f: fn(&Outcome) -> bool| outcomes.iter().filter(|o| f(o)).count();
    let converted = count(|o| matches!(o, Outcome::Converted));
    let skipped = count(|o| matches!(o, Outcome::Skipped));
    let n_failed = count(|o| matches!(o, Outcome::Failed));
    let interrupted = CANCEL.load(Ordering::SeqCst);
    if args.json {
        emit(
            json!({"summary": {
                "converted": converted, "skipped": skipped, "failed": n_failed,
                "selected": tasks.len(), "found": total_found,
                "shard": args.shard.map(|s| format!("{}/{}", s.index, s.count)),
                "interrupted": interrupted,
            }})
            .to_string(),
        );
    } else if is_batch || tasks.len() != 1 {
        let shard = args
            .shard
            .map(|s| format!(", shard {}/{} of {total_found} files", s.index, s.count))
            .unwrap_or_default();
        emit(format!(
            "{converted} converted, {skipped} skipped, {n_failed} failed ({} selected{shard})",
            tasks.len()
        ));
    }
    Ok(if interrupted {
        ExitCode::from(EXIT_INTERRUPTED)
    } else if n_failed == 0 {
        ExitCode::SUCCESS
    } else if is_batch {
        ExitCode::from(crate::EXIT_CHECK_FAILED)
    } else {
        ExitCode::from(crate::EXIT_ERROR)
    })
}

/// Convert one task; `Ok(None)` when skipped.
fn one(
    task: &Task,
    inputs: &std::collections::HashSet<batch::FileId>,
    settings: &Settings,
    args: &ConvertArgs,
    designs: &DesignCache,
    bar: &Bar,
) -> Result<Option<resample_cli::convert::FileReport>, anyhow::Error> {
    if CANCEL.load(Ordering::Relaxed) {
        return Err(WavError::Interrupted.into());
    }
    if let Some(id) = file_id(&task.output) {
        if inputs.contains(&id) {
            return Err(WavError::IsInput(task.output.display().to_string()).into());
        }
        if args.skip_existing {
            return Ok(None);
        }
        if !args.force {
            return Err(WavError::Exists(task.output.display().to_string()).into());
        }
    }
    if let Some(parent) = task.output.parent() {
        if !parent.as_os_str().is_empty() {
            std::fs::create_dir_all(parent)
                .with_context(|| format!("cannot create folder {}", parent.display()))?;
        }
    }
    let progress = |bytes: u64| bar.inc(bytes);
    let ctl = Control {
        cancel: &CANCEL,
        progress: &progress,
    };
    Ok(Some(convert_file(
        &task.input,
        &task.output,
        settings,
        designs,
        ctl,
    )?))
}

fn usage(msg: &str) -> Result<ExitCode> {
    eprintln!("rerate: {msg}");
    Ok(ExitCode::from(EXIT_USAGE))
}

/// A progress bar on stderr, shown only when stderr is a terminal and the work has already
/// taken more than a second.
struct Bar {
    bar: ProgressBar,
    start: Instant,
    shown: AtomicBool,
    terminal: bool,
}

impl Bar {
    fn new(total: u64) -> Self {
        let bar = ProgressBar::with_draw_target(Some(total), ProgressDrawTarget::hidden());
        if let Ok(style) = ProgressStyle::with_template(
            "{spinner} [{elapsed_precise}] {wide_bar} {bytes}/{total_bytes} ({eta} left)",
        ) {
            bar.set_style(style);
        }
        Self {
            bar,
            start: Instant::now(),
            shown: AtomicBool::new(false),
            terminal: std::io::stderr().is_terminal(),
        }
    }

    fn inc(&self, bytes: u64) {
        self.bar.inc(bytes);
        if self.terminal
            && !self.shown.load(Ordering::Relaxed)
            && self.start.elapsed() > Duration::from_secs(1)
            && !self.shown.swap(true, Ordering::Relaxed)
        {
            self.bar.set_draw_target(ProgressDrawTarget::stderr());
        }
    }
}
