//! Requantization and levels through `rerate convert`: TPDF dither noise against the
//! published figure, determinism, clip count, peak and gain.

use crate::util::*;
use resample_cli::audio::wav::Encoding;
use resample_core::{offline, FilterSpec};

/// Error power of the 16-bit output against the f64 offline result, in LSB².
fn error_lsb2(dither: &str) -> f64 {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let n = 200_000;
    // Float input, so the only quantization is convert's own.
    let x: Vec<f64> = signal(n, 1, 44_100).iter().map(|v| 0.5 * v).collect();
    write_wav(&d.join("f.wav"), 44_100, 1, Encoding::Float32, &x);
    let o = rerate(
        d,
        &[
            "convert",
            "f.wav",
            "--out-rate",
            "48k",
            "--bits",
            "16",
            "--dither",
            dither,
            "-o",
            "o.wav",
        ],
    );
    assert!(o.status.success(), "{}", err(&o));
    let (_, _, _, y) = read_wav(&d.join("o.wav"));
    let (_, _, _, xin) = read_wav(&d.join("f.wav"));
    let design = FilterSpec::new(44_100, 48_000)
        .stopband_db(110.0)
        .design()
        .unwrap();
    let r = offline::convert(&design, &xin);
    let s: f64 = y
        .iter()
        .zip(&r)
        .map(|(a, b)| ((a - b) * 32768.0).powi(2))
        .sum();
    s / y.len() as f64
}

#[test]
fn tpdf_noise_at_16_bits_matches_the_published_figure() {
    // TPDF dither of 2 LSB peak to peak: total error variance Δ²/4 (+4.77 dB over the Δ²/12
    // of plain rounding). S. P. Lipshitz, R. A. Wannamaker, J. Vanderkooy, "Quantization and
    // dither: a theoretical survey", J. Audio Eng. Soc. 40(5), 1992. Measured on the whole
    // path (resampling in f32, dither, rounding) against the f64 offline result.
    let tpdf = error_lsb2("tpdf");
    let db = 10.0 * (tpdf / 0.25).log10();
    eprintln!("TPDF 16-bit error {tpdf:.5} LSB² ({db:+.3} dB from Δ²/4)");
    assert!(
        db.abs() <= 0.5,
        "TPDF error {tpdf:.4} LSB² is {db:+.3} dB from Δ²/4"
    );
    let plain = error_lsb2("none");
    let db = 10.0 * (plain / (1.0 / 12.0)).log10();
    eprintln!("undithered 16-bit error {plain:.5} LSB² ({db:+.3} dB from Δ²/12)");
    assert!(
        db.abs() <= 0.5,
        "rounding error {plain:.4} LSB² is {db:+.3} dB from Δ²/12"
    );
}

#[test]
fn dither_is_reproducible() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    write_wav(
        &d.join("a.wav"),
        48_000,
        2,
        Encoding::Int(24),
        &signal(5000, 2, 48_000),
    );
    for o in ["1.wav", "2.wav"] {
        let r = rerate(
            d,
            &[
                "convert",
                "a.wav",
                "--out-rate",
                "44.1k",
                "--bits",
                "16",
                "-o",
                o,
            ],
        );
        assert!(r.status.success());
    }
    assert_eq!(
        std::fs::read(d.join("1.wav")).unwrap(),
        std::fs::read(d.join("2.wav")).unwrap()
    );
}

#[test]
fn overs_are_clipped_counted_and_a_gain_suggested() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    // A full-scale square wave at 1 kHz: its band-limited version overshoots (Gibbs,
    // about 9 % / +0.8 dB; common practice, no source).
    let x: Vec<f64> = (0..20_000)
        .map(|i| {
            if (i / 24) % 2 == 0 {
                32767.0 / 32768.0
            } else {
                -1.0
            }
        })
        .collect();
    write_wav(&d.join("sq.wav"), 48_000, 1, Encoding::Int(16), &x);
    let o = rerate(
        d,
        &[
            "convert",
            "sq.wav",
            "--out-rate",
            "44.1k",
            "-o",
            "o.wav",
            "--json",
        ],
    );
    assert!(o.status.success(), "{}", err(&o));
    let v: serde_json::Value = serde_json::from_str(out(&o).lines().next().unwrap()).unwrap();
    let clipped = v["clipped"].as_u64().unwrap();
    let peak = v["peak_dbfs"].as_f64().unwrap();
    let gain = v["suggested_gain_db"].as_f64().unwrap();
    assert!(clipped > 100, "{v}");
    assert!(peak > 0.3 && peak < 2.0, "{v}");
    assert!(gain <= -(peak + 0.1) + 1e-9 && gain > -(peak + 0.3), "{v}");
    // The text report and the warning on stderr say the same.
    let o = rerate(
        d,
        &["convert", "sq.wav", "--out-rate", "44.1k", "-o", "t.wav"],
    );
    let line = out(&o);
    assert!(line.contains(&format!(", {clipped} limited;")), "{line}");
    assert!(
        err(&o).contains(&format!("--gain {gain:.1}")),
        "{}",
        err(&o)
    );
    // Applying the suggestion: nothing clipped.
    let g = format!("{gain}");
    let o = rerate(
        d,
        &[
            "convert",
            "sq.wav",
            "--out-rate",
            "44.1k",
            "-o",
            "g.wav",
            "--gain",
            &g,
            "--json",
        ],
    );
    let v: serde_json::Value = serde_json::from_str(out(&o).lines().next().unwrap()).unwrap();
    assert_eq!(v["clipped"], 0, "{v}");
    assert!(v["peak_dbfs"].as_f64().unwrap() <= -0.1 + 1e-6, "{v}");
}

#[test]
fn same_rate_same_format_is_bit_exact() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let x = signal(4000, 2, 48_000);
    write_wav(&d.join("a.wav"), 48_000, 2, Encoding::Int(24), &x);
    let o = rerate(d, &["convert", "a.wav", "--out-rate", "48k", "-o", "b.wav"]);
    assert!(o.status.success(), "{}", err(&o));
    assert_eq!(read_wav(&d.join("a.wav")).3, read_wav(&d.join("b.wav")).3);
}
