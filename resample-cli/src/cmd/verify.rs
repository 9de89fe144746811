//! `rerate verify`: the sweep-through test of our own converter, with the same engine and
//! precision `convert` uses; exit code 0 when the measurement meets the request, 1 when not.

use std::io::Write;

use anyhow::{Context, Result};
use resample_core::measure::{self, Probes, Settings, Sweep};
use resample_core::FilterSpec;

use crate::audio::wav::Encoding;
use crate::quality::{self, Precision};

use crate::args::check_filter;
use crate::args::verify::VerifyArgs;
use crate::args::PhaseArg;
use crate::convert::Chosen;
use crate::exit::Status;
use crate::report::format::small_db;
use crate::report::json;
use crate::report::measured::metrics_text;
use crate::report::shortfall::shortfall;
use crate::report::stages::StageFacts;

/// The output format whose rules `verify` applies: `--bits N`, `--float`, or 32-bit float.
fn encoding_of(args: &VerifyArgs) -> Encoding {
    args.bits
        .and_then(Encoding::int)
        .unwrap_or(Encoding::Float32)
}

/// Edge probes that reach less than this far from the edge (Hz) leave the band next to it
/// to the sweep's frames, which then need a slower sweep.
const PROBES_REACH_HZ: f64 = 100.0;

/// How much slower the sweep runs then. Measured: 48k -> 8k and 48k -> 16k with
/// `--clock-ppm -250` at 140 dB (measured between 47988 Hz and 8000 / 16000 Hz, two probe
/// tones) read 127.3 and 136.8 dB with the 10 s sweep, 140.57 dB with a 40 s one, which is
/// the design's own figure.
const SLOWER: f64 = 4.0;

/// The sweep's duration for measuring `a` -> `b` when none is given: the default, or
/// [`SLOWER`] times it where the probes cannot cover the band next to the edge.
fn default_seconds(a: u32, b: u32) -> f64 {
    // (Equal rates carry no probes and have no edge to resolve.)
    let sparse = a != b && Probes::new(a, b, 1.0).is_none_or(|p| p.reach_hz() < PROBES_REACH_HZ);
    if sparse {
        SLOWER * measure::DEFAULT_SECONDS
    } else {
        measure::DEFAULT_SECONDS
    }
}

/// Run `rerate verify`.
pub fn run(args: &VerifyArgs) -> Result<Status> {
    check_filter(args.stopband_db, args.passband)?;
    let encoding = encoding_of(args);
    let requested = args
        .stopband_db
        .unwrap_or_else(|| quality::default_stopband_db(encoding));
    let spec = FilterSpec::new(args.in_rate, args.out_rate)
        .stopband_db(requested)
        .passband(args.passband)
        .phase(args.phase.phase())
        .stage_choice(crate::args::stage_choice(args.one_stage));
    // The engine `convert` would run: fixed-ratio, or any-ratio for a clock correction or a
    // pair over the fixed table's budget.
    // Under a clock correction the sweep analyser (whole rates) measures between the whole
    // rates a -> b closest to the true pair, the engine running at b / a exactly
    // (ClockPpm::analysis_pair; the difference from the asked ratio is reported).
    let clock = args.clock_ppm;
    let (a, b, mismatch) = clock.analysis_pair(args.in_rate, args.out_rate);
    let engine = Chosen::new(&spec, clock)
        .context("cannot design the filter")?
        .measured_between(a, b);
    // The same rule `convert` follows (resample_cli::quality).
    let precision = quality::precision_for(requested);
    let seconds = args.seconds.unwrap_or_else(|| default_seconds(a, b));
    let sweep = Sweep::new(a).seconds(seconds).edge_probes(b);
    sweep.check().context("cannot make the sweep")?;
    let settings = Settings {
        passband_edge_hz: Some(engine.passband_edge_hz()),
        keep_spectrogram: args.report.plot.is_some()
            && args.report.plot_view == crate::args::PlotViewArg::Spectrogram,
    };
    let mut engine_error = None;
    let m = measure::measure_converter(&sweep, b, &settings, |x| {
        let r = match precision {
            Precision::F32 => engine.run::<f32>(x),
            Precision::F64 => engine.run::<f64>(x),
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
    let note = shortfall(&m, engine.design_stopband_db(), requested);
    if let Some(path) = &args.report.plot {
        let title = format!(
            "verify {} Hz -> {} Hz, {} dB requested",
            args.in_rate, args.out_rate, requested
        );
        crate::report::plot::draw(
            path,
            &m,
            &title,
            Some(requested),
            args.report.plot_view.view(),
            args.report.force,
        )?;
    }
    let (latency_samples, latency_ms) = engine.latency();
    let minimum = match (&engine, args.phase) {
        (Chosen::Fixed(p), PhaseArg::Minimum) => p.single().map(|d| d.report()),
        _ => None,
    };
    let clocked = !clock.is_zero();
    let stages = match &engine {
        Chosen::Fixed(p) => Some(StageFacts::of(p)),
        Chosen::AnyRatio { .. } => None,
    };
    let mut out = std::io::stdout().lock();
    if args.report.json {
        let record = json::Verify {
            metrics: json::Metrics::new(&m),
            requested_stopband_db: requested,
            ripple_limit_db: ripple_limit,
            design_stopband_db: engine.design_stopband_db(),
            design_latency_samples: latency_samples,
            minimum: minimum.map(|r| json::VerifyMinimumPhase {
                phase: "minimum",
                design_group_delay_1khz_ms: r.group_delay_1khz_ms,
                design_group_delay_variation_ms: r.group_delay_variation_ms,
            }),
            precision: precision.to_string(),
            sweep_seconds: seconds,
            pass,
            engine: engine.name(),
            engine_reason: engine.reason(),
            clock_ppm: clocked.then(|| clock.ppm()),
            measured_in_rate: clocked.then_some(a),
            measured_out_rate: clocked.then_some(b),
            ratio_difference_ppm: clocked.then_some(1e6 * mismatch),
            stages: stages.as_ref().map(|s| s.list.clone()),
            note: note.clone(),
        };
        writeln!(out, "{}", json::line(&record))?;
    } else {
        writeln!(
            out,
            "verify {} Hz -> {} Hz for {} output: {:.0} Hz to {:.0} Hz sweep, {} s at {} dBFS, {} engine",
            args.in_rate,
            args.out_rate,
            encoding,
            sweep.f1(),
            sweep.end_frequency(),
            seconds,
            sweep.level(),
            precision
        )?;
        if let Some(why) = engine.reason() {
            writeln!(out, "{:<22}{} engine: {why}", "", engine.name())?;
        }
        // Two stages, or one forced, are stated (an ordinary pair's report is as before).
        if let Some(s) = stages.as_ref().filter(|s| s.worth_a_line()) {
            writeln!(out, "{:<22}{}", "", s.words())?;
        }
        if clocked {
            writeln!(
                out,
                "{:<22}clock {clock} ppm: true pair {} Hz -> {} Hz, measured between {a} Hz \
                 and {b} Hz (ratio within {} ppm of it)",
                "",
                crate::report::format::plain(clock.true_rate(args.in_rate)),
                args.out_rate,
                crate::report::format::plain(1e6 * mismatch.abs()),
            )?;
        }
        write!(out, "{}", metrics_text(&m))?;
        writeln!(
            out,
            "{:<22}{:.2} output samples ({:.3} ms) of filter delay in a live stream (design)",
            "", latency_samples, latency_ms
        )?;
        if let Some(r) = minimum {
            writeln!(
                out,
                "{:<22}minimum phase: group delay {:.3} ms at 1 kHz, varies by {:.3} ms over \
                 the passband (design)",
                "", r.group_delay_1khz_ms, r.group_delay_variation_ms
            )?;
        }
        let mark = |ok: bool| if ok { "ok" } else { "FAILED" };
        writeln!(
            out,
            "{:<22}rejection {:.2} dB >= {:.2} dB requested: {}",
            "check",
            m.rejection_db,
            requested,
            mark(rejection_ok)
        )?;
        if let Some(why) = &note {
            writeln!(out, "{:<22}{why}", "note")?;
        }
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
        Status::Success
    } else {
        Status::CheckFailed
    })
}
