//! `rerate sweep`: write the test sweep to a WAV file, to run through any other converter
//! and then `rerate grade` its output.

use std::io::Write;

use crate::audio::wav::{Encoding, WavWriter, WriterOptions};
use anyhow::Result;

use crate::args::sweep::{SweepArgs, CAUTION};
use crate::exit::Status;

/// Run `rerate sweep`.
pub fn run(args: &SweepArgs) -> Result<Status> {
    let encoding = match args.bits.and_then(Encoding::int) {
        None => Encoding::Float32,
        Some(e) => e,
    };
    let sweep = args.sweep.sweep(args.rate)?;
    let x = sweep.samples()?;
    let name = args.output.display();
    // Dither: unlike `convert` (TPDF by default), a sweep is written with plain rounding
    // unless `--dither tpdf` is asked for. The sweep is a stimulus: its requantization
    // error passes through the converter under test and sets the floor `grade` can see.
    // `grade` reports the strongest unwanted component, and TPDF dither triples the error
    // power (1/4 instead of 1/12 LSB^2), so it lowers that ceiling. Measured here with
    // this build (44.1k sweep, 2 s, `convert --out-rate 48k --float`, then `grade`):
    // 16-bit at -1 dBFS 98.1 dB with TPDF vs 102.4 dB rounded; 16-bit at -40 dBFS
    // 58.4 vs 60.4 dB; 24-bit at -1 dBFS 145.6 vs 150.0 dB. The rounding error of a
    // full-level sweep is spread like noise rather than collected into harmonics, so the
    // undithered file measures better at every level tried. Float (the default) needs
    // neither.
    let opts = WriterOptions {
        dither: args.dither.dither(),
        force: args.force,
        ..WriterOptions::new(args.rate, 1, encoding)
    };
    let named = |e| crate::error::about_file(&args.output, e);
    let mut writer = WavWriter::create(&args.output, &opts).map_err(named)?;
    writer.write_frames(&x).map_err(named)?;
    let dithered = writer.dithers();
    // Until `finish`, the samples live in a temporary file beside FILE, removed on error.
    writer.finish().map_err(named)?;
    // Printed with `?`, not `println!`: a closed pipe is an error, not a panic.
    let mut out = std::io::stdout().lock();
    let kind = if dithered {
        format!("{encoding}, TPDF dither")
    } else {
        encoding.to_string()
    };
    writeln!(
        out,
        "wrote {name}: {:.0} Hz to {:.0} Hz in {} s at {} dBFS peak, {} Hz, {}, {:.2} s in all",
        sweep.f1(),
        sweep.end_frequency(),
        sweep.duration(),
        sweep.level(),
        args.rate,
        kind,
        x.len() as f64 / f64::from(args.rate)
    )?;
    writeln!(
        out,
        "grade a converter's output of it with: rerate grade OUT.wav --source-rate {} --seconds {} --level {}{}",
        args.rate,
        sweep.duration(),
        sweep.level(),
        sweep
            .edge_rate()
            .map_or_else(String::new, |b| format!(" --for-rate {b}"))
    )?;
    writeln!(out, "{CAUTION}")?;
    Ok(Status::Success)
}
