//! `rerate verify`: the sweep-through test of our own converter, with the same engine and
//! precision `convert` uses; exit code 0 when the measurement meets the request, 1 when not.

use std::io::Write;
use std::process::ExitCode;

use anyhow::{Context, Result};
use clap::Args;
use resample_core::measure::{self, Settings, Sweep};
use resample_core::{Design, FilterSpec, Sample, StreamConverter};
use serde_json::{json, Value};

use resample_cli::quality::{self, Precision};
use resample_cli::wav::Encoding;

use crate::cmd::measured::{metrics_json, metrics_text, num, small_db, ReportArgs};
use crate::rate::parse_rate;

/// Options of `rerate verify`.
#[derive(Debug, Args)]
pub struct VerifyArgs {
    /// Input sample rate (48000, 48k, 44.1k, 44.1kHz).
    #[arg(long, value_parser = parse_rate)]
    pub in_rate: u32,
    /// Output sample rate.
    #[arg(long, value_parser = parse_rate)]
    pub out_rate: u32,
    /// Minimum stopband attenuation in dB (20 to 200) to design for and check against;
    /// default: what `convert` uses for the output format (--bits / --float).
    #[arg(long)]
    pub stopband_db: Option<f64>,
    /// Check the conversion `convert` would run for integer output of N bits (its default
    /// stopband and arithmetic precision follow the format).
    #[arg(long, value_name = "N", conflicts_with = "float")]
    pub bits: Option<u16>,
    /// Check the conversion for 32-bit float output (the default).
    #[arg(long)]
    pub float: bool,
    /// Passband edge as a fraction of the lower Nyquist frequency (0.5 to 0.995).
    #[arg(long, default_value_t = resample_core::design::DEFAULT_PASSBAND)]
    pub passband: f64,
    /// Sweep duration in seconds (longer sweeps resolve the stopband edge more finely).
    #[arg(long, default_value_t = measure::DEFAULT_SECONDS)]
    pub seconds: f64,
    /// How to report.
    #[command(flatten)]
    pub report: ReportArgs,
}

/// The output format whose rules `verify` applies: `--bits N`, `--float`, or 32-bit float.
fn encoding_of(args: &VerifyArgs) -> Result<Encoding> {
    match args.bits {
        None => Ok(Encoding::Float32),
        Some(b) => {
            Encoding::int(b).ok_or_else(|| anyhow::anyhow!("--bits {b}: choose 8, 16, 24 or 32"))
        }
    }
}

/// Run `x` through a streaming converter in `T`, in blocks, as `convert` does.
pub fn run_engine<T: Sample>(design: &Design, x: &[f64]) -> Result<Vec<f64>> {
    const BLOCK: usize = 4096;
    let mut conv = StreamConverter::<T>::new(design, 1)?;
    let total = design.pair().output_len(x.len() as u64) as usize;
    let mut out = vec![T::zero(); total];
    let input: Vec<T> = x.iter().map(|&v| T::from_f64_lossy(v)).collect();
    let (mut read, mut written) = (0, 0);
    while read < input.len() {
        let end = (read + BLOCK).min(input.len());
        let p = conv.process_planar(&[&input[read..end]], &mut [&mut out[written..]])?;
        read += p.frames_read;
        written += p.frames_written;
        if p.frames_read == 0 && p.frames_written == 0 {
            break;
        }
    }
    loop {
        let k = conv.flush_planar(&mut [&mut out[written..]])?;
        written += k;
        if k == 0 {
            break;
        }
    }
    out.truncate(written);
    Ok(out.iter().map(|v| v.to_f64_exact()).collect())
}

/// Run `rerate verify`.
pub fn run(args: &VerifyArgs) -> Result<ExitCode> {
    let encoding = encoding_of(args)?;
    let requested = args
        .stopband_db
        .unwrap_or_else(|| quality::default_stopband_db(encoding));
    let spec = FilterSpec::new(args.in_rate, args.out_rate)
        .stopband_db(requested)
        .passband(args.passband);
    let design = spec.design().context("cannot design the filter")?;
    // The same rule `convert` follows (resample_cli::quality).
    let precision = quality::precision_for(encoding);
    let sweep = Sweep::new(args.in_rate)
        .seconds(args.seconds)
        .edge_probes(args.out_rate);
    sweep.check().context("cannot make the sweep")?;
    let settings = Settings {
        passband_edge_hz: Some(design.report().passband_edge_hz),
        keep_spectrogram: args.report.plot.is_some(),
    };
    let mut engine_error = None;
    let m = measure::measure_converter(&sweep, args.out_rate, &settings, |x| {
        let r = match precision {
            Precision::F32 => run_engine::<f32>(&design, x),
            Precision::F64 => run_engine::<f64>(&design, x),
        };
        r.unwrap_or_else(|e| {
            engine_error = Some(e);
            Vec::new()
        })
    });
    if let Some(e) = engine_error {
        return Err(e.context("the converter failed"));
    }
    let m = m.context("cannot measure the output")?;
    let ripple_limit = measure::ripple_limit_db(requested);
    let rejection_ok = m.rejection_db >= requested;
    let ripple_ok = m.passband_ripple_db <= ripple_limit;
    let pass = rejection_ok && ripple_ok;
    if let Some(path) = &args.report.plot {
        let title = format!(
            "verify {} Hz -> {} Hz, {} dB requested",
            args.in_rate, args.out_rate, requested
        );
        crate::plot::draw(path, &m, &title, Some(requested), args.report.force)?;
    }
    let r = design.report();
    let mut out = std::io::stdout().lock();
    if args.report.json {
        let mut o = metrics_json(&m);
        o.insert("requested_stopband_db".into(), json!(requested));
        o.insert("ripple_limit_db".into(), num(ripple_limit));
        o.insert("design_stopband_db".into(), num(r.measured_stopband_db));
        o.insert(
            "design_latency_samples".into(),
            num(r.latency_output_frames),
        );
        o.insert("precision".into(), json!(precision.to_string()));
        o.insert("sweep_seconds".into(), json!(args.seconds));
        o.insert("pass".into(), json!(pass));
        writeln!(out, "{}", Value::Object(o))?;
    } else {
        writeln!(
            out,
            "verify {} Hz -> {} Hz for {} output: {:.0} Hz to {:.0} Hz sweep, {} s at {} dBFS, {} engine",
            args.in_rate,
            args.out_rate,
            encoding,
            sweep.f1(),
            sweep.end_frequency(),
            args.seconds,
            sweep.level(),
            precision
        )?;
        write!(out, "{}", metrics_text(&m))?;
        writeln!(
            out,
            "{:<22}{:.2} output samples ({:.3} ms) of filter delay in a live stream (design)",
            "", r.latency_output_frames, r.latency_ms
        )?;
        let mark = |ok: bool| if ok { "ok" } else { "FAILED" };
        writeln!(
            out,
            "{:<22}rejection {:.2} dB >= {:.2} dB requested: {}",
            "check",
            m.rejection_db,
            requested,
            mark(rejection_ok)
        )?;
        writeln!(
            out,
            "{:<22}ripple {} dB <= {} dB allowed: {}",
            "check",
            small_db(m.passband_ripple_db),
            small_db(ripple_limit),
            mark(ripple_ok)
        )?;
        writeln!(
            out,
            "{:<22}{}",
            "result",
            if pass { "PASS" } else { "FAIL" }
        )?;
    }
    Ok(if pass {
        ExitCode::SUCCESS
    } else {
        ExitCode::from(crate::EXIT_CHECK_FAILED)
    })
}
