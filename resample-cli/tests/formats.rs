//! Every input format × channel count through `rerate convert`: exact length, format kept,
//! content close to the core's offline result.

mod common;

use common::*;
use resample_cli::quality::default_stopband_db;
use resample_cli::wav::Encoding;
use resample_core::{offline, FilterSpec};

#[test]
fn every_format_and_channel_count() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let (rin, rout) = (44_100u32, 48_000u32);
    let frames = 2_000usize;
    for enc in [
        Encoding::Int(8),
        Encoding::Int(16),
        Encoding::Int(24),
        Encoding::Int(32),
        Encoding::Float32,
    ] {
        for ch in [1u16, 2, 6] {
            let name = format!("in-{}-{}-{ch}.wav", enc.bits(), enc.is_float());
            let x = signal(frames, usize::from(ch), rin);
            write_wav(&d.join(&name), rin, ch, enc, &x);
            let out_name = format!("out-{name}");
            let o = rerate(d, &["convert", &name, "--out-rate", "48k", "-o", &out_name]);
            assert!(o.status.success(), "{enc} {ch}: {}", err(&o));
            let (rate, och, oenc, y) = read_wav(&d.join(&out_name));
            assert_eq!((rate, och, oenc), (rout, ch, enc));
            // Exact length: ceil(n L / M) (rational conversion; Crochiere & Rabiner 1981).
            let expect_frames = (frames as u64 * 160).div_ceil(147) as usize;
            assert_eq!(y.len(), expect_frames * usize::from(ch), "{enc} {ch}");
            // Against the core's offline conversion of the same (quantized) input, with the
            // stopband convert chose for this format.
            let (_, _, _, xin) = read_wav(&d.join(&name));
            let design = FilterSpec::new(rin, rout)
                .stopband_db(default_stopband_db(enc))
                .design()
                .unwrap();
            let reference = offline::convert_interleaved(&design, usize::from(ch), &xin).unwrap();
            let lsb = 1.0 / enc.scale();
            // Dither (< 1 LSB) + rounding (1/2 LSB) for 8-24 bits; rounding only at 32 bits;
            // f32 rounding for float output; plus f32 arithmetic at 8/16 bits.
            let tol = match enc {
                Encoding::Int(32) => 0.5 * lsb + 1e-12,
                Encoding::Float32 => 1e-6,
                _ => 1.5 * lsb + 1e-5,
            };
            let worst = y
                .iter()
                .zip(&reference)
                .map(|(a, b)| (a - b).abs())
                .fold(0.0, f64::max);
            assert!(worst <= tol, "{enc} {ch}: worst {worst:e} > {tol:e}");
        }
    }
}

#[test]
fn hand_written_files_are_read() {
    // Written by fixtures/make_wav_fixtures.py, not by hound: WAVE_FORMAT_EXTENSIBLE 24-bit
    // 6 channels, float with an odd-length chunk (pad byte) before the data.
    let dir = tempfile::tempdir().unwrap();
    for (name, ch, enc) in [
        ("ext24_6ch_8k.wav", 6u16, Encoding::Int(24)),
        ("float_mono_8k.wav", 1, Encoding::Float32),
        ("pcm16_stereo_8k.wav", 2, Encoding::Int(16)),
    ] {
        let input = fixtures().join("ok").join(name);
        let o = rerate(
            dir.path(),
            &[
                "convert",
                input.to_str().unwrap(),
                "--out-rate",
                "16k",
                "-o",
                name,
            ],
        );
        assert!(o.status.success(), "{name}: {}", err(&o));
        let (rate, och, oenc, y) = read_wav(&dir.path().join(name));
        let (_, _, _, x) = read_wav(&input);
        assert_eq!((rate, och, oenc), (16_000, ch, enc));
        assert_eq!(y.len(), 2 * x.len());
    }
}

#[test]
fn bits_and_float_change_the_format() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    write_wav(
        &d.join("a.wav"),
        48_000,
        2,
        Encoding::Int(24),
        &signal(1000, 2, 48_000),
    );
    for (flag, enc) in [
        (vec!["--bits", "16"], Encoding::Int(16)),
        (vec!["--bits", "32"], Encoding::Int(32)),
        (vec!["--float"], Encoding::Float32),
    ] {
        let mut args = vec![
            "convert",
            "a.wav",
            "--out-rate",
            "44.1kHz",
            "-o",
            "b.wav",
            "--force",
        ];
        args.extend(flag);
        let o = rerate(d, &args);
        assert!(o.status.success(), "{}", err(&o));
        assert_eq!(read_wav(&d.join("b.wav")).2, enc);
    }
    let o = rerate(
        d,
        &["convert", "a.wav", "--out-rate", "44.1k", "--bits", "12"],
    );
    assert_eq!(o.status.code(), Some(2));
}
