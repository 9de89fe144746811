//! Every input format × channel count through `rerate convert`: exact length, format kept,
//! content close to the core's offline result.

use crate::util::*;
use resample_cli::audio::wav::Encoding;
use resample_cli::quality::default_stopband_db;
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
    // 6 channels, float with an odd-length chunk (pad byte) before the data, and the same
    // 16-bit stereo audio as plain RIFF, as RF64 and as BW64 (EBU Tech 3306 / ITU-R BS.2088:
    // 'ds64' first, 32-bit sizes 0xFFFFFFFF).
    let dir = tempfile::tempdir().unwrap();
    for (name, ch, enc) in [
        ("ext24_6ch_8k.wav", 6u16, Encoding::Int(24)),
        ("float_mono_8k.wav", 1, Encoding::Float32),
        ("pcm16_stereo_8k.wav", 2, Encoding::Int(16)),
        ("rf64_stereo_8k.wav", 2, Encoding::Int(16)),
        ("bw64_stereo_8k.wav", 2, Encoding::Int(16)),
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
    // The three containers of the same audio convert to the same audio.
    let (_, _, _, plain) = read_wav(&dir.path().join("pcm16_stereo_8k.wav"));
    for name in ["rf64_stereo_8k.wav", "bw64_stereo_8k.wav"] {
        assert_eq!(read_wav(&dir.path().join(name)).3, plain, "{name}");
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

/// Peak of `x` in dBFS.
fn peak_dbfs(x: &[f64]) -> f64 {
    20.0 * x.iter().fold(0.0_f64, |m, v| m.max(v.abs())).log10()
}

#[test]
fn valid_bits_below_the_container_are_read_left_justified() {
    // Files written by fixtures/make_wav_fixtures.py (numpy + struct, not by hound or by
    // rerate): a 1 kHz tone at -6 dBFS with 24 valid bits in 32-bit containers, 20 in 24,
    // and plain PCM of 12 bits in 16. Samples are left-justified in their containers
    // (Microsoft, "Multiple channel audio data and WAVE files"); read from the low bytes, as
    // rerate once did, the 24-in-32 tone came out at +1 dBFS with hundreds of clips.
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    for (name, ch, valid, out_bits) in [
        ("ext24in32_stereo_48k.wav", 2usize, 24u32, 24u16),
        ("ext20in24_mono_48k.wav", 1, 20, 24),
        ("pcm12_mono_48k.wav", 1, 12, 16),
    ] {
        let input = fixtures().join("ok").join(name);
        let (rate, _, enc, x) = read_wav(&input);
        assert_eq!(rate, 48_000);
        // The output keeps the word length: the smallest written one holding every valid bit.
        assert_eq!(enc, Encoding::Int(out_bits), "{name}");
        // The tone the script wrote: sin(2 pi 1000 t - c pi / 2) at -6 dBFS, rounded to the
        // valid bits (common practice, no source).
        let top = f64::from(1u32 << (valid - 1));
        let amp = 10f64.powf(-6.0 / 20.0);
        let worst = x
            .iter()
            .enumerate()
            .map(|(i, v)| {
                let (f, c) = (i / ch, i % ch);
                let t = f as f64 / 48_000.0;
                let e = amp
                    * (2.0 * std::f64::consts::PI * 1000.0 * t
                        - c as f64 * std::f64::consts::FRAC_PI_2)
                        .sin();
                let e = (e * top).round().clamp(-top, top - 1.0) / top;
                (v - e).abs()
            })
            .fold(0.0, f64::max);
        assert!(worst == 0.0, "{name}: decoded sample off by {worst:e}");
        // Through the whole command: a same-rate copy as float keeps every value, and a
        // conversion keeps the level (-6 dBFS, nothing clipped).
        let o = rerate(
            d,
            &[
                "convert",
                input.to_str().unwrap(),
                "--out-rate",
                "48k",
                "--float",
                "-o",
                "copy.wav",
                "--force",
            ],
        );
        assert!(o.status.success(), "{name}: {}", err(&o));
        let (_, _, _, y) = read_wav(&d.join("copy.wav"));
        assert_eq!(y.len(), x.len());
        let worst = y
            .iter()
            .zip(&x)
            .map(|(a, b)| (a - b).abs())
            .fold(0.0, f64::max);
        assert!(worst < 1e-7, "{name}: same-rate copy off by {worst:e}");
        let o = rerate(
            d,
            &[
                "convert",
                input.to_str().unwrap(),
                "--out-rate",
                "44.1k",
                "-o",
                "conv.wav",
                "--force",
                "--json",
            ],
        );
        assert!(o.status.success(), "{name}: {}", err(&o));
        let (_, _, oenc, y) = read_wav(&d.join("conv.wav"));
        assert_eq!(oenc, Encoding::Int(out_bits), "{name}");
        // Away from the ends, where the tone's abrupt start and stop ring.
        let n = y.len();
        let p = peak_dbfs(&y[n / 4..3 * n / 4]);
        assert!(
            (p + 6.0).abs() < 0.05,
            "{name}: peak {p:.2} dBFS, expected -6"
        );
        let report = out(&o);
        assert!(
            report.contains("\"clipped\": 0") || report.contains("\"clipped\":0"),
            "{name}: {report}"
        );
    }
}
