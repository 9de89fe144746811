//! Safety of `rerate convert`: never an input, never an existing output without --force,
//! no half-written or temporary files after an error or an interruption, the RIFF size
//! limit checked before any work.

use std::path::PathBuf;
use std::time::{Duration, Instant};

use crate::util::*;
use resample_cli::audio::wav::Encoding;

fn make(dir: &std::path::Path, name: &str, frames: usize) -> Vec<u8> {
    let p = dir.join(name);
    if let Some(parent) = p.parent() {
        std::fs::create_dir_all(parent).unwrap();
    }
    write_wav(&p, 44_100, 2, Encoding::Int(16), &signal(frames, 2, 44_100));
    std::fs::read(p).unwrap()
}

#[test]
fn refuses_an_existing_output_without_force() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    make(d, "a.wav", 1000);
    std::fs::write(d.join("b.wav"), b"precious").unwrap();
    let o = rerate(d, &["convert", "a.wav", "--out-rate", "48k", "-o", "b.wav"]);
    assert_eq!(o.status.code(), Some(3));
    assert!(
        err(&o).contains("already exists (use --force"),
        "{}",
        err(&o)
    );
    assert_eq!(std::fs::read(d.join("b.wav")).unwrap(), b"precious");
    let o = rerate(
        d,
        &[
            "convert",
            "a.wav",
            "--out-rate",
            "48k",
            "-o",
            "b.wav",
            "--force",
        ],
    );
    assert!(o.status.success(), "{}", err(&o));
    assert_eq!(read_wav(&d.join("b.wav")).0, 48_000);
    assert_eq!(listing(d), vec![PathBuf::from("a.wav"), "b.wav".into()]);
}

#[test]
fn never_writes_an_input_even_with_force() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let a = make(d, "a.wav", 1000);
    // Directly.
    let o = rerate(
        d,
        &[
            "convert",
            "a.wav",
            "--out-rate",
            "48k",
            "-o",
            "a.wav",
            "--force",
        ],
    );
    assert_eq!(o.status.code(), Some(3));
    assert!(err(&o).contains("is an input file"), "{}", err(&o));
    // Through another name of the same file.
    std::fs::hard_link(d.join("a.wav"), d.join("link.wav")).unwrap();
    let o = rerate(
        d,
        &[
            "convert",
            "a.wav",
            "--out-rate",
            "48k",
            "-o",
            "link.wav",
            "--force",
        ],
    );
    assert_eq!(o.status.code(), Some(3));
    // Through folder mirroring onto the same folder.
    let b = make(d, "f/b.wav", 1000);
    let o = rerate(
        d,
        &["convert", "f", "--out-rate", "48k", "-o", "f", "--force"],
    );
    assert_eq!(o.status.code(), Some(1));
    assert!(err(&o).contains("is an input file"), "{}", err(&o));
    assert_eq!(std::fs::read(d.join("a.wav")).unwrap(), a);
    assert_eq!(std::fs::read(d.join("f/b.wav")).unwrap(), b);
    assert_eq!(
        listing(d),
        vec![PathBuf::from("a.wav"), "f/b.wav".into(), "link.wav".into()]
    );
}

#[test]
fn default_name_is_beside_the_input() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    make(d, "take.wav", 500);
    let o = rerate(d, &["convert", "take.wav", "--out-rate", "22.05k"]);
    assert!(o.status.success(), "{}", err(&o));
    assert_eq!(read_wav(&d.join("take-22.05k.wav")).0, 22_050);
}

#[test]
fn a_failure_mid_file_leaves_nothing() {
    // A long float file whose last sample is NaN: the error comes after most of the output
    // was written to the temporary file, which must be gone afterwards.
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let mut x = signal(200_000, 1, 44_100);
    let last = x.len() - 1;
    x[last] = f64::NAN;
    write_wav(&d.join("n.wav"), 44_100, 1, Encoding::Float32, &x);
    std::fs::create_dir(d.join("out")).unwrap();
    let o = rerate(
        d,
        &["convert", "n.wav", "--out-rate", "48k", "-o", "out/n.wav"],
    );
    assert_eq!(o.status.code(), Some(3));
    assert!(
        err(&o).contains("NaN sample at frame 199999, channel 0"),
        "{}",
        err(&o)
    );
    assert!(listing(&d.join("out")).is_empty());
}

#[cfg(unix)]
#[test]
fn interruption_removes_the_temporary_file() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    // 60 s of 96 kHz stereo float to 44.1 kHz 32-bit at the 200 dB default: seconds of work.
    write_wav(
        &d.join("long.wav"),
        96_000,
        2,
        Encoding::Int(32),
        &signal(96_000 * 60, 2, 96_000),
    );
    std::fs::create_dir(d.join("out")).unwrap();
    let child = std::process::Command::new(env!("CARGO_BIN_EXE_rerate"))
        .current_dir(d)
        .args([
            "convert",
            "long.wav",
            "--out-rate",
            "44.1k",
            "-o",
            "out/long.wav",
        ])
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    // Wait until the temporary file exists, then interrupt.
    let start = Instant::now();
    while listing(&d.join("out")).is_empty() {
        assert!(
            start.elapsed() < Duration::from_secs(60),
            "no temporary file appeared"
        );
        std::thread::sleep(Duration::from_millis(20));
    }
    let tmp = listing(&d.join("out"));
    assert!(tmp[0].to_string_lossy().ends_with(".rerate-tmp"), "{tmp:?}");
    let pid = child.id().to_string();
    let k = std::process::Command::new("kill")
        .args(["-INT", &pid])
        .status()
        .unwrap();
    assert!(k.success());
    let o = child.wait_with_output().unwrap();
    assert_eq!(o.status.code(), Some(130), "{}", err(&o));
    assert!(
        listing(&d.join("out")).is_empty(),
        "{:?}",
        listing(&d.join("out"))
    );
}

#[cfg(unix)]
#[test]
fn outputs_past_4_gib_are_rf64() {
    // A sparse input: the header declares 2^30 bytes of 8-bit mono at 8 kHz (the file really
    // holds them, as zeros). At 16 kHz 16-bit the output's audio is 2^32 bytes, one more than
    // a RIFF size field can count: the writer promotes the file to RF64 (EBU Tech 3306): "RF64",
    // size 0xFFFFFFFF, its reserved 'JUNK' chunk turned into 'ds64' with the 64-bit sizes, the
    // data chunk's size 0xFFFFFFFF. Memory stays flat (the file is streamed).
    use std::io::{Read, Write};
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let data_len: u32 = 1 << 30;
    let mut h = Vec::new();
    h.extend_from_slice(b"RIFF");
    h.extend_from_slice(&(36 + data_len).to_le_bytes());
    h.extend_from_slice(b"WAVEfmt ");
    h.extend_from_slice(&16u32.to_le_bytes());
    h.extend_from_slice(&[1, 0, 1, 0]);
    h.extend_from_slice(&8000u32.to_le_bytes());
    h.extend_from_slice(&8000u32.to_le_bytes());
    h.extend_from_slice(&[1, 0, 8, 0]);
    h.extend_from_slice(b"data");
    h.extend_from_slice(&data_len.to_le_bytes());
    let mut f = std::fs::File::create(d.join("big.wav")).unwrap();
    f.write_all(&h).unwrap();
    f.set_len(h.len() as u64 + u64::from(data_len)).unwrap();
    drop(f);
    let o = rerate(
        d,
        &[
            "convert",
            "big.wav",
            "--out-rate",
            "16k",
            "--bits",
            "16",
            "-o",
            "o.wav",
            "--json",
        ],
    );
    assert!(o.status.success(), "{}", err(&o));
    let path = d.join("o.wav");
    let len = std::fs::metadata(&path).unwrap().len();
    let mut head = [0u8; 48];
    std::fs::File::open(&path)
        .unwrap()
        .read_exact(&mut head)
        .unwrap();
    let u64_at = |i: usize| u64::from_le_bytes(head[i..i + 8].try_into().unwrap());
    let frames = 2 * u64::from(data_len);
    assert_eq!(&head[0..4], b"RF64");
    assert_eq!(&head[4..8], &[0xFF; 4]);
    assert_eq!(&head[8..12], b"WAVE");
    assert_eq!(&head[12..20], b"ds64\x1c\0\0\0");
    assert_eq!(u64_at(20), len - 8, "riffSize");
    assert_eq!(u64_at(28), 2 * frames, "dataSize");
    assert_eq!(u64_at(36), frames, "sampleCount");
    // Our own reader takes it back, with every frame.
    let r = resample_cli::audio::Input::open(&path).unwrap();
    assert_eq!(r.info().frames, frames);
    let report: serde_json::Value = serde_json::from_str(out(&o).lines().next().unwrap()).unwrap();
    assert_eq!(report["frames_out"], frames);
    std::fs::remove_file(&path).unwrap();
}

#[test]
fn jobs_do_not_change_the_bytes() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    for (i, n) in ["a.wav", "b.wav", "sub/c.wav", "sub/d.wav", "e.wav"]
        .iter()
        .enumerate()
    {
        make(&d.join("in"), n, 3000 + 1000 * i);
    }
    for jobs in ["1", "2"] {
        let o = rerate(
            d,
            &[
                "convert",
                "in",
                "-r",
                "--out-rate",
                "48k",
                "--bits",
                "16",
                "-o",
                &format!("o{jobs}"),
                "--jobs",
                jobs,
            ],
        );
        assert!(o.status.success(), "{}", err(&o));
    }
    let l1 = listing(&d.join("o1"));
    assert_eq!(l1.len(), 5);
    assert_eq!(l1, listing(&d.join("o2")));
    for p in &l1 {
        assert_eq!(
            std::fs::read(d.join("o1").join(p)).unwrap(),
            std::fs::read(d.join("o2").join(p)).unwrap(),
            "{p:?}"
        );
    }
}

#[test]
fn shards_partition_the_batch_and_skip_existing_resumes() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let names = [
        "a.wav", "b.wav", "c.wav", "x/d.wav", "x/e.wav", "y/f.wav", "g.wav",
    ];
    for n in names {
        make(&d.join("in"), n, 300);
    }
    let mut seen = Vec::new();
    for k in 0..3 {
        let shard = format!("{k}/3");
        let o = rerate(
            d,
            &[
                "convert",
                "in",
                "-r",
                "--out-rate",
                "16k",
                "-o",
                "out",
                "--shard",
                &shard,
                "--json",
            ],
        );
        assert!(o.status.success(), "{}", err(&o));
        for line in out(&o).lines() {
            let v: serde_json::Value = serde_json::from_str(line).unwrap();
            if v["status"] == "converted" {
                seen.push(v["input"].as_str().unwrap().to_string());
            }
        }
    }
    seen.sort();
    let mut expect: Vec<String> = names
        .iter()
        .map(|n| PathBuf::from("in").join(n).display().to_string())
        .collect();
    expect.sort();
    assert_eq!(seen, expect, "every file exactly once");
    // Resume: remove two outputs; --skip-existing converts only those.
    std::fs::remove_file(d.join("out/b.wav")).unwrap();
    std::fs::remove_file(d.join("out/x/e.wav")).unwrap();
    let o = rerate(
        d,
        &[
            "convert",
            "in",
            "-r",
            "--out-rate",
            "16k",
            "-o",
            "out",
            "--skip-existing",
        ],
    );
    assert!(o.status.success(), "{}", err(&o));
    assert!(
        out(&o).contains("2 converted, 5 skipped, 0 failed"),
        "{}",
        out(&o)
    );
    // Without it, the existing outputs are refused (exit 1 for a batch).
    let o = rerate(
        d,
        &["convert", "in", "-r", "--out-rate", "16k", "-o", "out"],
    );
    assert_eq!(o.status.code(), Some(1));
}

#[test]
fn usage_errors_exit_2() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    make(d, "a.wav", 100);
    for args in [
        vec!["convert", "a.wav", "--out-rate", "fast"],
        vec!["convert", "nope.wav", "--out-rate", "48k"],
        vec!["convert", "a.wav", "--out-rate", "48k", "--shard", "3/3"],
        vec![
            "convert",
            "a.wav",
            "--out-rate",
            "48k",
            "--stopband-db",
            "500",
        ],
        vec!["convert", "a.wav", "--out-rate", "48k", "--passband", "0.1"],
    ] {
        let o = rerate(d, &args);
        assert_eq!(o.status.code(), Some(2), "{args:?}: {}", err(&o));
    }
    assert_eq!(listing(d), vec![PathBuf::from("a.wav")]);
}
