//! `rerate convert`: WAV files (one, several, or folders) to another sample rate, in
//! parallel, safely, with a report line per file and a summary.

use std::io::{IsTerminal, Write};
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::sync::Mutex;
use std::time::{Duration, Instant};

use crate::audio::wav::Encoding;
use crate::batch::{self, file_id, Plan, Task};
use crate::convert::{convert_file, Control, DesignCache, Settings};
use anyhow::{Context, Result};
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use rayon::prelude::*;
use serde_json::json;

use crate::args::check_filter;
use crate::args::convert::ConvertArgs;
use crate::exit::{Status, UsageError};
use crate::io::signals::{self, CANCEL};

/// How one task ended.
enum Outcome {
    Converted,
    Skipped,
    Failed,
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
        dither: args.dither.dither(),
        gain_db: args.gain,
        sanitize: args.sanitize,
        force: args.force,
        pipeline: false,
    };
    if !args.gain.is_finite() {
        return Err(UsageError("--gain must be a finite number of dB".into()).into());
    }
    // Check the filter parameters once, up front, rather than once per file.
    check_filter(args.stopband_db, args.passband)?;
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
        Status::Interrupted
    } else if n_failed == 0 {
        Status::Success
    } else if is_batch {
        Status::CheckFailed
    } else {
        Status::Failed
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
) -> Result<Option<crate::convert::FileReport>, anyhow::Error> {
    if CANCEL.load(Ordering::Relaxed) {
        return Err(crate::error::FileError::Interrupted.into());
    }
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
