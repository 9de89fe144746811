//! `rerate tradeoff`: filter length against measured quality against speed, one row per
//! design over a range of requested stopband attenuations, plus the simplest methods
//! (hold, linear interpolation, hold + moving average, hold + one-pole) measured the same
//! way, so the cost and the worth of a longer filter can be read off one table.

use std::io::Write;
use std::time::Instant;

use anyhow::{bail, Context, Result};
use resample_core::measure::Baseline;
use resample_core::measure::{self, Settings, Sweep};
use resample_core::{ChainConverter, FilterSpec, GlideConverter, Kernel, Sample, StagePlan};

use crate::args::check_filter;
use crate::args::tradeoff::TradeoffArgs;
use crate::args::PhaseArg;
use crate::convert::{run_plan, Chosen};
use crate::exit::Status;
use crate::report::json;
use crate::report::shortfall::shortfall;
use crate::report::stages::StageFacts;
use crate::report::tradeoff::Row;

/// A number for CSV that keeps its significance: scientific below 0.001 (not `0.000000`).
fn sig(v: f64) -> String {
    if v != 0.0 && v.is_finite() && v.abs() < 1e-3 {
        format!("{v:.4e}")
    } else {
        format!("{v:.6}")
    }
}

/// Deterministic noise to time conversions on.
fn noise(n: usize) -> Vec<f64> {
    let mut s = 0x2545_F491_4F6C_DD1D_u64;
    (0..n)
        .map(|_| {
            s ^= s << 13;
            s ^= s >> 7;
            s ^= s << 17;
            0.5 * ((s >> 11) as f64 / (1u64 << 52) as f64 - 1.0)
        })
        .collect()
}

/// CPU time this thread has run, seconds (Linux `schedstat`; `None` elsewhere), so that
/// speed figures taken on a busy machine count only the time the work was on a core.
fn thread_cpu_seconds() -> Option<f64> {
    let s = std::fs::read_to_string("/proc/thread-self/schedstat").ok()?;
    let ns: f64 = s.split_whitespace().next()?.parse().ok()?;
    Some(ns * 1e-9)
}

/// Seconds per call of `f`: best of three measurements, each repeating `f` for at least
/// 200 ms, in this thread's CPU time where the system reports it (updated at scheduler
/// ticks, hence the long measurements), else in wall time.
fn best_of_three(mut f: impl FnMut() -> Result<()>) -> Result<f64> {
    let mut best = f64::INFINITY;
    for _ in 0..3 {
        let wall = Instant::now();
        let c0 = thread_cpu_seconds();
        let mut calls = 0u32;
        while calls == 0 || wall.elapsed().as_secs_f64() < 0.2 {
            f()?;
            calls += 1;
        }
        let secs = match (c0, thread_cpu_seconds()) {
            (Some(a), Some(b)) if b > a => b - a,
            _ => wall.elapsed().as_secs_f64(),
        };
        best = best.min(secs / f64::from(calls));
    }
    Ok(best.max(1e-9))
}

/// Time the stages `convert` runs (one thread, as in a live stream) over `x`: one stage is
/// exactly its streaming converter.
fn time_engine<T: Sample>(plan: &StagePlan, x: &[f64]) -> Result<f64> {
    let input: Vec<T> = x.iter().map(|&v| T::from_f64_lossy(v)).collect();
    let mut conv = ChainConverter::<T>::new(plan, 1)?;
    let mut out = vec![T::zero(); conv.max_output_frames(4096).max(8192)];
    best_of_three(|| {
        conv.reset();
        let mut read = 0;
        while read < input.len() {
            let end = (read + 4096).min(input.len());
            let p = conv.process_planar(&[&input[read..end]], &mut [&mut out[..]])?;
            read += p.frames_read;
        }
        while conv.flush_planar(&mut [&mut out[..]])? > 0 {}
        std::hint::black_box(&out);
        Ok(())
    })
}

/// One row for the any-ratio engine (a clock correction, or a pair over the fixed table's
/// budget): measured like the fixed designs, in f64, and timed in f32 on one thread.
fn glide_row(
    engine: &Chosen,
    sweep: &Sweep,
    out_rate: u32,
    db: f64,
    phase: PhaseArg,
    x: &[f64],
    audio_s: f64,
) -> Result<Row> {
    let Chosen::AnyRatio { design, ratio, .. } = engine else {
        bail!("internal error: not the any-ratio engine");
    };
    let settings = Settings {
        passband_edge_hz: Some(engine.passband_edge_hz()),
        keep_spectrogram: false,
    };
    let mut failure = None;
    let m = measure::measure_converter(sweep, out_rate, &settings, |s| {
        engine.run::<f64>(s).unwrap_or_else(|e| {
            failure = Some(e);
            Vec::new()
        })
    });
    if let Some(e) = failure {
        return Err(e.context("the converter failed"));
    }
    let m = m.with_context(|| format!("cannot measure the {db} dB any-ratio table"))?;
    let input: Vec<f32> = x.iter().map(|&v| v as f32).collect();
    let mut conv = GlideConverter::<f32>::with_kernel(design, 1, *ratio, Kernel::detect())?;
    let mut out = vec![0.0_f32; conv.max_output_frames(4096)];
    let secs = best_of_three(|| {
        conv.reset();
        let mut read = 0;
        while read < input.len() {
            let end = (read + 4096).min(input.len());
            let p = conv.process_interleaved(&input[read..end], &mut out)?;
            read += p.frames_read;
        }
        while conv.flush_interleaved(&mut out)? > 0 {}
        std::hint::black_box(&out);
        Ok(())
    })?;
    let r = design.report();
    let designed = engine.design_stopband_db();
    Ok(Row {
        method: crate::convert::ANY_RATIO_ENGINE.into(),
        phase: Some(match phase {
            PhaseArg::Linear => "linear",
            PhaseArg::Minimum => "minimum",
        }),
        requested_db: Some(db),
        taps_per_phase: Some(r.taps_per_output),
        rejection_db: m.rejection_db,
        ripple_db: m.passband_ripple_db,
        latency_ms: engine.latency().1,
        measured_delay_ms: m.latency_ms,
        speed_x_realtime: audio_s / secs,
        table_bytes: Some(r.table_bytes_f32),
        note: (m.rejection_db < db).then(|| {
            format!(
                "the table reaches {designed:.1} dB (prototype and interpolation error); the \
                 sweep read its strongest component at {:.0} Hz",
                m.worst.unwanted_hz
            )
        }),
        stages: None,
    })
}

/// Measure every row.
pub fn rows(args: &TradeoffArgs) -> Result<Vec<Row>> {
    // Under a clock correction every row is measured between the whole rates a -> b
    // closest to the true pair (ClockPpm::analysis_pair), as `verify` does; otherwise
    // a -> b is the pair itself.
    let (a, b, _) = args.clock_ppm.analysis_pair(args.in_rate, args.out_rate);
    let sweep = Sweep::new(a).seconds(args.seconds).edge_probes(b);
    sweep.check().context("cannot make the sweep")?;
    let speed_n = (args.speed_seconds * f64::from(args.in_rate))
        .round()
        .max(1.0) as usize;
    let x = noise(speed_n);
    let audio_s = speed_n as f64 / f64::from(args.in_rate);
    let mut rows = Vec::new();
    let designs = args
        .stopband_db
        .0
        .iter()
        .flat_map(|&db| args.phases().into_iter().map(move |phase| (db, phase)));
    for (db, phase) in designs {
        let spec = FilterSpec::new(args.in_rate, args.out_rate)
            .stopband_db(db)
            .passband(args.passband)
            .phase(phase.phase())
            .stage_choice(crate::args::stage_choice(args.one_stage));
        let design = match Chosen::new(&spec, args.clock_ppm)
            .with_context(|| format!("cannot design for {db} dB"))?
            .measured_between(a, b)
        {
            Chosen::Fixed(p) => p,
            glide => {
                rows.push(glide_row(&glide, &sweep, b, db, phase, &x, audio_s)?);
                continue;
            }
        };
        let settings = Settings {
            passband_edge_hz: Some(design.passband_edge_hz()),
            keep_spectrogram: false,
        };
        let mut failure = None;
        // Quality in f64, as `verify` measures it (f32 rounding sits near -140 dB).
        let m = measure::measure_converter(&sweep, args.out_rate, &settings, |s| {
            run_plan::<f64>(&design, s).unwrap_or_else(|e| {
                failure = Some(e);
                Vec::new()
            })
        });
        if let Some(e) = failure {
            return Err(e.context("the converter failed"));
        }
        let m = m.with_context(|| format!("cannot measure the {db} dB design"))?;
        let secs = time_engine::<f32>(&design, &x)?;
        let facts = StageFacts::of(&design);

        rows.push(Row {
            method: "windowed-sinc".into(),
            phase: Some(match phase {
                PhaseArg::Linear => "linear",
                PhaseArg::Minimum => "minimum",
            }),
            requested_db: Some(db),
            taps_per_phase: Some(facts.polyphase_taps_per_phase()),
            rejection_db: m.rejection_db,
            ripple_db: m.passband_ripple_db,
            latency_ms: design.latency_ms(),
            measured_delay_ms: m.latency_ms,
            speed_x_realtime: audio_s / secs,
            table_bytes: Some(
                design
                    .stages()
                    .iter()
                    .map(|d| d.report().table_bytes_f32)
                    .sum(),
            ),
            note: shortfall(&m, design.measured_stopband_db(), db),
            stages: design.is_two_stage().then(|| facts.words()),
        });
    }
    if !args.no_baselines {
        let out_b = b;
        let settings = Settings::default();
        // Timed in f32 like the designs, into a buffer made once, as an engine would run.
        let x32: Vec<f32> = x.iter().map(|&v| v as f32).collect();
        let pair = resample_core::RatePair::new(a, b)?;
        let mut y32 = vec![0.0_f32; pair.output_len(x32.len() as u64) as usize];
        let mut scratch = Vec::new();
        for b in Baseline::ALL {
            let mut failure = None;
            let m = measure::measure_converter(&sweep, out_b, &settings, |s| {
                b.convert(a, out_b, s).unwrap_or_else(|e| {
                    failure = Some(e);
                    Vec::new()
                })
            });
            if let Some(e) = failure {
                bail!("{}: {e}", b.name());
            }
            let m = m.with_context(|| format!("cannot measure {}", b.name()))?;
            let secs = best_of_three(|| {
                b.convert_into(a, out_b, &x32, &mut y32, &mut scratch)?;
                std::hint::black_box(&y32);
                Ok(())
            })?;
            rows.push(Row {
                method: b.name().into(),
                phase: None,
                requested_db: None,
                taps_per_phase: None,
                rejection_db: m.rejection_db,
                ripple_db: m.passband_ripple_db,
                latency_ms: if b == Baseline::Linear {
                    1e3 / f64::from(a)
                } else {
                    0.0
                },
                measured_delay_ms: m.latency_ms,
                speed_x_realtime: audio_s / secs,
                table_bytes: None,
                note: None,
                stages: None,
            });
        }
    }
    Ok(rows)
}

/// Run `rerate tradeoff`.
pub fn run(args: &TradeoffArgs) -> Result<Status> {
    for &db in &args.stopband_db.0 {
        check_filter(Some(db), args.passband)?;
    }
    if let Some(path) = &args.plot {
        if path.exists() && !args.force {
            bail!(
                "{}: already exists (use --force to overwrite)",
                path.display()
            );
        }
    }
    let rows = rows(args)?;
    if let Some(path) = &args.plot {
        crate::report::tradeoff_plot::draw(path, &rows, args.in_rate, args.out_rate, args.force)?;
    }
    let mut out = std::io::stdout().lock();
    if args.json {
        let record = json::Tradeoff {
            in_rate: args.in_rate,
            out_rate: args.out_rate,
            sweep_seconds: args.seconds,
            clock_ppm: (!args.clock_ppm.is_zero()).then(|| args.clock_ppm.ppm()),
            speed: "one thread (CPU time where the system reports it), mono, f32, multiple of real time",
            rows: rows.iter().map(row_json).collect(),
        };
        writeln!(out, "{}", json::line(&record))?;
    } else if args.csv {
        writeln!(
            out,
            "method,phase,requested_db,taps_per_phase,rejection_db,ripple_db,latency_ms,measured_latency_ms,speed_x_realtime,table_bytes,note"
        )?;
        let opt = |v: Option<String>| v.unwrap_or_default();
        for r in &rows {
            writeln!(
                out,
                "{},{},{},{},{},{},{},{},{},{},{}",
                r.method,
                r.phase.unwrap_or_default(),
                opt(r.requested_db.map(|v| v.to_string())),
                opt(r.taps_per_phase.map(|v| v.to_string())),
                sig(r.rejection_db),
                sig(r.ripple_db),
                sig(r.latency_ms),
                sig(r.measured_latency_ms()),
                sig(r.speed_x_realtime),
                opt(r.table_bytes.map(|v| v.to_string())),
                opt(r
                    .note
                    .as_ref()
                    .map(|n| format!("\"{}\"", n.replace('"', "'"))))
            )?;
        }
    } else {
        write!(out, "{}", table_text(&rows, args))?;
    }
    Ok(Status::Success)
}

fn row_json(r: &Row) -> json::TradeoffRow<'_> {
    json::TradeoffRow {
        method: &r.method,
        phase: r.phase,
        requested_db: r.requested_db,
        taps_per_phase: r.taps_per_phase,
        rejection_db: r.rejection_db,
        passband_ripple_db: r.ripple_db,
        latency_ms: r.latency_ms,
        measured_delay_ms: r.measured_delay_ms,
        measured_latency_ms: r.measured_latency_ms(),
        speed_x_realtime: r.speed_x_realtime,
        table_bytes_f32: r.table_bytes,
        note: r.note.as_deref(),
        stages: r.stages.as_deref(),
    }
}

fn table_text(rows: &[Row], args: &TradeoffArgs) -> String {
    let mut s = format!(
        "tradeoff {} Hz -> {} Hz: quality measured by a {} s sweep; speed of one thread on {} s of mono audio\n",
        args.in_rate, args.out_rate, args.seconds, args.speed_seconds
    );
    if !args.clock_ppm.is_zero() {
        let (a, b, d) = args.clock_ppm.analysis_pair(args.in_rate, args.out_rate);
        s.push_str(&format!(
            "clock {} ppm: any-ratio engine, measured between {a} Hz and {b} Hz (ratio within {} ppm of the true pair's)\n",
            args.clock_ppm,
            crate::report::format::plain(1e6 * d.abs())
        ));
    }
    s.push_str(&format!(
        "{:<20} {:>7} {:>9} {:>6} {:>10} {:>11} {:>11} {:>9} {:>12} {:>10}\n",
        "method",
        "phase",
        "asked dB",
        "taps",
        "reject dB",
        "ripple dB",
        "latency ms",
        "meas. ms",
        "x real time",
        "table KiB"
    ));
    let dash = || "-".to_string();
    for r in rows {
        let mark = if r.note.is_some() { "*" } else { "" };
        s.push_str(&format!(
            "{:<20} {:>7} {:>9} {:>6} {:>10} {:>11} {:>11.3} {:>9.3} {:>12.0} {:>10}\n",
            r.method,
            r.phase.unwrap_or("-"),
            r.requested_db.map_or_else(dash, |v| format!("{v}")),
            r.taps_per_phase.map_or_else(dash, |v| v.to_string()),
            format!("{:.1}{mark}", r.rejection_db),
            crate::report::format::small_db(r.ripple_db),
            r.latency_ms,
            r.measured_latency_ms(),
            r.speed_x_realtime,
            r.table_bytes
                .map_or_else(dash, |v| format!("{:.1}", v as f64 / 1024.0)),
        ));
    }
    for r in rows {
        if let (Some(st), Some(db)) = (&r.stages, r.requested_db) {
            let phase = r.phase.map_or(String::new(), |p| format!(" {p}-phase"));
            s.push_str(&format!(
                "{db} dB{phase} row in {st} (taps: the polyphase stage's; table: both)\n"
            ));
        }
    }
    for r in rows {
        if let (Some(n), Some(db)) = (&r.note, r.requested_db) {
            let phase = r.phase.map_or(String::new(), |p| format!(" {p}-phase"));
            s.push_str(&format!("* {db} dB{phase} row below its request: {n}\n"));
        }
    }
    s.push_str(
        "taps: per phase; latency: how far ahead a live stream must read (stated by the design);\n\
         meas.: that latency as measured (stated look-ahead + the offline output's delay, by correlation);\n\
         table memory in f32;\n\
         speed: one thread, mono, f32 for every row; it varies with the machine and its load\n",
    );
    s
}
