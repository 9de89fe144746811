//! `rerate design`, run as a user would, in fresh temporary folders.

use crate::util::*;

use resample_core::FilterSpec;

#[test]
fn export_round_trips_every_bit() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("taps.txt");
    let out = command()
        .args([
            "design",
            "--in-rate",
            "44.1k",
            "--out-rate",
            "48kHz",
            "--stopband-db",
            "120",
        ])
        .arg("--export")
        .arg(&path)
        .current_dir(dir.path())
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = std::fs::read_to_string(&path).unwrap();
    let taps: Vec<f64> = text.lines().map(|l| l.parse().unwrap()).collect();
    let d = FilterSpec::new(44_100, 48_000)
        .stopband_db(120.0)
        .design()
        .unwrap();
    assert_eq!(taps.len(), d.taps().len());
    assert!(taps
        .iter()
        .zip(d.taps())
        .all(|(a, b)| a.to_bits() == b.to_bits()));
    // No temporary file is left behind.
    let names: Vec<_> = std::fs::read_dir(dir.path()).unwrap().collect();
    assert_eq!(names.len(), 1);

    // A second export to the same file is refused without --force, and the file is kept.
    let again = command()
        .args([
            "design",
            "--in-rate",
            "48k",
            "--out-rate",
            "16k",
            "--export",
        ])
        .arg(&path)
        .output()
        .unwrap();
    assert_eq!(again.status.code(), Some(3));
    assert!(String::from_utf8_lossy(&again.stderr).contains("already exists"));
    assert_eq!(std::fs::read_to_string(&path).unwrap(), text);
    let forced = command()
        .args([
            "design",
            "--in-rate",
            "48k",
            "--out-rate",
            "16k",
            "--force",
            "--export",
        ])
        .arg(&path)
        .output()
        .unwrap();
    assert!(forced.status.success());
    assert_ne!(std::fs::read_to_string(&path).unwrap(), text);
}

#[test]
fn json_report_has_the_figures() {
    let out = command()
        .args([
            "design",
            "--in-rate",
            "96000",
            "--out-rate",
            "44100",
            "--json",
        ])
        .output()
        .unwrap();
    assert!(out.status.success());
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["up"], 147);
    assert_eq!(v["down"], 320);
    assert!(v["measured_stopband_db"].as_f64().unwrap() >= 140.0);
    for key in [
        "total_taps",
        "taps_per_phase",
        "beta",
        "passband_edge_hz",
        "stopband_edge_hz",
        "passband_ripple_db",
        "latency_input_samples",
        "latency_output_samples",
        "latency_ms",
        "table_bytes_f32",
        "table_bytes_f64",
    ] {
        assert!(v[key].is_number(), "{key}");
    }
    // 96 kHz -> 44.1 kHz: stopband edge at the output Nyquist, passband 0.91 of it.
    assert_eq!(v["stopband_edge_hz"].as_f64().unwrap(), 22_050.0);
    assert!((v["passband_edge_hz"].as_f64().unwrap() - 0.91 * 22_050.0).abs() < 1e-6);
}

#[test]
fn bad_requests_fail_cleanly() {
    // Unparseable rate: usage error (2).
    let out = command()
        .args(["design", "--in-rate", "fast", "--out-rate", "48k"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    // An out-of-range attenuation is a usage error (2), as every bad option value is in every
    // command; exporting taps of a pair whose fixed table would pass the budget (it is
    // designed for the any-ratio engine, which has no fixed prototype to export) too. One
    // line each.
    let dir = tempfile::tempdir().unwrap();
    let taps = dir.path().join("taps.txt");
    let taps = taps.to_str().unwrap();
    for (args, code) in [
        (
            vec![
                "--in-rate",
                "44.1k",
                "--out-rate",
                "48k",
                "--stopband-db",
                "500",
            ],
            2,
        ),
        (
            vec![
                "--in-rate",
                "44100",
                "--out-rate",
                "48001",
                "--stopband-db",
                "140",
                "--export",
                taps,
            ],
            2,
        ),
    ] {
        let out = command().arg("design").args(&args).output().unwrap();
        assert_eq!(out.status.code(), Some(code), "{args:?}");
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(err.trim().lines().count(), 1, "{err}");
        assert!(!err.contains("panicked"));
        assert!(!std::path::Path::new(taps).exists());
    }
    // The pair itself is no longer refused: its table is the any-ratio engine's.
    let out = command()
        .args(["design", "--in-rate", "44100", "--out-rate", "48001"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0));
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("any-ratio"), "{text}");
}
