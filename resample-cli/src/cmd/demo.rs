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
    // The output of the command the demo suggests at the end, left by an earlier run: gone,
    // so that the suggestion works as printed again.
    let suggested = dir.join("demo-jingle-44.1k-96k.wav");
    if suggested.is_file() {
        std::fs::remove_file(&suggested)
            .with_context(|| format!("cannot replace {}", suggested.display()))?;
    }
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
            out_line(&report.json());
        } else {
            out_line(&report.line());
        }
    }
    if !args.json {
        // A command that works as printed, from the folder the demo ran in.
        out_line(&format!(
            "demo: next, try: rerate convert {} --out-rate 96k --float   \
             (writes {}; rerate convert --help for more)",
            shell_word(&source.display().to_string()),
            shell_word(&suggested.display().to_string()),
        ));
    }
    Ok(Status::Success)
}

/// `word` as one word for a POSIX shell: as it is when it has no special characters, else in
/// single quotes.
fn shell_word(word: &str) -> String {
    let plain = !word.is_empty()
        && word
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || "._/-+=:,@".contains(c));
    if plain {
        word.to_string()
    } else {
        format!("'{}'", word.replace('\'', "'\\''"))
    }
}
