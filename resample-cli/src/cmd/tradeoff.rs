//! `rerate tradeoff`: filter length against measured quality against speed, one row per
//! design over a range of requested stopband attenuations, plus the simplest methods
//! (hold, linear interpolation, hold + moving average, hold + one-pole) measured the same
//! way, so the cost and the worth of a longer filter can be read off one table.

use std::io::Write;
use std::path::PathBuf;
use std::time::Instant;

use anyhow::{bail, Context, Result};
use clap::Args;
use resample_core::baseline::Baseline;
use resample_core::measure::{self, Settings, Sweep};
use resample_core::{Design, FilterSpec, Sample, StreamConverter};
use serde_json::{json, Value};

use crate::cmd::measured::num;
use crate::cmd::verify::run_engine;
use crate::rate::parse_rate;

/// Options of `rerate tradeoff`.
#[derive(Debug, Args)]
pub struct TradeoffArgs {
    /// Input sample rate (48000, 48k, 44.1k, 44.1kHz).
    #[arg(long, value_parser = parse_rate)]
    pub in_rate: u32,
    /// Output sample rate.
    #[arg(long, value_parser = parse_rate)]
    pub out_rate: u32,
    /// Stopband attenuations to design for, dB: FROM:TO:STEP, or a comma list.
    #[arg(long, default_value = "60:180:20", value_parser = parse_db_range)]
    pub stopband_db: DbList,
    /// Passband edge as a fraction of the lower Nyquist frequency (0.5 to 0.995).
    #[arg(long, default_value_t = resample_core::design::DEFAULT_PASSBAND)]
    pub passband: f64,
    /// Sweep duration for the quality measurement, seconds.
    #[arg(long, default_value_t = 4.0)]
    pub seconds: f64,
    /// Seconds of audio converted to time each method.
    #[arg(long, default_value_t = 5.0)]
    pub speed_seconds: f64,
    /// Leave out the baseline methods.
    #[arg(long)]
    pub no_baselines: bool,
    /// Print the rows as JSON.
    #[arg(long, conflicts_with = "csv")]
    pub json: bool,
    /// Print the rows as CSV.
    #[arg(long)]
    pub csv: bool,
    /// Draw rejection and speed against taps per phase to FILE (.png or .svg).
    #[arg(long, value_name = "FILE")]
    pub plot: Option<PathBuf>,
    /// Overwrite FILE given to --plot if it exists.
    #[arg(long)]
    pub force: bool,
}

/// A list of attenuations, dB.
#[derive(Debug, Clone, PartialEq)]
pub struct DbList(pub Vec<f64>);

/// `FROM:TO:STEP` (inclusive), a comma list, or one value.
pub fn parse_db_range(s: &str) -> Result<DbList, String> {
    let num = |t: &str| {
        t.trim()
            .parse::<f64>()
            .ok()
            .filter(|v| v.is_finite())
            .ok_or_else(|| format!("'{t}' is not a number of dB"))
    };
    let parts: Vec<&str> = s.split(':').collect();
    let list = match parts.as_slice() {
        [from, to, step] => {
            let (a, b, d) = (num(from)?, num(to)?, num(step)?);
            if d <= 0.0 || b < a {
                return Err("FROM:TO:STEP needs FROM <= TO and STEP > 0".into());
            }
            let n = ((b - a) / d + 1e-9).floor() as usize + 1;
            if n > 64 {
                return Err(format!("{n} designs: at most 64 per table"));
            }
            (0..n).map(|i| a + d * i as f64).collect()
        }
        [one] => one.split(',').map(num).collect::<Result<Vec<_>, _>>()?,
        _ => return Err("use FROM:TO:STEP or a comma list".into()),
    };
    if list.is_empty() {
        return Err("no attenuation given".into());
    }
    Ok(DbList(list))
}

/// One row of the table.
#[derive(Debug, Clone)]
pub struct Row {
    /// "windowed-sinc" or a baseline's name.
    pub method: String,
    /// Requested stopband attenuation (designs only), dB.
    pub requested_db: Option<f64>,
    /// Taps per phase (designs only).
    pub taps_per_phase: Option<usize>,
    /// Measured image / alias rejection, dB.
    pub rejection_db: f64,
    /// Measured passband ripple, dB peak to peak.
    pub ripple_db: f64,
    /// Latency a live stream adds: how far ahead of an output's instant its input reaches,
    /// ms (design group delay for windowed sinc; 0 for the causal baselines, one input
    /// sample for linear interpolation).
    pub latency_ms: f64,
    /// Delay of the output measured on the sweep (offline, so ~0 for windowed sinc, which
    /// compensates its delay), ms.
    pub measured_delay_ms: f64,
    /// Throughput of one thread, multiple of real time (mono, f32 for designs).
    pub speed_x_realtime: f64,
    /// Table memory in f32, bytes (designs only).
    pub table_bytes: Option<u64>,
    /// Why a design row measures below its request, and what to try.
    pub note: Option<String>,
}

/// A number for CSV that keeps its significance: scientific below 0.001 (not `0.000000`).
fn sig(v: f64) -> String {
    if v != 0.0 && v.is_finite() && v.abs() < 1e-3 {
        format!("{v:.4e}")
    } else {
        format!("{v:.6}")
    }
}

/// The reason a design row measures below its request, with a hint.
fn shortfall(m: &measure::Measurement, design: &Design, requested: f64) -> Option<String> {
    if m.rejection_db >= requested {
        return None;
    }
    let designed = design.report().measured_stopband_db;
    let from_probes = m
        .edge
        .as_ref()
        .is_some_and(|e| (e.time_s - m.worst.time_s).abs() < 1e-9);
    Some(if designed < requested {
        format!(
            "the design itself reaches {designed:.1} dB (arithmetic precision of the design); ask for more"
        )
    } else if from_probes {
        format!(
            "arithmetic precision: the edge probes read {:.1} dB at {:.0} Hz where the design's response has {designed:.1} dB; the conversion's arithmetic adds it",
            m.rejection_db, m.worst.unwanted_hz
        )
    } else {
        format!(
            "sweep resolution: the sweep read its strongest component at {:.0} Hz; a longer --seconds sweeps more slowly and resolves it more finely",
            m.worst.unwanted_hz
        )
    })
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

/// Time one streaming converter (one thread, as in a live stream) over `x`.
fn time_engine<T: Sample>(design: &Design, x: &[f64]) -> Result<f64> {
    let input: Vec<T> = x.iter().map(|&v| T::from_f64_lossy(v)).collect();
    let mut conv = StreamConverter::<T>::new(design, 1)?;
    let mut out = vec![T::zero(); 8192];
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

/// Measure every row.
pub fn rows(args: &TradeoffArgs) -> Result<Vec<Row>> {
    let sweep = Sweep::new(args.in_rate)
        .seconds(args.seconds)
        .edge_probes(args.out_rate);
    sweep.check().context("cannot make the sweep")?;
    let speed_n = (args.speed_seconds * f64::from(args.in_rate))
        .round()
        .max(1.0) as usize;
    let x = noise(speed_n);
    let audio_s = speed_n as f64 / f64::from(args.in_rate);
    let mut rows = Vec::new();
    for &db in &args.stopband_db.0 {
        let design = FilterSpec::new(args.in_rate, args.out_rate)
            .stopband_db(db)
            .passband(args.passband)
            .design()
            .with_context(|| format!("cannot design for {db} dB"))?;
        let settings = Settings {
            passband_edge_hz: Some(design.report().passband_edge_hz),
            keep_spectrogram: false,
        };
        let mut failure = None;
        // Quality in f64, as `verify` measures it (f32 rounding sits near -140 dB).
        let m = measure::measure_converter(&sweep, args.out_rate, &settings, |s| {
            run_engine::<f64>(&design, s).unwrap_or_else(|e| {
                failure = Some(e);
                Vec::new()
            })
        });
        if let Some(e) = failure {
            return Err(e.context("the converter failed"));
        }
        let m = m.with_context(|| format!("cannot measure the {db} dB design"))?;
        let secs = time_engine::<f32>(&design, &x)?;
        let r = design.report();
        rows.push(Row {
            method: "windowed-sinc".into(),
            requested_db: Some(db),
            taps_per_phase: Some(r.taps_per_phase),
            rejection_db: m.rejection_db,
            ripple_db: m.passband_ripple_db,
            latency_ms: r.latency_ms,
            measured_delay_ms: m.latency_ms,
            speed_x_realtime: audio_s / secs,
            table_bytes: Some(r.table_bytes_f32),
            note: shortfall(&m, &design, db),
        });
    }
    if !args.no_baselines {
        let settings = Settings::default();
        // Timed in f32 like the designs, into a buffer made once, as an engine would run.
        let x32: Vec<f32> = x.iter().map(|&v| v as f32).collect();
        let pair = resample_core::RatePair::new(args.in_rate, args.out_rate)?;
        let mut y32 = vec![0.0_f32; pair.output_len(x32.len() as u64) as usize];
        let mut scratch = Vec::new();
        for b in Baseline::ALL {
            let mut failure = None;
            let m = measure::measure_converter(&sweep, args.out_rate, &settings, |s| {
                b.convert(args.in_rate, args.out_rate, s)
                    .unwrap_or_else(|e| {
                        failure = Some(e);
                        Vec::new()
                    })
            });
            if let Some(e) = failure {
                bail!("{}: {e}", b.name());
            }
            let m = m.with_context(|| format!("cannot measure {}", b.name()))?;
            let secs = best_of_three(|| {
                b.convert_into(args.in_rate, args.out_rate, &x32, &mut y32, &mut scratch)?;
                std::hint::black_box(&y32);
                Ok(())
            })?;
            rows.push(Row {
                method: b.name().into(),
                requested_db: None,
                taps_per_phase: None,
                rejection_db: m.rejection_db,
                ripple_db: m.passband_ripple_db,
                latency_ms: if b == Baseline::Linear {
                    1e3 / f64::from(args.in_rate)
                } else {
                    0.0
                },
                measured_delay_ms: m.latency_ms,
                speed_x_realtime: audio_s / secs,
                table_bytes: None,
                note: None,
            });
        }
    }
    Ok(rows)
}

/// Run `rerate tradeoff`.
pub fn run(args: &TradeoffArgs) -> Result<()> {
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
        crate::cmd::tradeoff_plot::draw(path, &rows, args.in_rate, args.out_rate, args.force)?;
    }
    let mut out = std::io::stdout().lock();
    if args.json {
        let list: Vec<Value> = rows.iter().map(row_json).collect();
        let v = json!({
            "in_rate": args.in_rate,
            "out_rate": args.out_rate,
            "sweep_seconds": args.seconds,
            "speed": "one thread (CPU time where the system reports it), mono, f32, multiple of real time",
            "rows": list,
        });
        writeln!(out, "{v}")?;
    } else if args.csv {
        writeln!(
            out,
            "method,requested_db,taps_per_phase,rejection_db,ripple_db,latency_ms,speed_x_realtime,table_bytes,note"
        )?;
        let opt = |v: Option<String>| v.unwrap_or_default();
        for r in &rows {
            writeln!(
                out,
                "{},{},{},{},{},{},{},{},{}",
                r.method,
                opt(r.requested_db.map(|v| v.to_string())),
                opt(r.taps_per_phase.map(|v| v.to_string())),
                sig(r.rejection_db),
                sig(r.ripple_db),
                sig(r.latency_ms),
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
    Ok(())
}

fn row_json(r: &Row) -> Value {
    json!({
        "method": r.method,
        "requested_db": r.requested_db,
        "taps_per_phase": r.taps_per_phase,
        "rejection_db": num(r.rejection_db),
        "passband_ripple_db": num(r.ripple_db),
        "latency_ms": num(r.latency_ms),
        "measured_delay_ms": num(r.measured_delay_ms),
        "speed_x_realtime": num(r.speed_x_realtime),
        "table_bytes_f32": r.table_bytes,
        "note": r.note,
    })
}

fn table_text(rows: &[Row], args: &TradeoffArgs) -> String {
    let mut s = format!(
        "tradeoff {} Hz -> {} Hz: quality measured by a {} s sweep; speed of one thread on {} s of mono audio\n",
        args.in_rate, args.out_rate, args.seconds, args.speed_seconds
    );
    s.push_str(&format!(
        "{:<20} {:>9} {:>6} {:>10} {:>11} {:>11} {:>12} {:>10}\n",
        "method",
        "asked dB",
        "taps",
        "reject dB",
        "ripple dB",
        "latency ms",
        "x real time",
        "table KiB"
    ));
    let dash = || "-".to_string();
    for r in rows {
        let mark = if r.note.is_some() { "*" } else { "" };
        s.push_str(&format!(
            "{:<20} {:>9} {:>6} {:>10} {:>11} {:>11.3} {:>12.0} {:>10}\n",
            r.method,
            r.requested_db.map_or_else(dash, |v| format!("{v}")),
            r.taps_per_phase.map_or_else(dash, |v| v.to_string()),
            format!("{:.1}{mark}", r.rejection_db),
            crate::cmd::measured::small_db(r.ripple_db),
            r.latency_ms,
            r.speed_x_realtime,
            r.table_bytes
                .map_or_else(dash, |v| format!("{:.1}", v as f64 / 1024.0)),
        ));
    }
    for r in rows {
        if let (Some(n), Some(db)) = (&r.note, r.requested_db) {
            s.push_str(&format!("* {db} dB row below its request: {n}\n"));
        }
    }
    s.push_str(
        "taps: per phase; latency: how far ahead a live stream must read; table memory in f32;\n\
         speed: one thread, mono, f32 for every row; it varies with the machine and its load\n",
    );
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ranges_parse() {
        assert_eq!(
            parse_db_range("60:180:20").unwrap().0,
            vec![60.0, 80.0, 100.0, 120.0, 140.0, 160.0, 180.0]
        );
        assert_eq!(parse_db_range("90,120").unwrap().0, vec![90.0, 120.0]);
        assert_eq!(parse_db_range("100").unwrap().0, vec![100.0]);
        for bad in ["", "a", "60:40:10", "60:80:0", "1:2", "0:1000:1", "nan"] {
            assert!(parse_db_range(bad).is_err(), "{bad}");
        }
    }
}
