//! What a first-time user meets: the demo's closing suggestion, clipping warnings and
//! `--refuse-clipping`, report lines that fit a terminal, and the small messages (dither
//! that does not apply, silence, rates in kHz without their unit, no "-0.000").

use std::path::Path;

use crate::util::*;
use resample_cli::audio::wav::Encoding;

/// A full-scale square wave at 1 kHz, 48 kHz mono 16-bit: its band-limited version
/// overshoots full scale (Gibbs, about 9 %; common practice, no source).
fn square(path: &Path) {
    let x: Vec<f64> = (0..20_000)
        .map(|i| {
            if (i / 24) % 2 == 0 {
                32767.0 / 32768.0
            } else {
                -1.0
            }
        })
        .collect();
    write_wav(path, 48_000, 1, Encoding::Int(16), &x);
}

#[test]
fn the_demo_suggests_a_command_that_works_as_printed() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    for round in 0..2 {
        let o = rerate(d, &["demo"]);
        assert!(o.status.success(), "{}", err(&o));
        let text = out(&o);
        let last = text.lines().last().unwrap();
        let cmd = last
            .split_once("try: ")
            .unwrap_or_else(|| panic!("no suggestion: {last}"))
            .1
            .split("   ")
            .next()
            .unwrap();
        let words: Vec<&str> = cmd.split_whitespace().collect();
        assert_eq!(words[0], "rerate", "{last}");
        // Run it as printed (rerate = the built binary), from the same folder.
        let o = rerate(d, &words[1..]);
        assert!(o.status.success(), "round {round}: {cmd}: {}", err(&o));
        assert_eq!(
            read_wav(&d.join("rerate-demo/demo-jingle-44.1k-96k.wav")).0,
            96_000
        );
    }
}

#[test]
fn limited_samples_are_warned_about_and_can_be_refused() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    square(&d.join("sq.wav"));
    let o = rerate(
        d,
        &[
            "convert",
            "sq.wav",
            "--out-rate",
            "44.1k",
            "-o",
            "a.wav",
            "--json",
        ],
    );
    assert!(o.status.success(), "{}", err(&o));
    let v: serde_json::Value = serde_json::from_str(out(&o).lines().next().unwrap()).unwrap();
    let clipped = v["clipped"].as_u64().unwrap();
    let gain = v["suggested_gain_db"].as_f64().unwrap();
    assert!(clipped > 100, "{v}");
    assert_eq!(v["peak_measured"], "before limiting");
    // The warning, in our own words, on stderr: count, peak before limiting, the gain.
    let e = err(&o);
    let want = format!(
        "rerate: warning: a.wav: {clipped} samples over full scale, limited (peak {} dBFS, \
         measured before limiting); {:.1} dB of headroom needed: --gain {gain:.1}",
        resample_cli::report::format::fmt_db(v["peak_dbfs"].as_f64().unwrap()),
        -gain
    );
    assert_eq!(e.trim(), want, "{e}");
    assert!(!e.contains("clipped") && !e.contains("try --gain"), "{e}");
    // --refuse-clipping: an error, exit 1, no output kept; JSON says why.
    let o = rerate(
        d,
        &[
            "convert",
            "sq.wav",
            "--out-rate",
            "44.1k",
            "-o",
            "b.wav",
            "--refuse-clipping",
            "--json",
        ],
    );
    assert_eq!(o.status.code(), Some(1), "{}", err(&o));
    assert!(!d.join("b.wav").exists());
    assert!(listing(d)
        .iter()
        .all(|p| !p.to_string_lossy().contains("tmp")));
    let v: serde_json::Value = serde_json::from_str(out(&o).lines().next().unwrap()).unwrap();
    assert_eq!(v["status"], "failed", "{v}");
    let why = v["error"].as_str().unwrap();
    assert!(
        why.contains(&format!("{clipped} samples over full scale"))
            && why.contains(&format!("--gain {gain:.1}"))
            && why.contains("output not kept"),
        "{why}"
    );
    // The gain it names makes the same run pass.
    let g = format!("{gain}");
    let o = rerate(
        d,
        &[
            "convert",
            "sq.wav",
            "--out-rate",
            "44.1k",
            "-o",
            "c.wav",
            "--refuse-clipping",
            "--gain",
            &g,
        ],
    );
    assert!(o.status.success(), "{}", err(&o));
    assert!(!err(&o).contains("warning"), "{}", err(&o));
    // Float output keeps values over full scale: no warning, nothing refused.
    let o = rerate(
        d,
        &[
            "convert",
            "sq.wav",
            "--out-rate",
            "44.1k",
            "-o",
            "f.wav",
            "--float",
            "--refuse-clipping",
        ],
    );
    assert!(o.status.success(), "{}", err(&o));
    assert!(!err(&o).contains("warning"), "{}", err(&o));
    assert!(out(&o).contains("over 0 dBFS (kept)"), "{}", out(&o));
}

#[test]
fn report_lines_fit_an_80_column_terminal() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    square(&d.join("sq.wav"));
    // A busy report: format change, overs, gain.
    write_wav(
        &d.join("f.wav"),
        48_000,
        2,
        Encoding::Float32,
        &signal(30_000, 2, 48_000),
    );
    for args in [
        vec!["convert", "sq.wav", "--out-rate", "44.1k", "-o", "a.wav"],
        vec![
            "convert",
            "f.wav",
            "--out-rate",
            "44.1k",
            "--bits",
            "16",
            "--gain",
            "-1.5",
        ],
        vec![
            "convert",
            "sq.wav",
            "--out-rate",
            "96k",
            "--float",
            "-o",
            "b.wav",
        ],
    ] {
        let o = rerate(d, &args);
        assert!(o.status.success(), "{}", err(&o));
        let text = out(&o);
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(lines.len(), 3, "{text}");
        assert!(lines[0].contains(" -> "), "{text}");
        for l in &lines[1..] {
            assert!(
                l.chars().count() <= 80,
                "{} columns: {l}",
                l.chars().count()
            );
        }
    }
}

#[test]
fn dither_is_claimed_only_where_it_applies() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    write_wav(
        &d.join("tone.wav"),
        48_000,
        1,
        Encoding::Int(24),
        &signal(4_000, 1, 48_000),
    );
    // Float output with --dither tpdf: a note that it does not apply.
    let o = rerate(
        d,
        &[
            "convert",
            "tone.wav",
            "--out-rate",
            "44.1k",
            "--float",
            "--dither",
            "tpdf",
        ],
    );
    assert!(o.status.success(), "{}", err(&o));
    assert!(
        err(&o).contains("--dither tpdf does not apply to float output"),
        "{}",
        err(&o)
    );
    assert!(out(&o).contains(", no dither"), "{}", out(&o));
    // Without --dither no note.
    let o = rerate(d, &["convert", "tone.wav", "--out-rate", "32k", "--float"]);
    assert!(!err(&o).contains("does not apply"), "{}", err(&o));
    // A silent file converted to 16 bits: no sample needs dither, and the report says so.
    write_wav(
        &d.join("quiet.wav"),
        48_000,
        2,
        Encoding::Int(16),
        &vec![0.0; 2 * 5_000],
    );
    let o = rerate(
        d,
        &["convert", "quiet.wav", "--out-rate", "44.1k", "--json"],
    );
    assert!(o.status.success(), "{}", err(&o));
    let v: serde_json::Value = serde_json::from_str(out(&o).lines().next().unwrap()).unwrap();
    assert_eq!(v["dither"], "none", "{v}");
    assert_eq!(v["dithered_samples"], 0, "{v}");
    let o = rerate(d, &["convert", "quiet.wav", "--out-rate", "32k"]);
    assert!(!out(&o).contains("TPDF"), "{}", out(&o));
    assert!(out(&o).contains("no dither needed"), "{}", out(&o));
    // The tone does get it.
    let o = rerate(
        d,
        &["convert", "tone.wav", "--out-rate", "16k", "--bits", "16"],
    );
    assert!(out(&o).contains("TPDF dither"), "{}", out(&o));
}

#[test]
fn a_rate_in_khz_without_its_unit_gets_a_suggestion() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    write_wav(
        &d.join("t.wav"),
        48_000,
        1,
        Encoding::Int(16),
        &signal(100, 1, 48_000),
    );
    let o = rerate(d, &["convert", "t.wav", "--out-rate", "44.1"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(err(&o).contains("write 44.1k"), "{}", err(&o));
}

#[test]
fn no_negative_zero_in_reports() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let o = rerate(
        d,
        &[
            "verify",
            "--in-rate",
            "16k",
            "--out-rate",
            "8k",
            "--stopband-db",
            "60",
            "--seconds",
            "1",
        ],
    );
    let text = out(&o);
    assert!(text.contains("latency"), "{text}{}", err(&o));
    for l in text.lines() {
        assert!(!l.contains("-0.000") && !l.contains("-0.00 "), "{l}");
    }
}
