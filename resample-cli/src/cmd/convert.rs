//! `rerate convert`: WAV files (one, several, or folders) to another sample rate, in
//! parallel, safely, with a report line per file and a summary.

use std::io::IsTerminal;
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::time::{Duration, Instant};

use crate::audio::wav::Encoding;
use crate::audio::wav::MetadataPolicy;
use crate::batch::{self, file_id, Plan, Task};
use crate::convert::{convert_file, Control, DesignCache, Settings};
use anyhow::{Context, Result};
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use rayon::prelude::*;

use crate::args::convert::ConvertArgs;
use crate::args::{check_filter, DitherArg};
use crate::exit::{Status, UsageError};
use crate::io::signals::{self, CANCEL};
use crate::report::{json, print};

/// How one task ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Outcome {
    Converted,
    Skipped,
    Failed,
    /// Stopped by a signal while being converted (its unfinished output was removed).
    Interrupted,
    /// Never started: a signal arrived first.
    NotStarted,
    /// Failed because samples were limited and `--refuse-clipping` was given.
    Clipped,
}

impl Outcome {
    /// The `status` of its JSON record.
    fn status(self) -> &'static str {
        match self {
            Self::Converted => "converted",
            Self::Skipped => "skipped",
            Self::Failed | Self::Clipped => "failed",
            Self::Interrupted => "interrupted",
            Self::NotStarted => "not started",
        }
    }
}

/// Whether an error is clipping refused by `--refuse-clipping`.
fn is_clipping(e: &anyhow::Error) -> bool {
    e.chain().any(|c| {
        matches!(
            c.downcast_ref::<crate::convert::ConvertError>(),
            Some(crate::convert::ConvertError::Clipped { .. })
        )
    })
}

/// Whether an error is the interruption of a conversion under way.
fn is_interruption(e: &anyhow::Error) -> bool {
    e.chain().any(|c| {
        matches!(
            c.downcast_ref::<crate::error::FileError>(),
            Some(crate::error::FileError::Interrupted)
        ) || matches!(
            c.downcast_ref::<crate::convert::ConvertError>(),
            Some(crate::convert::ConvertError::File(
                crate::error::FileError::Interrupted
            ))
        )
    })
}

/// Run `rerate convert`.
pub fn run(args: &ConvertArgs) -> Result<Status> {
    let encoding = match (args.bits, args.float) {
        (_, true) => Some(Encoding::Float32),
        (Some(b), false) => Encoding::int(b),
        (None, false) => None,
    };
    let mut settings = Settings {
        out_rate: args.out_rate,
        stopband_db: args.stopband_db,
        passband: args.passband,
        phase: args.phase.phase(),
        encoding,
        dither: args.dither.unwrap_or(DitherArg::Tpdf).dither(),
        gain_db: args.gain,
        sanitize: args.sanitize,
        force: args.force,
        refuse_clipping: args.refuse_clipping,
        pipeline: false,
        metadata: match (args.strip_metadata, args.keep_unknown_chunks) {
            (true, _) => MetadataPolicy::Strip,
            (false, true) => MetadataPolicy::KeepUnknown,
            (false, false) => MetadataPolicy::Carry,
        },
        clock: args.clock_ppm,
        stages: crate::args::stage_choice(args.one_stage),
    };
    if !args.gain.is_finite() {
        return Err(UsageError("--gain must be a finite number of dB".into()).into());
    }
    // Check the filter parameters once, up front, rather than once per file.
    check_filter(args.stopband_db, args.passband)?;
    if args.dither == Some(DitherArg::Tpdf) && (args.float || args.bits == Some(32)) {
        eprintln!(
            "rerate: note: --dither tpdf does not apply to {} output (it is not requantized, \
             so nothing is dithered)",
            if args.float { "float" } else { "32-bit" }
        );
    }
    let plan = match batch::plan(
        &args.inputs,
        args.output.as_deref(),
        args.recursive,
        args.out_rate,
    ) {
        Ok(p) => p,
        Err(e) => return Err(UsageError(e.0).into()),
    };
    let Plan {
        tasks,
        inputs,
        is_batch,
        excluded,
        unsearched,
        warnings,
    } = plan;
    for w in warnings {
        print::err_line(&format!("rerate: warning: {w}"));
    }
    if excluded > 0 {
        print::err_line(&format!(
            "rerate: {excluded} file{} not taken as input: this run's own output{} \
             (NAME-{}.wav beside NAME.wav)",
            if excluded == 1 { "" } else { "s" },
            if excluded == 1 { "" } else { "s" },
            batch::rate_label(args.out_rate),
        ));
    }
    for dir in &unsearched {
        print::err_line(&format!(
            "rerate: {}: sub-folders not searched (add -r to include them)",
            dir.display()
        ));
    }
    let total_found = tasks.len();
    let tasks = match args.shard {
        Some(s) => s.select(tasks),
        None => tasks,
    };
    // Output folders are made before any work; one that cannot be made stops the run.
    batch::create_folders(&batch::missing_folders(&tasks))?;
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
    let bar = Bar::new(total_bytes, tasks.len());
    let designs = DesignCache::new();
    let emit = |line: String| bar.bar.suspend(|| print::out_line(&line));
    let outcomes: Vec<Outcome> = pool.install(|| {
        tasks
            .par_iter()
            .map(|task| {
                if CANCEL.load(Ordering::Relaxed) {
                    if args.json {
                        emit(json::line(&record(task, Outcome::NotStarted)));
                    }
                    return Outcome::NotStarted;
                }
                let r = one(task, &inputs, &settings, args, &designs, &bar);
                bar.file_done();
                match r {
                    Ok(Some(report)) => {
                        if let Some(w) = report.limit_warning() {
                            bar.bar.suspend(|| eprintln!("rerate: warning: {w}"));
                        }
                        for w in &report.warnings {
                            let w = format!("rerate: warning: {}: {w}", report.input.display());
                            bar.bar.suspend(|| print::err_line(&w));
                        }
                        emit(if args.json {
                            report.json()
                        } else {
                            report.line()
                        });
                        Outcome::Converted
                    }
                    Ok(None) => {
                        // Text: one summary line for all of them (a resume can skip
                        // thousands); JSON: a record each.
                        if args.json {
                            emit(json::line(&json::NotConverted {
                                reason: Some("output exists"),
                                ..record(task, Outcome::Skipped)
                            }));
                        }
                        Outcome::Skipped
                    }
                    Err(e) if is_interruption(&e) => {
                        if args.json {
                            emit(json::line(&record(task, Outcome::Interrupted)));
                        }
                        Outcome::Interrupted
                    }
                    Err(e) => {
                        let msg = format!("{}: {e}", task.input.display());
                        bar.bar
                            .suspend(|| print::err_line(&format!("rerate: {msg}")));
                        if args.json {
                            emit(json::line(&json::NotConverted {
                                error: Some(&e.to_string()),
                                ..record(task, Outcome::Failed)
                            }));
                        }
                        if is_clipping(&e) {
                            Outcome::Clipped
                        } else {
                            Outcome::Failed
                        }
                    }
                }
            })
            .collect()
    });
    bar.bar.finish_and_clear();
    let count = |want: Outcome| outcomes.iter().filter(|&&o| o == want).count();
    let converted = count(Outcome::Converted);
    let skipped = count(Outcome::Skipped);
    let n_clipped = count(Outcome::Clipped);
    let n_failed = count(Outcome::Failed) + n_clipped;
    let n_interrupted = count(Outcome::Interrupted);
    let not_started = count(Outcome::NotStarted);
    let interrupted = CANCEL.load(Ordering::SeqCst);
    if args.json {
        emit(json::line(&json::SummaryRecord {
            summary: json::Summary {
                converted,
                skipped,
                failed: n_failed,
                interrupted: n_interrupted,
                not_started,
                selected: tasks.len(),
                found: total_found,
                excluded_own_outputs: excluded,
                shard: args.shard.map(|s| format!("{}/{}", s.index, s.count)),
                stopped_by_signal: interrupted,
            },
        }));
    } else if is_batch || tasks.len() != 1 {
        let shard = args
            .shard
            .map(|s| format!(", shard {}/{} of {total_found} files", s.index, s.count))
            .unwrap_or_default();
        let mut line = format!("{converted} converted, {skipped} skipped, {n_failed} failed");
        if interrupted {
            line.push_str(&format!(
                ", {n_interrupted} interrupted, {not_started} not started"
            ));
        }
        emit(format!("{line} ({} selected{shard})", tasks.len()));
    }
    if interrupted {
        eprintln!(
            "rerate: interrupted: {converted} converted, {n_interrupted} stopped under way \
             (unfinished outputs removed), {not_started} not started; run again with \
             --skip-existing to finish"
        );
    }
    Ok(if interrupted {
        Status::Interrupted
    } else if n_failed == 0 {
        Status::Success
    } else if is_batch || n_failed == n_clipped {
        // Clipping refused by --refuse-clipping is a failed check, like a batch's failures.
        Status::CheckFailed
    } else {
        Status::Failed
    })
}

/// The JSON record of a task that was not converted (reason and error to be filled in).
fn record<'a>(task: &Task, outcome: Outcome) -> json::NotConverted<'a> {
    json::NotConverted {
        status: outcome.status(),
        input: task.input.display().to_string(),
        output: task.output.display().to_string(),
        reason: None,
        error: None,
    }
}

/// Convert one task; `Ok(None)` when skipped.
fn one(
    task: &Task,
    inputs: &std::collections::HashSet<batch::FileId>,
    settings: &Settings,
    args: &ConvertArgs,
    designs: &DesignCache,
    bar: &Bar,
) -> Result<Option<crate::convert::FileReport>, anyhow::Error> {
    if let Some(id) = file_id(&task.output) {
        if inputs.contains(&id) {
            return Err(crate::error::FileError::IsInput(task.output.display().to_string()).into());
        }
        if args.skip_existing {
            return Ok(None);
        }
        if !args.force {
            return Err(crate::error::FileError::Exists(task.output.display().to_string()).into());
        }
    }
    let progress = |bytes: u64| bar.inc(bytes);
    let ctl = Control {
        cancel: &CANCEL,
        progress: &progress,
    };
    match convert_file(&task.input, &task.output, settings, designs, ctl) {
        Ok(report) => Ok(Some(report)),
        // Another run (the same batch started twice) finished this output meanwhile.
        Err(e) if args.skip_existing && e.is_exists() => Ok(None),
        Err(e) => Err(e.into()),
    }
}

/// A progress bar on stderr, shown only when stderr is a terminal and the work has already
/// taken more than a second: bytes of input read, and for a batch the files done.
struct Bar {
    bar: ProgressBar,
    start: Instant,
    shown: AtomicBool,
    terminal: bool,
    /// Files finished (any outcome) and the batch's size; size 1: no file count shown.
    files_done: AtomicUsize,
    files: usize,
}

impl Bar {
    fn new(total: u64, files: usize) -> Self {
        let bar = ProgressBar::with_draw_target(Some(total), ProgressDrawTarget::hidden());
        let template = if files > 1 {
            "{spinner} [{elapsed_precise}] {wide_bar} {msg}, {bytes}/{total_bytes} ({eta} left)"
        } else {
            "{spinner} [{elapsed_precise}] {wide_bar} {bytes}/{total_bytes} ({eta} left)"
        };
        if let Ok(style) = ProgressStyle::with_template(template) {
            bar.set_style(style);
        }
        let b = Self {
            bar,
            start: Instant::now(),
            shown: AtomicBool::new(false),
            terminal: std::io::stderr().is_terminal(),
            files_done: AtomicUsize::new(0),
            files,
        };
        b.set_files(0);
        b
    }

    fn set_files(&self, done: usize) {
        if self.files > 1 {
            self.bar.set_message(format!("{done}/{} files", self.files));
        }
    }

    /// One more file finished.
    fn file_done(&self) {
        let done = self.files_done.fetch_add(1, Ordering::Relaxed) + 1;
        self.set_files(done);
        self.inc(0);
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
