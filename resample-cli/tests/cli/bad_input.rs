//! Each file of fixtures/bad/ (made by fixtures/make_wav_fixtures.py): a one-line error
//! naming the file and the problem, exit code 3, no panic, nothing written.

use crate::util::*;

fn check(name: &str, expect: &str) {
    let dir = tempfile::tempdir().unwrap();
    let input = fixtures().join("bad").join(name);
    let o = rerate(
        dir.path(),
        &[
            "convert",
            input.to_str().unwrap(),
            "--out-rate",
            "16k",
            "-o",
            "out.wav",
        ],
    );
    let e = err(&o);
    assert_eq!(o.status.code(), Some(3), "{name}: {e}");
    assert_eq!(e.lines().count(), 1, "{name}: {e}");
    assert!(e.contains(name), "{name}: {e}");
    assert!(e.contains(expect), "{name}: expected '{expect}' in: {e}");
    assert!(!e.contains("panicked"), "{name}: {e}");
    assert!(
        listing(dir.path()).is_empty(),
        "{name}: left {:?}",
        listing(dir.path())
    );
}

#[test]
fn empty() {
    check("empty.wav", "empty file");
}

#[test]
fn not_a_wav() {
    check("not_a_wav.wav", "not a WAV file");
}

#[test]
fn too_short() {
    check("too_short.wav", "not a WAV file");
}

#[test]
fn header_only() {
    check("header_only.wav", "no data chunk");
}

#[test]
fn truncated() {
    check(
        "truncated.wav",
        "truncated: the header declares 4000 bytes of audio but only 100",
    );
}

#[test]
fn absurd_data_size() {
    check(
        "absurd_data_size.wav",
        "declares 4294967280 bytes of audio but only 16",
    );
}

#[test]
fn absurd_chunk_size() {
    check(
        "absurd_chunk_size.wav",
        "'LIST' chunk declares 4294967280 bytes",
    );
}

#[test]
fn zero_channels() {
    check("zero_channels.wav", "0 channels");
}

#[test]
fn zero_rate() {
    check("zero_rate.wav", "sample rate of 0 Hz");
}

#[test]
fn mulaw() {
    check(
        "mulaw.wav",
        "unsupported encoding: format tag 0x0007 (mu-law)",
    );
}

#[test]
fn alaw_extensible() {
    check(
        "alaw_extensible.wav",
        "WAVE_FORMAT_EXTENSIBLE with format tag 0x0006 (A-law)",
    );
}

#[test]
fn float64() {
    check("float64.wav", "64-bit float");
}

#[test]
fn ext24in32_right_justified() {
    // Written right-justified by fixtures/make_wav_fixtures.py, against the left
    // justification of Microsoft, "Multiple channel audio data and WAVE files": refused at
    // the first sample whose padding bits are set, never read 48 dB low.
    check(
        "ext24in32_right_justified.wav",
        "frame 0, channel 1 has some of its 8 low padding bits set",
    );
}

#[test]
fn ext_valid_over_container() {
    // A refusal names the valid bits, not only the container.
    check(
        "ext_valid_over_container.wav",
        "20 valid bits in 16-bit containers",
    );
}

#[test]
fn nan_float() {
    check("nan_float.wav", "NaN sample at frame 5, channel 1");
}

#[test]
fn inf_float() {
    check("inf_float.wav", "+Inf sample at frame 7, channel 0");
}

#[test]
fn rf64() {
    // RF64 files are read (EBU Tech 3306); this one has a 'ds64' chunk but no audio.
    check("rf64.wav", "no data chunk");
}

#[test]
fn rf64_without_ds64() {
    check(
        "rf64_without_ds64.wav",
        "an RF64/BW64 file must start with a 'ds64' chunk",
    );
}

#[test]
fn no_fmt() {
    check("no_fmt.wav", "missing fmt chunk");
}

#[test]
fn odd_data_length() {
    check("odd_data_length.wav", "not a multiple of sample size");
}

#[test]
fn every_fixture_has_a_test() {
    let src: String = include_str!("bad_input.rs")
        .chars()
        .filter(|c| !c.is_whitespace())
        .collect();
    for e in std::fs::read_dir(fixtures().join("bad")).unwrap() {
        let name = e.unwrap().file_name().to_string_lossy().into_owned();
        assert!(
            src.contains(&format!("check(\"{name}\"")),
            "no test for {name}"
        );
    }
}

#[test]
fn sanitize_zeroes_and_counts() {
    let dir = tempfile::tempdir().unwrap();
    let input = fixtures().join("bad/nan_float.wav");
    let o = rerate(
        dir.path(),
        &[
            "convert",
            input.to_str().unwrap(),
            "--out-rate",
            "16k",
            "-o",
            "o.wav",
            "--sanitize",
            "--json",
        ],
    );
    assert!(o.status.success(), "{}", err(&o));
    let first: serde_json::Value = serde_json::from_str(out(&o).lines().next().unwrap()).unwrap();
    assert_eq!(first["sanitized"], 1);
    let (_, _, _, y) = read_wav(&dir.path().join("o.wav"));
    assert!(y.iter().all(|v| v.is_finite()));
}

#[test]
fn a_bad_file_does_not_stop_the_batch() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    std::fs::create_dir(d.join("in")).unwrap();
    std::fs::copy(fixtures().join("bad/truncated.wav"), d.join("in/b.wav")).unwrap();
    for n in ["a.wav", "c.wav"] {
        write_wav(
            &d.join("in").join(n),
            8000,
            1,
            resample_cli::audio::wav::Encoding::Int(16),
            &signal(500, 1, 8000),
        );
    }
    let o = rerate(d, &["convert", "in", "--out-rate", "16k", "-o", "out"]);
    assert_eq!(o.status.code(), Some(1), "{}", err(&o));
    assert!(err(&o).contains("b.wav: truncated"), "{}", err(&o));
    assert!(
        out(&o).contains("2 converted, 0 skipped, 1 failed"),
        "{}",
        out(&o)
    );
    assert_eq!(
        listing(&d.join("out")),
        vec![std::path::PathBuf::from("a.wav"), "c.wav".into()]
    );
}
