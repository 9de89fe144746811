//! The pictures of `verify`, `grade` and `tradeoff` (`--plot`, `--plot-view`): files
//! written in the format their name asks for, never over an existing file, and bad picture
//! options refused as usage errors (exit 2) before any work.

use std::path::Path;

use crate::util::*;

/// A PNG file's signature and its width and height from the IHDR chunk (PNG
/// specification, ISO/IEC 15948: 8-byte signature, then IHDR with width and height as
/// big-endian u32 at bytes 16 and 20).
fn png_size(path: &Path) -> (u32, u32) {
    let b = std::fs::read(path).unwrap();
    assert_eq!(&b[..8], b"\x89PNG\r\n\x1a\n", "{}", path.display());
    assert_eq!(&b[12..16], b"IHDR");
    let be = |i: usize| u32::from_be_bytes([b[i], b[i + 1], b[i + 2], b[i + 3]]);
    (be(16), be(20))
}

fn is_svg(path: &Path) -> bool {
    std::fs::read_to_string(path).is_ok_and(|s| s.starts_with("<svg") && s.contains("</svg>"))
}

const VERIFY: [&str; 7] = [
    "verify",
    "--in-rate",
    "44.1k",
    "--out-rate",
    "48k",
    "--seconds",
    "1",
];

#[test]
fn verify_draws_the_margin_view_by_default_and_the_spectrogram_on_request() {
    let dir = tempfile::tempdir().unwrap();
    let mut args = VERIFY.to_vec();
    args.extend(["--plot", "margin.png"]);
    let o = rerate(dir.path(), &args);
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    let (w, h) = png_size(&dir.path().join("margin.png"));
    assert!(w >= 800 && h >= 600, "{w} x {h}");

    let mut args = VERIFY.to_vec();
    args.extend(["--plot", "time.SVG", "--plot-view", "spectrogram"]);
    let o = rerate(dir.path(), &args);
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    assert!(is_svg(&dir.path().join("time.SVG")));
    // Nothing but the two pictures (no temporary files left).
    assert_eq!(
        listing(dir.path()),
        vec![Path::new("margin.png").to_path_buf(), "time.SVG".into()]
    );
}

#[test]
fn bad_picture_options_are_usage_errors_before_any_work() {
    let dir = tempfile::tempdir().unwrap();
    for extra in [
        &["--plot", "v.txt"][..],
        &["--plot", "v"][..],
        &["--plot", "v.png", "--plot-view", "sideways"][..],
        // A view without a picture to draw.
        &["--plot-view", "spectrogram"][..],
    ] {
        let mut args = VERIFY.to_vec();
        args.extend(extra);
        let o = rerate(dir.path(), &args);
        assert_eq!(o.status.code(), Some(2), "{extra:?}: {}", err(&o));
        assert!(listing(dir.path()).is_empty(), "{extra:?}");
    }
    let o = rerate(
        dir.path(),
        &[
            "tradeoff",
            "--in-rate",
            "48k",
            "--out-rate",
            "16k",
            "--plot",
            "t.jpg",
        ],
    );
    assert_eq!(o.status.code(), Some(2), "{}", err(&o));
}

#[test]
fn grade_draws_both_views_of_a_converted_sweep() {
    let dir = tempfile::tempdir().unwrap();
    let o = rerate(
        dir.path(),
        &[
            "sweep",
            "--rate",
            "48k",
            "--for-rate",
            "44.1k",
            "--seconds",
            "1",
            "--float",
            "-o",
            "s.wav",
        ],
    );
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    let o = rerate(
        dir.path(),
        &[
            "convert",
            "s.wav",
            "--out-rate",
            "44.1k",
            "--float",
            "--stopband-db",
            "90",
            "-o",
            "c.wav",
        ],
    );
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    let grade = [
        "grade",
        "c.wav",
        "--source-rate",
        "48k",
        "--for-rate",
        "44.1k",
        "--seconds",
        "1",
        "--expect-db",
        "80",
    ];
    let mut args = grade.to_vec();
    args.extend(["--plot", "g.svg"]);
    let o = rerate(dir.path(), &args);
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    assert!(is_svg(&dir.path().join("g.svg")));
    let mut args = grade.to_vec();
    args.extend(["--plot", "g.png", "--plot-view", "spectrogram"]);
    let o = rerate(dir.path(), &args);
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    png_size(&dir.path().join("g.png"));
    // Not over an existing picture without --force (exit 3, the file kept).
    let before = std::fs::read(dir.path().join("g.png")).unwrap();
    let o = rerate(dir.path(), &args);
    assert_eq!(o.status.code(), Some(3), "{}", err(&o));
    assert_eq!(std::fs::read(dir.path().join("g.png")).unwrap(), before);
    args.push("--force");
    let o = rerate(dir.path(), &args);
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
}

#[test]
fn tradeoff_phases_latency_and_picture() {
    let dir = tempfile::tempdir().unwrap();
    let common = [
        "tradeoff",
        "--in-rate",
        "44.1k",
        "--out-rate",
        "48k",
        "--stopband-db",
        "80",
        "--seconds",
        "1",
        "--speed-seconds",
        "0.1",
        "--no-baselines",
    ];
    let mut args = common.to_vec();
    args.extend(["--both-phases", "--json", "--plot", "t.png"]);
    let o = rerate(dir.path(), &args);
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    png_size(&dir.path().join("t.png"));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let rows = v["rows"].as_array().unwrap();
    assert_eq!(rows.len(), 2);
    assert_eq!(rows[0]["phase"], "linear");
    assert_eq!(rows[1]["phase"], "minimum");
    let f = |r: &serde_json::Value, k: &str| r[k].as_f64().unwrap();
    for r in rows {
        assert!(f(r, "rejection_db") >= 80.0, "{r}");
        // The measured latency is the stated look-ahead plus the offline output's delay.
        let sum = f(r, "latency_ms") + f(r, "measured_delay_ms");
        assert!((f(r, "measured_latency_ms") - sum).abs() < 1e-9, "{r}");
    }
    // Minimum phase: a fraction of the linear-phase latency (issue target: <= 25 %), stated
    // and measured.
    assert!(f(&rows[1], "latency_ms") <= 0.25 * f(&rows[0], "latency_ms"));
    assert!(f(&rows[1], "measured_latency_ms") <= 0.25 * f(&rows[0], "measured_latency_ms"));
    // Linear phase: the measured latency is the stated one (within a hundredth of a ms).
    assert!((f(&rows[0], "measured_latency_ms") - f(&rows[0], "latency_ms")).abs() < 0.01);

    let mut args = common.to_vec();
    args.extend(["--phase", "minimum", "--csv"]);
    let o = rerate(dir.path(), &args);
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    let text = out(&o);
    assert!(text.starts_with("method,phase,"), "{text}");
    assert_eq!(text.lines().count(), 2, "{text}");
    assert!(text
        .lines()
        .nth(1)
        .unwrap()
        .starts_with("windowed-sinc,minimum,"));

    for bad in [
        &["--phase", "sideways"][..],
        &["--phase", "minimum", "--both-phases"][..],
    ] {
        let mut args = common.to_vec();
        args.extend(bad);
        let o = rerate(dir.path(), &args);
        assert_eq!(o.status.code(), Some(2), "{bad:?}: {}", err(&o));
    }
}
