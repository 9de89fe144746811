//! Every file `rerate convert` writes conforms to RIFF/WAVE, as judged by an independent
//! chunk walker (fixtures/riff_walk.py: Python's struct plus scipy.io.wavfile, sharing no
//! code with our reader or writer): every output format (8/16/24/32-bit integer, 32-bit
//! float; plain and WAVE_FORMAT_EXTENSIBLE) x 1, 2, 3 and 6 channels x even and odd frame
//! counts, and the fixtures we claim are valid (fixtures/ok/).
//!
//! The rules and their sources are in the walker's docstring: IBM/Microsoft, "Multimedia
//! Programming Interface and Data Specifications 1.0" (1991) for RIFF chunks, pad bytes and
//! the WAVE format chunk; Microsoft, "Multiple channel audio data and WAVE files" for
//! WAVE_FORMAT_EXTENSIBLE. Needs python3 with scipy (fixtures/requirements.txt, installed by
//! CI): without them these tests fail, saying so; they are never skipped.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::process::Command;

use crate::util::*;
use resample_cli::audio::wav::{Encoding, WavReader};
use serde_json::{json, Value};

/// The walker script.
fn walker() -> PathBuf {
    fixtures().join("riff_walk.py")
}

/// Run the walker once over every case in `cases` (written to a manifest in `dir`) and
/// return its per-file results; fail loudly if python3 or scipy is missing.
pub(crate) fn walk_all(dir: &Path, cases: &[Value]) -> Vec<Value> {
    let manifest = dir.join("manifest.json");
    std::fs::write(&manifest, serde_json::to_vec(cases).unwrap()).unwrap();
    let o = Command::new("python3")
        .arg(walker())
        .arg("--manifest")
        .arg(&manifest)
        .output()
        .unwrap_or_else(|e| {
            panic!(
                "cannot run python3 ({e}): the conformance suite needs python3 with scipy \
                 (pip install -r fixtures/requirements.txt)"
            )
        });
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert!(
        matches!(o.status.code(), Some(0 | 1)),
        "riff_walk.py did not run ({:?}): {stderr}",
        o.status
    );
    let results: Vec<Value> = String::from_utf8_lossy(&o.stdout)
        .lines()
        .map(|l| serde_json::from_str(l).unwrap_or_else(|e| panic!("{e}: {l}")))
        .collect();
    // One verdict per file, or the walker checked less than it was given.
    assert_eq!(
        results.len(),
        cases.len(),
        "walker output: {results:?} {stderr}"
    );
    let failures: Vec<String> = results
        .iter()
        .filter(|r| r["ok"] != json!(true))
        .map(|r| format!("{}: {}", r["path"], r["errors"]))
        .collect();
    assert!(
        failures.is_empty() && o.status.success(),
        "{} of {} files do not conform:\n{}",
        failures.len(),
        results.len(),
        failures.join("\n")
    );
    results
}

/// Whether our writer (through hound 3.5) uses WAVE_FORMAT_EXTENSIBLE: more than two
/// channels or more than 16 bits per sample (so float always). It follows the paper's
/// advice: WAVE_FORMAT_EXTENSIBLE for more than 16 bits or more than 2 channels (Microsoft,
/// "Multiple channel audio data and WAVE files", from memory).
fn extensible(enc: Encoding, channels: u16) -> bool {
    channels > 2 || enc.bits() > 16
}

/// The channel masks the paper gives for the layouts it names: stereo front left | front
/// right (0x3), 5.1 front left, right, centre, low frequency, back left, right (0x3F)
/// (Microsoft, "Multiple channel audio data and WAVE files", from memory). For 1 and 3
/// channels the walker checks the paper's rule only (one speaker bit per channel).
fn paper_mask(channels: u16) -> Option<u32> {
    match channels {
        2 => Some(0x3),
        6 => Some(0x3F),
        _ => None,
    }
}

#[test]
fn every_output_format_conforms() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    // 16 kHz -> 8 kHz: ceil(n / 2) output frames, so 2000 and 2001 input frames give an
    // even (1000) and an odd (1001) output.
    let (rin, rout) = (16_000u32, 8_000u32);
    let formats: [(Encoding, &[&str]); 5] = [
        // 8-bit output comes from keeping an 8-bit input's format (--bits offers 16/24/32).
        (Encoding::Int(8), &[]),
        (Encoding::Int(16), &["--bits", "16"]),
        (Encoding::Int(24), &["--bits", "24"]),
        (Encoding::Int(32), &["--bits", "32"]),
        (Encoding::Float32, &["--float"]),
    ];
    let mut cases = Vec::new();
    let mut kinds = BTreeMap::new();
    for (enc, opts) in formats {
        let tag = format!("{}{}", if enc.is_float() { "f" } else { "i" }, enc.bits());
        let in_dir = d.join(format!("in-{tag}"));
        std::fs::create_dir(&in_dir).unwrap();
        let in_enc = if enc == Encoding::Int(8) {
            enc
        } else {
            Encoding::Int(16)
        };
        let mut wanted = BTreeMap::new();
        for ch in [1u16, 2, 3, 6] {
            for frames in [2000usize, 2001] {
                let name = format!("c{ch}-n{frames}.wav");
                let x = signal(frames, usize::from(ch), rin);
                write_wav(&in_dir.join(&name), rin, ch, in_enc, &x);
                wanted.insert(name, (ch, frames.div_ceil(2) as u64));
            }
        }
        // One run per format over the folder of inputs, as a user would batch them.
        let out_dir = format!("out-{tag}");
        let mut args = vec![
            "convert",
            in_dir.to_str().unwrap(),
            "--out-rate",
            "8k",
            "-o",
            &out_dir,
            "--json",
        ];
        args.extend_from_slice(opts);
        let o = rerate(d, &args);
        assert!(o.status.success(), "{enc}: {}", err(&o));
        let mut seen = 0;
        for line in out(&o).lines() {
            let r: Value = serde_json::from_str(line).unwrap();
            if r["status"] != json!("converted") {
                continue;
            }
            let input = PathBuf::from(r["input"].as_str().unwrap());
            let name = input.file_name().unwrap().to_str().unwrap().to_owned();
            let (ch, frames) = wanted[&name];
            let report_frames = r["frames_out"].as_u64().unwrap();
            // The length the rational conversion promises (ceil(n L / M)), and the parity
            // this case is meant to test: odd counts are the ones that need a pad byte.
            assert_eq!(report_frames, frames, "{enc} {name}");
            let path = d.join(r["output"].as_str().unwrap());
            let ext = extensible(enc, ch);
            *kinds.entry((ext, report_frames % 2)).or_insert(0) += 1;
            let mut expect = json!({
                "kind": if ext { "extensible" } else { "plain" },
                "sample": if enc.is_float() { "float" } else { "int" },
                "channels": ch,
                "rate": rout,
                "container_bytes": enc.bytes(),
                // Our writer's valid bits fill the container.
                "valid_bits": enc.bits(),
                // The frame count of the `--json` report.
                "frames": report_frames,
            });
            if let (true, Some(mask)) = (ext, paper_mask(ch)) {
                expect["channel_mask"] = json!(mask);
            }
            cases.push(json!({"path": path, "expect": expect}));
            seen += 1;
        }
        assert_eq!(seen, wanted.len(), "{enc}: {}", out(&o));
    }
    // Both header kinds, each with even and odd frame counts, are covered.
    assert_eq!(kinds.len(), 4, "{kinds:?}");
    let results = walk_all(d, &cases);
    // The odd-sized chunks really were there (8- and 24-bit, 1 and 3 channels, odd frames).
    let odd = results
        .iter()
        .filter(|r| {
            r["facts"]["chunks"]
                .as_array()
                .unwrap()
                .iter()
                .any(|c| c[1].as_u64().unwrap() % 2 == 1)
        })
        .count();
    assert_eq!(odd, 4, "odd-sized data chunks");
}

#[test]
fn valid_fixtures_conform() {
    // The fixtures we claim are valid: the walker must find what our own reader finds.
    let dir = tempfile::tempdir().unwrap();
    let mut cases = Vec::new();
    let mut names: Vec<PathBuf> = std::fs::read_dir(fixtures().join("ok"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "wav"))
        .collect();
    names.sort();
    assert!(names.len() >= 6, "{names:?}");
    for path in names {
        let r = WavReader::open(&path).unwrap();
        let info = r.info();
        cases.push(json!({"path": path, "expect": {
            "channels": info.channels,
            "rate": info.sample_rate,
            "frames": info.frames,
        }}));
    }
    walk_all(dir.path(), &cases);
}
