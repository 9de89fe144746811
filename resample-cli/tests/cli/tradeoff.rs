//! `rerate tradeoff` run as a user would, in a fresh temporary directory.

use crate::util::*;

/// More taps must buy more measured rejection: on a small grid the designs' rows are
/// monotonic in taps per phase and in measured rejection, and each meets its request.
#[test]
fn more_taps_measure_more_rejection() {
    let dir = tempfile::tempdir().unwrap();
    let out = rerate(
        dir.path(),
        &[
            "tradeoff",
            "--in-rate",
            "44.1k",
            "--out-rate",
            "48k",
            "--stopband-db",
            "40:120:40",
            "--seconds",
            "2",
            "--speed-seconds",
            "0.2",
            "--json",
        ],
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let rows = v["rows"].as_array().unwrap();
    let designs: Vec<&serde_json::Value> = rows
        .iter()
        .filter(|r| r["method"] == "windowed-sinc")
        .collect();
    assert_eq!(designs.len(), 3);
    for w in designs.windows(2) {
        let taps = |r: &serde_json::Value| r["taps_per_phase"].as_u64().unwrap();
        let rej = |r: &serde_json::Value| r["rejection_db"].as_f64().unwrap();
        assert!(taps(w[1]) > taps(w[0]));
        assert!(
            rej(w[1]) > rej(w[0]) + 20.0,
            "{} then {}",
            rej(w[0]),
            rej(w[1])
        );
    }
    for r in &designs {
        assert!(r["rejection_db"].as_f64().unwrap() >= r["requested_db"].as_f64().unwrap());
        assert!(r["speed_x_realtime"].as_f64().unwrap() > 0.0);
    }
    // The baselines are there, and all of them fall far short of even the 40 dB design
    // (common practice, no source: hold and linear interpolation leave strong images).
    let base: Vec<&serde_json::Value> = rows
        .iter()
        .filter(|r| r["method"] != "windowed-sinc")
        .collect();
    assert_eq!(base.len(), 4);
    for r in base {
        assert!(r["rejection_db"].as_f64().unwrap() < 40.0, "{r}");
    }
}

#[test]
fn csv_text_and_plot() {
    let dir = tempfile::tempdir().unwrap();
    let common = [
        "tradeoff",
        "--in-rate",
        "48k",
        "--out-rate",
        "16k",
        "--stopband-db",
        "60,100",
        "--seconds",
        "2",
        "--speed-seconds",
        "0.2",
    ];
    let mut args = common.to_vec();
    args.push("--csv");
    let out = rerate(dir.path(), &args);
    assert!(out.status.success());
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text.starts_with("method,phase,requested_db,taps_per_phase,"));
    assert_eq!(text.lines().count(), 1 + 2 + 4);
    let mut args = common.to_vec();
    args.extend(["--no-baselines", "--plot", "t.svg"]);
    let out = rerate(dir.path(), &args);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(String::from_utf8(out.stdout).unwrap().contains("asked dB"));
    assert!(std::fs::read_to_string(dir.path().join("t.svg"))
        .unwrap()
        .contains("<svg"));
    // An existing plot is not overwritten without --force (exit 3, file kept).
    let out = rerate(dir.path(), &args);
    assert_eq!(out.status.code(), Some(3));
}

#[test]
fn bad_ranges_are_usage_errors() {
    let dir = tempfile::tempdir().unwrap();
    let out = rerate(
        dir.path(),
        &[
            "tradeoff",
            "--in-rate",
            "48k",
            "--out-rate",
            "44.1k",
            "--stopband-db",
            "90:60:10",
        ],
    );
    assert_eq!(out.status.code(), Some(2));
}

/// Rows below their request carry the reason, rows at or above it none; CSV numbers keep
/// their significance (a ripple of 1e-8 dB is not printed as 0.000000).
#[test]
fn shortfalls_are_flagged_and_csv_keeps_significance() {
    let dir = tempfile::tempdir().unwrap();
    let out = rerate(
        dir.path(),
        &[
            "tradeoff",
            "--in-rate",
            "48k",
            "--out-rate",
            "16k",
            "--stopband-db",
            "120,180",
            "--seconds",
            "2",
            "--speed-seconds",
            "0.2",
            "--no-baselines",
            "--csv",
        ],
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8(out.stdout).unwrap();
    let mut lines = text.lines();
    let head: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = |name: &str| head.iter().position(|h| *h == name).unwrap();
    let (req, rej, rip, note) = (
        col("requested_db"),
        col("rejection_db"),
        col("ripple_db"),
        col("note"),
    );
    let mut rows = 0;
    for line in lines {
        // The note is last and may hold commas inside its quotes.
        let f: Vec<&str> = line.splitn(head.len(), ',').collect();
        let asked: f64 = f[req].parse().unwrap();
        let got: f64 = f[rej].parse().unwrap();
        let ripple: f64 = f[rip].parse().unwrap();
        assert!(ripple > 0.0, "ripple printed as {}", f[rip]);
        assert!(!f[..note].contains(&"0.000000"), "{line}");
        if got < asked {
            assert!(
                f[note].contains("sweep resolution") || f[note].contains("arithmetic precision"),
                "{line}"
            );
        } else {
            assert!(f[note].is_empty(), "{line}");
        }
        rows += 1;
    }
    assert_eq!(rows, 2);
}
