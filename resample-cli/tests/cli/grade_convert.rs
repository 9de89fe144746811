//! End to end, as a user would: `rerate sweep`, then `rerate convert` on it, then `rerate
//! grade`; the grade agrees with `rerate verify` of the same request.

use crate::util::*;

use std::process::Output;

fn rejection(out: &Output) -> f64 {
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).expect("JSON");
    v["rejection_db"].as_f64().expect("rejection_db")
}

#[test]
fn grade_of_convert_output_agrees_with_verify_at_120_db() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let s = rerate(
        d,
        &[
            "sweep",
            "--rate",
            "44.1k",
            "-o",
            "sweep.wav",
            "--float",
            "--seconds",
            "4",
            "--for-rate",
            "48k",
        ],
    );
    assert!(s.status.success(), "{}", String::from_utf8_lossy(&s.stderr));
    let c = rerate(
        d,
        &[
            "convert",
            "sweep.wav",
            "--out-rate",
            "48k",
            "--float",
            "--stopband-db",
            "120",
            "-o",
            "converted.wav",
        ],
    );
    assert!(c.status.success(), "{}", String::from_utf8_lossy(&c.stderr));
    let graded = rejection(&rerate(
        d,
        &[
            "grade",
            "converted.wav",
            "--source-rate",
            "44.1k",
            "--seconds",
            "4",
            "--for-rate",
            "48k",
            "--expect-db",
            "120",
            "--json",
        ],
    ));
    let verified = rejection(&rerate(
        d,
        &[
            "verify",
            "--in-rate",
            "44.1k",
            "--out-rate",
            "48k",
            "--stopband-db",
            "120",
            "--seconds",
            "4",
            "--json",
        ],
    ));
    assert!(verified >= 120.0, "verify {verified}");
    // The same converter and the same sweep with its edge probes: the file's 32-bit float
    // storage is all that differs.
    assert!(
        (graded - verified).abs() <= 0.5,
        "grade {graded:.2} dB vs verify {verified:.2} dB"
    );
}
