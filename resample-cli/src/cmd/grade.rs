//! `rerate grade`: measure another converter's output of our sweep. The output rate comes
//! from the file, the time offset from correlation; with `--expect-db` the exit code says
//! whether the rejection met it.

use std::io::Write;
use std::path::Path;

use anyhow::{bail, Context, Result};
use resample_core::measure::{self, Settings};

use crate::audio::{Input, NonFinite};
use crate::report::json;
use crate::report::measured::metrics_text;

use crate::args::check_filter;
use crate::args::grade::GradeArgs;
use crate::exit::Status;

/// A whole WAV file as planar channels, full scale = 1.0.
struct Planar {
    rate: u32,
    channels: Vec<Vec<f64>>,
}

/// Read `path` through the shared WAV layer (header checked against the file before any
/// allocation; NaN or infinite samples refused, naming frame and channel).
fn read_planar(path: &Path) -> Result<Planar> {
    let named = |e| crate::error::about_file(path, e);
    let mut reader = Input::open(path).map_err(named)?;
    let info = reader.info().clone();
    let n = usize::from(info.channels);
    // The reader has checked that the file holds `frames` frames.
    let frames = usize::try_from(info.frames).unwrap_or(usize::MAX);
    let mut channels = vec![Vec::with_capacity(frames); n];
    let mut block = vec![0.0_f64; 8192 * n];
    loop {
        let got = reader
            .read_frames(&mut block, NonFinite::Refuse)
            .map_err(named)?;
        if got == 0 {
            break;
        }
        for frame in block[..got * n].chunks_exact(n) {
            for (ch, &v) in channels.iter_mut().zip(frame) {
                ch.push(v);
            }
        }
    }
    // A header its writer never completed was read to the end of the file: say so, as
    // `convert` does.
    if let Some(w) = reader.header_warning() {
        crate::report::print::err_line(&format!("rerate: warning: {}: {w}", path.display()));
    }
    Ok(Planar {
        rate: info.sample_rate,
        channels,
    })
}

/// Run `rerate grade`.
pub fn run(args: &GradeArgs) -> Result<Status> {
    check_filter(None, args.passband)?;
    let sweep = args.sweep.sweep(args.source_rate)?;
    let wav = read_planar(&args.converted)?;
    let name = args.converted.display();
    let lower_nyq = f64::from(wav.rate.min(args.source_rate)) / 2.0;
    let settings = Settings {
        passband_edge_hz: Some(args.passband * lower_nyq),
        keep_spectrogram: args.report.plot.is_some()
            && args.report.plot_view == crate::args::PlotViewArg::Spectrogram,
    };
    // Every channel is measured (a converter may treat channels differently); the worst one
    // is reported, with its number.
    let mut worst: Option<(usize, measure::Measurement)> = None;
    for (c, ch) in wav.channels.iter().enumerate() {
        let m = measure::analyse(&sweep, ch, wav.rate, &settings)
            .with_context(|| format!("{name}: channel {}", c + 1))?;
        let worse = match &worst {
            None => true,
            Some((_, w)) => m.rejection_db < w.rejection_db,
        };
        if worse {
            worst = Some((c, m));
        }
    }
    let Some((channel, m)) = worst else {
        bail!("{name}: no channels");
    };
    let pass = args.expect_db.map(|e| m.rejection_db >= e);
    if let Some(path) = &args.report.plot {
        let title = format!(
            "grade {} ({} Hz -> {} Hz)",
            args.converted
                .file_name()
                .map(|n| n.to_string_lossy().into_owned())
                .unwrap_or_default(),
            args.source_rate,
            wav.rate
        );
        crate::report::plot::draw(
            path,
            &m,
            &title,
            args.expect_db,
            args.report.plot_view.view(),
            args.report.force,
        )?;
    }
    let mut out = std::io::stdout().lock();
    if args.report.json {
        let record = json::Grade {
            metrics: json::Metrics::new(&m),
            channel: channel + 1,
            channels: wav.channels.len(),
            expected_db: args.expect_db,
            pass,
        };
        writeln!(out, "{}", json::line(&record))?;
    } else {
        writeln!(
            out,
            "grade {name}: {} Hz sweep ({} s at {} dBFS) converted to {} Hz, channel {} of {}",
            args.source_rate,
            sweep.duration(),
            sweep.level(),
            wav.rate,
            channel + 1,
            wav.channels.len()
        )?;
        write!(out, "{}", metrics_text(&m))?;
        if let (Some(e), Some(p)) = (args.expect_db, pass) {
            writeln!(
                out,
                "{:<22}rejection {:.2} dB >= {:.2} dB expected: {}",
                "check",
                m.rejection_db,
                e,
                if p { "ok" } else { "FAILED" }
            )?;
            writeln!(out, "{:<22}{}", "result", if p { "PASS" } else { "FAIL" })?;
        }
    }
    Ok(match pass {
        Some(false) => Status::CheckFailed,
        _ => Status::Success,
    })
}
