//! `rerate demo`: the built-in demo scenario. A generated jingle for a short video (44.1 kHz
//! stereo, 24-bit; demo data of our own) is written to `./rerate-demo/`, converted to 48 kHz
//! for the video and to 16 kHz 16-bit for a speech/ML pipeline, and the report is printed.

use crate::audio::wav::{Encoding, WavWriter, WriterOptions};
use crate::convert::{convert_file, Control, DesignCache, Settings};
use crate::demo::{jingle, JINGLE_RATE};
use crate::report::print::out_line;
use anyhow::{Context, Result};

use crate::args::demo::DemoArgs;
use crate::exit::Status;
use crate::io::signals::{self, CANCEL};

/// Run `rerate demo`.
pub fn run(args: &DemoArgs) -> Result<Status> {
    signals::install();
    let dir = &args.output;
    std::fs::create_dir_all(dir).with_context(|| format!("cannot create {}", dir.display()))?;
    let source = dir.join("demo-jingle-44.1k.wav");
    let mut opts = WriterOptions::new(JINGLE_RATE, 2, Encoding::Int(24));
    opts.force = true;
    let mut w = WavWriter::create(&source, &opts)
        .with_context(|| format!("{}: cannot write", source.display()))?;
    w.write_frames(&jingle(JINGLE_RATE))
        .with_context(|| format!("{}: cannot write", source.display()))?;
    w.finish()
        .with_context(|| format!("{}: cannot write", source.display()))?;
    if !args.json {
        out_line(&format!(
            "demo: wrote {} (a 6 s jingle for a short video: tones, a chirp, a noise burst; \
             play it at a low level)",
            source.display()
        ));
    }
    let designs = DesignCache::new();
    let no_progress = |_: u64| {};
    let targets = [
        (48_000, None, "demo-jingle-48k.wav"),
        (16_000, Some(Encoding::Int(16)), "demo-jingle-16k.wav"),
    ];
    for (rate, encoding, name) in targets {
        let mut s = Settings::new(rate);
        s.encoding = encoding;
        s.force = true;
        let out = dir.join(name);
        let ctl = Control {
            cancel: &CANCEL,
            progress: &no_progress,
        };
        let report = convert_file(&source, &out, &s, &designs, ctl)
            .with_context(|| format!("{}", source.display()))?;
        if args.json {
            out_line(&report.json().to_string());
        } else {
            out_line(&report.line());
        }
    }
    if !args.json {
        out_line(
            "demo: next, convert your own files: rerate convert IN.wav --out-rate 48k \
             (see rerate convert --help)",
        );
    }
    Ok(Status::Success)
}
