//! Metadata carried across a conversion, and headers never completed by their writer, as a
//! user meets them: the built `rerate` converts the fixtures of fixtures/meta/ (written by
//! fixtures/make_wav_fixtures.py with struct and numpy, following EBU Tech 3285, the RIFF
//! MCI specification and the iXML specification) in a fresh temporary folder, and every
//! field of the output is parsed back and compared with values worked out independently from
//! the input by fixtures/check_metadata.py (Python's struct only; its docstring names the
//! source of each rule). Every output is also walked by fixtures/riff_walk.py and read by
//! `scipy.io.wavfile.read` (the general-purpose reference reader). Needs python3 with scipy
//! (fixtures/requirements.txt); without them these tests fail, saying so.

use std::io::Write;
use std::path::Path;
use std::process::{Command, Stdio};

use serde_json::{json, Value};

use crate::conformance::walk_all;
use crate::util::*;

fn meta(name: &str) -> std::path::PathBuf {
    fixtures().join("meta").join(name)
}

/// Run fixtures/check_metadata.py on `input` and `output` with `flags`: its verdict.
fn check(input: &Path, output: &Path, flags: &[&str]) -> Value {
    let o = Command::new("python3")
        .arg(fixtures().join("check_metadata.py"))
        .arg(input)
        .arg(output)
        .args(flags)
        .output()
        .unwrap_or_else(|e| panic!("cannot run python3 ({e}): check_metadata.py needs it"));
    assert!(
        matches!(o.status.code(), Some(0 | 1)),
        "check_metadata.py did not run: {}",
        err(&o)
    );
    serde_json::from_str(out(&o).trim()).unwrap_or_else(|e| panic!("{e}: {}", out(&o)))
}

/// Convert `input` to `out_name` in `d` with `args`; the JSON report.
fn convert(d: &Path, input: &Path, rate: &str, out_name: &str, args: &[&str]) -> Value {
    let mut a = vec![
        "convert",
        input.to_str().unwrap(),
        "--out-rate",
        rate,
        "-o",
        out_name,
        "--json",
    ];
    a.extend_from_slice(args);
    let o = rerate(d, &a);
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    serde_json::from_str(out(&o).lines().next().unwrap()).unwrap()
}

/// The body of the first chunk `id` of a RIFF/RF64 file (sizes from the chunk headers).
fn chunk_body(bytes: &[u8], id: &[u8; 4]) -> Option<Vec<u8>> {
    let mut pos = 12;
    while pos + 8 <= bytes.len() {
        let len = u32::from_le_bytes(bytes[pos + 4..pos + 8].try_into().unwrap()) as usize;
        if &bytes[pos..pos + 4] == id {
            return Some(bytes[pos + 8..(pos + 8 + len).min(bytes.len())].to_vec());
        }
        pos += 8 + len + len % 2;
    }
    None
}

fn u32_at(b: &[u8], i: usize) -> u32 {
    u32::from_le_bytes(b[i..i + 4].try_into().unwrap())
}

#[test]
fn every_carried_field_is_rescaled_as_worked_out_independently() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let cases: &[(&str, &str, &[&str])] = &[
        ("bwf_stereo_48k.wav", "44.1k", &[]),
        ("bwf_stereo_48k.wav", "96k", &[]),
        ("bwf_stereo_48k.wav", "32k", &["--bits", "16"]),
        ("bwf_stereo_48k.wav", "22050", &["--float"]),
        ("bwf_stereo_48k.wav", "48k", &[]),
        ("bwf_mono_96k_late.wav", "44.1k", &[]),
        ("bwf_mono_96k_late.wav", "8k", &[]),
        ("bw64_bwf_stereo_48k.wav", "44.1k", &[]),
    ];
    let mut walks = Vec::new();
    for (k, (name, rate, args)) in cases.iter().enumerate() {
        let input = meta(name);
        let out_name = format!("out{k}.wav");
        let r = convert(d, &input, rate, &out_name, args);
        let out_path = d.join(&out_name);
        let v = check(&input, &out_path, &[]);
        assert_eq!(v["ok"], json!(true), "{name} -> {rate}: {v}");
        // The checker really looked (the fields it compared are named).
        let checked = v["checked"].as_array().unwrap().len();
        assert!(checked >= 4, "{name}: only {v}");
        // The report says what was carried and dropped.
        let carried = r["metadata"]["carried"].as_array().unwrap();
        assert!(carried.contains(&json!("bext")), "{r}");
        if *name == "bwf_stereo_48k.wav" {
            assert_eq!(checked, 27, "{v}");
            for c in ["iXML", "cue", "LIST-adtl", "smpl", "LIST-INFO", "axml"] {
                assert!(carried.contains(&json!(c)), "{c}: {r}");
            }
            let dropped = r["metadata"]["dropped"].as_array().unwrap();
            assert_eq!(dropped.len(), 1, "{r}");
            assert!(
                dropped[0].as_str().unwrap().starts_with("zzzz (unknown"),
                "{r}"
            );
            let rescaled = r["metadata"]["rescaled"].to_string();
            assert!(rescaled.contains("4 cue points"), "{rescaled}");
        }
        walks.push(
            json!({"path": out_path, "expect": {"rate": r["out_rate"], "frames": r["frames_out"]}}),
        );
    }
    // EBU Tech 3285's time reference, 01:00:00 at 48 kHz (172800000 samples, in the BW64
    // fixture), is 158760000 at 44.1 kHz (3600 x 44100; CHECKS.md, "Files and metadata").
    let bytes = std::fs::read(d.join("out7.wav")).unwrap();
    let bext = chunk_body(&bytes, b"bext").unwrap();
    assert_eq!(u32_at(&bext, 338), 158_760_000);
    assert_eq!(u32_at(&bext, 342), 0);
    // 23:00:00 at 96 kHz (7948800000, past 32 bits) is 23 x 3600 x 8000 = 662400000 at
    // 8 kHz (common practice, no source: samples since midnight at the file's rate).
    let bytes = std::fs::read(d.join("out6.wav")).unwrap();
    let bext = chunk_body(&bytes, b"bext").unwrap();
    let tr = u64::from(u32_at(&bext, 338)) | u64::from(u32_at(&bext, 342)) << 32;
    assert_eq!(tr, 662_400_000);
    // The sampler's period at 96 kHz: 1e9 / 96000 = 10416.67 -> 10417 ns (RIFF MCI 'smpl').
    let bytes = std::fs::read(d.join("out1.wav")).unwrap();
    assert_eq!(u32_at(&chunk_body(&bytes, b"smpl").unwrap(), 8), 10_417);
    // Every output conforms, and scipy.io.wavfile reads it.
    walk_all(d, &walks);
}

#[test]
fn the_checker_finds_a_wrong_field() {
    // The independent checker is not blind: the same output with its time reference one
    // sample off, or a cue point moved, fails, naming the field.
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let input = meta("bwf_stereo_48k.wav");
    convert(d, &input, "44.1k", "good.wav", &[]);
    let good = std::fs::read(d.join("good.wav")).unwrap();
    let find = |id: &[u8]| good.windows(4).position(|w| w == id).unwrap() + 8;
    let mut bad = good.clone();
    bad[find(b"bext") + 338] ^= 1;
    std::fs::write(d.join("bad.wav"), &bad).unwrap();
    let v = check(&input, &d.join("bad.wav"), &[]);
    assert_eq!(v["ok"], json!(false), "{v}");
    assert!(
        v["errors"].to_string().contains("bext time reference"),
        "{v}"
    );
    let mut bad = good.clone();
    bad[find(b"cue ") + 4 + 24 + 4] ^= 1;
    std::fs::write(d.join("bad.wav"), &bad).unwrap();
    let v = check(&input, &d.join("bad.wav"), &[]);
    assert!(v["errors"].to_string().contains("cue point 2"), "{v}");
    // And the input is not its own conversion (no coding history line added).
    let v = check(&input, &input, &[]);
    assert!(
        v["errors"].to_string().contains("coding history line"),
        "{v}"
    );
}

#[test]
fn unknown_chunks_are_kept_on_request_and_strip_writes_format_and_audio_only() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let input = meta("bwf_stereo_48k.wav");
    let r = convert(d, &input, "44.1k", "keep.wav", &["--keep-unknown-chunks"]);
    assert!(r["metadata"]["carried"]
        .as_array()
        .unwrap()
        .contains(&json!("zzzz")));
    assert_eq!(r["metadata"]["dropped"], json!([]), "{r}");
    let v = check(&input, &d.join("keep.wav"), &["--keep-unknown"]);
    assert_eq!(v["ok"], json!(true), "{v}");
    let r = convert(d, &input, "44.1k", "strip.wav", &["--strip-metadata"]);
    assert_eq!(r["metadata"]["carried"], json!([]), "{r}");
    assert_eq!(r["metadata"]["dropped"].as_array().unwrap().len(), 8, "{r}");
    let v = check(&input, &d.join("strip.wav"), &["--strip"]);
    assert_eq!(v["ok"], json!(true), "{v}");
    let walked = walk_all(
        d,
        &[
            json!({"path": d.join("strip.wav")}),
            json!({"path": d.join("keep.wav")}),
        ],
    );
    assert_eq!(
        walked[0]["facts"]["chunks"],
        json!([["JUNK", 28], ["fmt ", 40], ["data", 26460]])
    );
    // The two flags together make no sense: a usage error.
    let o = rerate(
        d,
        &[
            "convert",
            input.to_str().unwrap(),
            "--out-rate",
            "44.1k",
            "--keep-unknown-chunks",
            "--strip-metadata",
        ],
    );
    assert_eq!(o.status.code(), Some(2), "{}", err(&o));
}

#[test]
fn channel_masks_are_kept_for_every_channel_count() {
    // dwChannelMask of WAVE_FORMAT_EXTENSIBLE (Microsoft, "Multiple channel audio data and
    // WAVE files"): the input's speaker positions, not the first N speaker bits.
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let mut walks = Vec::new();
    let cases: &[(&Path, u32, u16, &[&str])] = &[
        (&meta("ext16_2ch_mask5_48k.wav"), 0x5, 2, &[]),
        (&meta("ext16_4ch_mask33_48k.wav"), 0x33, 4, &[]),
        (
            &meta("ext16_6ch_mask60f_48k.wav"),
            0x60F,
            6,
            &["--bits", "24"],
        ),
        (&meta("ext16_6ch_mask60f_48k.wav"), 0x60F, 6, &["--float"]),
        (&fixtures().join("ok/ext20in24_mono_48k.wav"), 0x4, 1, &[]),
        (&fixtures().join("ok/ext24_6ch_8k.wav"), 0x3F, 6, &[]),
    ];
    for (k, (input, mask, ch, args)) in cases.iter().enumerate() {
        let name = format!("m{k}.wav");
        let r = convert(d, input, "44.1k", &name, args);
        let v = check(input, &d.join(&name), &[]);
        assert_eq!(v["ok"], json!(true), "{v}");
        assert!(v["checked"].to_string().contains("channel mask"), "{v}");
        walks.push(json!({"path": d.join(&name), "expect": {
            "kind": "extensible", "channel_mask": mask, "channels": ch, "frames": r["frames_out"],
        }}));
    }
    walk_all(d, &walks);
}

/// The data chunk's bytes.
fn audio(path: &Path) -> Vec<u8> {
    chunk_body(&std::fs::read(path).unwrap(), b"data").unwrap()
}

#[test]
fn unfinished_headers_convert_to_the_last_whole_frame_with_a_warning() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    // The same audio with its header completed by hand: 1001 frames of 4 bytes.
    let mut whole = std::fs::read(meta("unfinished_zero.wav")).unwrap();
    whole.truncate(whole.len() - 3);
    let riff = (whole.len() - 8) as u32;
    whole[4..8].copy_from_slice(&riff.to_le_bytes());
    let at = whole.len() - 4004 - 4;
    whole[at..at + 4].copy_from_slice(&4004u32.to_le_bytes());
    std::fs::write(d.join("whole.wav"), &whole).unwrap();
    let r = convert(d, &d.join("whole.wav"), "44.1k", "whole-44k.wav", &[]);
    assert_eq!(r["warnings"], json!([]));
    let expect = audio(&d.join("whole-44k.wav"));
    assert_eq!(expect.len(), 920 * 4);
    for name in ["unfinished_ffffffff.wav", "unfinished_zero.wav"] {
        let out_name = format!("{name}-44k.wav");
        let r = convert(d, &meta(name), "44.1k", &out_name, &[]);
        assert_eq!(r["frames_in"], json!(1001), "{r}");
        let w = r["warnings"].to_string();
        assert!(w.contains("not completed by its writer"), "{w}");
        assert!(w.contains("1001 whole frames"), "{w}");
        assert!(w.contains("3 bytes of a partial last frame ignored"), "{w}");
        assert_eq!(audio(&d.join(&out_name)), expect, "{name}");
        walk_all(
            d,
            &[json!({"path": d.join(&out_name), "expect": {"frames": 920}})],
        );
        // From a pipe (standard input): read to its end, the same audio.
        let mut child = command()
            .current_dir(d)
            .args([
                "convert",
                "-",
                "--out-rate",
                "44.1k",
                "-o",
                "pipe.wav",
                "--force",
            ])
            .stdin(Stdio::piped())
            .stdout(Stdio::piped())
            .stderr(Stdio::piped())
            .spawn()
            .unwrap();
        let bytes = std::fs::read(meta(name)).unwrap();
        child.stdin.take().unwrap().write_all(&bytes).unwrap();
        let o = child.wait_with_output().unwrap();
        assert_eq!(o.status.code(), Some(0), "{}", err(&o));
        assert!(
            err(&o).contains("the stream is read to its end"),
            "{}",
            err(&o)
        );
        assert!(
            err(&o).contains("3 bytes of a partial last frame"),
            "{}",
            err(&o)
        );
        assert_eq!(audio(&d.join("pipe.wav")), expect, "{name} through a pipe");
    }
}

#[test]
fn absurd_metadata_sizes_are_refused_without_allocating() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let fmt: [u8; 16] = [1, 0, 1, 0, 0x80, 0xBB, 0, 0, 0, 0x77, 1, 0, 2, 0, 16, 0];
    let head = |bext_len: u32| {
        let mut v = b"RIFF\0\0\0\0WAVEfmt \x10\0\0\0".to_vec();
        v.extend_from_slice(&fmt);
        v.extend_from_slice(b"bext");
        v.extend_from_slice(&bext_len.to_le_bytes());
        v
    };
    // A stream that says its 'bext' chunk has 2 GiB: refused before reading it.
    let mut child = command()
        .current_dir(d)
        .args(["convert", "-", "--out-rate", "44.1k", "-o", "x.wav"])
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let mut v = head(0x7FFF_FFFF);
    v.extend_from_slice(&[0u8; 4096]);
    // rerate may stop reading before all of it is written.
    let _ = child.stdin.take().unwrap().write_all(&v);
    let o = child.wait_with_output().unwrap();
    assert_ne!(o.status.code(), Some(0));
    assert!(
        err(&o).contains("'bext' metadata declares 2147483647 bytes, more than the 16777216"),
        "{}",
        err(&o)
    );
    assert!(!d.join("x.wav").exists());
    // A file that really holds a 17 MiB 'bext' chunk: the same refusal.
    let len = 17u32 << 20;
    let mut v = head(len);
    v.resize(v.len() + len as usize, 0);
    v.extend_from_slice(b"data\x04\0\0\0\0\0\0\0");
    std::fs::write(d.join("big.wav"), &v).unwrap();
    let o = rerate(d, &["convert", "big.wav", "--out-rate", "44.1k"]);
    assert_ne!(o.status.code(), Some(0));
    assert!(err(&o).contains("more than the 16777216"), "{}", err(&o));
    // An unknown chunk that large is skipped unread, and named as dropped.
    v[36..40].copy_from_slice(b"zzzz");
    std::fs::write(d.join("big.wav"), &v).unwrap();
    let r = convert(d, &d.join("big.wav"), "44.1k", "big-44k.wav", &[]);
    assert!(
        r["metadata"]["dropped"]
            .to_string()
            .contains("zzzz (17825792 bytes"),
        "{r}"
    );
}

#[test]
fn metadata_read_from_a_pipe_is_carried_the_same() {
    // Standard input is read front to back: the chunks after the audio are read after it.
    // The output is the same file, byte for byte, as from the seekable input.
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let input = meta("bwf_stereo_48k.wav");
    convert(d, &input, "44.1k", "file.wav", &[]);
    let mut child = command()
        .current_dir(d)
        .args(["convert", "-", "--out-rate", "44.1k", "-o", "pipe.wav"])
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let bytes = std::fs::read(&input).unwrap();
    child.stdin.take().unwrap().write_all(&bytes).unwrap();
    let o = child.wait_with_output().unwrap();
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    assert!(
        out(&o).contains("metadata carried: bext; iXML; cue; LIST-adtl; smpl; LIST-INFO; axml"),
        "{}",
        out(&o)
    );
    assert_eq!(
        std::fs::read(d.join("pipe.wav")).unwrap(),
        std::fs::read(d.join("file.wav")).unwrap()
    );
}
