//! Clock correction of files (`--clock-ppm`) and pairs over the fixed table's budget: the
//! any-ratio engine through the built binary, in fresh temporary folders.

use std::process::Output;

use resample_cli::audio::wav::Encoding;

use crate::util::{err, listing, out, read_wav, rerate, write_wav};

/// `ceil(n x out x 10^12 / (in x (10^12 + micro)))`, `micro` the correction in 10^-6 ppm,
/// in u128: the length the brief fixes (every output whose time m / out falls before the
/// input's end n / true rate).
fn expected_len(n: u64, in_rate: u32, out_rate: u32, micro: i64) -> u64 {
    let num = u128::from(n) * u128::from(out_rate) * 1_000_000_000_000;
    let den = u128::from(in_rate) * (1_000_000_000_000_i128 + i128::from(micro)) as u128;
    num.div_ceil(den) as u64
}

fn json_of(text: &str) -> serde_json::Value {
    serde_json::from_str(text.lines().next().expect("a JSON line")).expect("JSON")
}

/// A fresh folder holding `in.wav`: 0.1 s of a constant 0.1, mono, 16-bit, at `rate`.
fn folder_with_input(rate: u32) -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    write_wav(
        &dir.path().join("in.wav"),
        rate,
        1,
        Encoding::Int(16),
        &vec![0.1; rate as usize / 10],
    );
    dir
}

/// `rerate convert in.wav --out-rate RATE -o OUT --force` and `extra`, in `dir`.
fn convert_in(dir: &tempfile::TempDir, rate: &str, out: &str, extra: &[&str]) -> Output {
    let mut args = vec![
        "convert",
        "in.wav",
        "--out-rate",
        rate,
        "-o",
        out,
        "--force",
    ];
    args.extend(extra);
    rerate(dir.path(), &args)
}

#[test]
fn bad_clock_corrections_are_usage_errors_before_any_file_is_touched() {
    let dir = tempfile::tempdir().unwrap();
    let src = dir.path().join("in.wav");
    write_wav(&src, 48_000, 1, Encoding::Int(16), &vec![0.1; 4800]);
    let before = listing(dir.path());
    for bad in [
        "1000.5",
        "-1001",
        "2000",
        "nan",
        "NaN",
        "inf",
        "-inf",
        "abc",
        "1e3",
        "",
        "0x10",
        "1.0000001",
    ] {
        for cmd in [
            vec!["convert", "in.wav", "--out-rate", "44100", "-o", "out.wav"],
            vec!["design", "--in-rate", "48000", "--out-rate", "44100"],
            vec!["verify", "--in-rate", "48000", "--out-rate", "44100"],
            vec!["tradeoff", "--in-rate", "48000", "--out-rate", "44100"],
        ] {
            let mut args = cmd.clone();
            let flag = format!("--clock-ppm={bad}");
            args.push(&flag);
            let o = rerate(dir.path(), &args);
            assert_eq!(o.status.code(), Some(2), "{args:?}: {}", err(&o));
            assert!(out(&o).is_empty(), "{args:?}");
        }
        assert_eq!(listing(dir.path()), before, "{bad}: a file appeared");
    }
    // The limits themselves are accepted.
    for ok in ["1000", "-1000", "+0.000001"] {
        let flag = format!("--clock-ppm={ok}");
        let o = rerate(
            dir.path(),
            &[
                "convert",
                "in.wav",
                "--out-rate",
                "44100",
                "-o",
                "ok.wav",
                "--force",
                &flag,
            ],
        );
        assert_eq!(o.status.code(), Some(0), "{ok}: {}", err(&o));
    }
}

#[test]
fn output_length_is_the_exact_ceiling_for_fast_and_slow_clocks() {
    let dir = tempfile::tempdir().unwrap();
    // Correction as given, and in 10^-6 ppm for the check.
    let ppms: [(&str, i64); 5] = [
        ("500", 500_000_000),
        ("-250", -250_000_000),
        ("0.5", 500_000),
        ("-1000", -1_000_000_000),
        ("1000", 1_000_000_000),
    ];
    // 48024 frames at 48 kHz +500 ppm are exactly 1 s (48000 output frames); 440559 at
    // 44.1 kHz -1000 ppm are exactly 10 s: the ceiling's exact cases next to their
    // neighbours.
    for (in_rate, out_rate, n) in [
        (48_000, 48_000, 48_024),
        (48_000, 48_000, 48_025),
        (48_000, 44_100, 1),
        (44_100, 48_000, 440_559),
        (44_100, 48_000, 1_000),
        (96_000, 44_100, 100_003),
    ] {
        let src = dir.path().join(format!("in-{in_rate}-{n}.wav"));
        write_wav(
            &src,
            in_rate,
            2,
            Encoding::Int(24),
            &vec![0.01; 2 * n as usize],
        );
        for (text, micro) in ppms {
            let dst = dir.path().join("out.wav");
            let flag = format!("--clock-ppm={text}");
            let o = rerate(
                dir.path(),
                &[
                    "convert",
                    src.to_str().unwrap(),
                    "--out-rate",
                    &out_rate.to_string(),
                    "-o",
                    "out.wav",
                    "--force",
                    "--json",
                    &flag,
                ],
            );
            assert_eq!(o.status.code(), Some(0), "{}", err(&o));
            let want = expected_len(n, in_rate, out_rate, micro);
            let (rate, ch, _, v) = read_wav(&dst);
            assert_eq!((rate, ch), (out_rate, 2));
            assert_eq!(
                v.len() as u64 / 2,
                want,
                "{in_rate} -> {out_rate}, {n}, {text}"
            );
            let j = json_of(&out(&o));
            assert_eq!(j["frames_out"], want);
            assert_eq!(j["engine"], "any-ratio");
            assert_eq!(j["clock_ppm"], micro as f64 * 1e-6);
        }
    }
}

/// A 1 kHz tone in a file whose clock ran 500 ppm fast comes out as the analytic sine at
/// the true times m / R: the file's n-th sample was taken at n / (H (1 + 500e-6)) s, so a
/// tone that reads 1000 Hz at the header rate was really 1000 x (1 + 500e-6) Hz (common
/// practice, no source: a sample clock that runs fast makes every recorded frequency read
/// low by the same factor). Sample by sample after the filter's settling, the error stays
/// under -(A - 6) dB of the tone; the opposite direction is far off.
#[test]
fn a_tone_recorded_by_a_fast_clock_comes_out_at_its_true_frequency() {
    let dir = tempfile::tempdir().unwrap();
    let (h, r, f, amp) = (44_100u32, 48_000u32, 1000.0, 0.5);
    let n = 44_100usize;
    let tone: Vec<f64> = (0..n)
        .map(|i| amp * (2.0 * std::f64::consts::PI * f * i as f64 / f64::from(h)).sin())
        .collect();
    write_wav(&dir.path().join("tone.wav"), h, 1, Encoding::Float32, &tone);
    let a_db = 120.0;
    for (ppm, c) in [("500", 1.0 + 500e-6), ("-300", 1.0 - 300e-6)] {
        let o = rerate(
            dir.path(),
            &[
                "convert",
                "tone.wav",
                "--out-rate",
                "48000",
                "--stopband-db",
                "120",
                "--float",
                "-o",
                "out.wav",
                "--force",
                &format!("--clock-ppm={ppm}"),
            ],
        );
        assert_eq!(o.status.code(), Some(0), "{}", err(&o));
        let (_, _, _, y) = read_wav(&dir.path().join("out.wav"));
        let worst = |freq: f64| {
            // Skip the settling at both ends: 400 outputs covers the kernel's span.
            (400..y.len() - 400)
                .map(|m| {
                    let t = m as f64 / f64::from(r);
                    (y[m] - amp * (2.0 * std::f64::consts::PI * freq * t).sin()).abs()
                })
                .fold(0.0_f64, f64::max)
        };
        let err_db = 20.0 * (worst(f * c) / amp).log10();
        assert!(err_db < -(a_db - 6.0), "{ppm} ppm: {err_db:.1} dB");
        // The other direction (dividing instead of multiplying) is off by far more.
        let wrong_db = 20.0 * (worst(f / c) / amp).log10();
        assert!(
            wrong_db > -60.0,
            "{ppm} ppm: the wrong direction reads {wrong_db:.1} dB"
        );
    }
}

#[test]
fn clock_ppm_zero_is_bit_identical_to_no_option() {
    let dir = tempfile::tempdir().unwrap();
    let v = crate::util::signal(30_000, 2, 44_100);
    write_wav(&dir.path().join("in.wav"), 44_100, 2, Encoding::Int(24), &v);
    let run = |name: &str, extra: &[&str]| {
        let mut args = vec![
            "convert",
            "in.wav",
            "--out-rate",
            "48k",
            "--bits",
            "16",
            "-o",
            name,
        ];
        args.extend_from_slice(extra);
        let o = rerate(dir.path(), &args);
        assert_eq!(o.status.code(), Some(0), "{}", err(&o));
        std::fs::read(dir.path().join(name)).unwrap()
    };
    let plain = run("a.wav", &[]);
    assert_eq!(plain, run("b.wav", &["--clock-ppm", "0"]));
    assert_eq!(plain, run("c.wav", &["--clock-ppm=-0.000"]));
    // And a correction does change the output (the test above compares something).
    assert_ne!(plain, run("d.wav", &["--clock-ppm", "1"]));
}

#[test]
fn a_folder_converts_with_a_clock_correction() {
    let dir = tempfile::tempdir().unwrap();
    let src = dir.path().join("takes");
    std::fs::create_dir(&src).unwrap();
    for (i, n) in [10_000u64, 22_222].iter().enumerate() {
        write_wav(
            &src.join(format!("t{i}.wav")),
            48_000,
            1,
            Encoding::Int(16),
            &vec![0.05; *n as usize],
        );
    }
    let o = rerate(
        dir.path(),
        &[
            "convert",
            "takes",
            "--out-rate",
            "44.1k",
            "-o",
            "out",
            "--clock-ppm",
            "-80",
            "--json",
        ],
    );
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    for (i, n) in [10_000u64, 22_222].iter().enumerate() {
        let (_, _, _, v) = read_wav(&dir.path().join(format!("out/t{i}.wav")));
        assert_eq!(
            v.len() as u64,
            expected_len(*n, 48_000, 44_100, -80_000_000)
        );
    }
    let text = out(&o);
    assert_eq!(
        text.matches("\"engine\":\"any-ratio\"").count(),
        2,
        "{text}"
    );
}

#[test]
fn the_text_report_names_the_engine_and_the_correction() {
    let dir = folder_with_input(48_000);
    let o = convert_in(&dir, "48k", "o.wav", &["--clock-ppm", "+42.5"]);
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    let text = out(&o);
    assert!(
        text.contains("any-ratio engine: input clock corrected by +42.5 ppm"),
        "{text}"
    );
    // The true rate 48000 x (1 + 42.5e-6) = 48002.04 Hz.
    assert!(text.contains("true input rate 48002.04 Hz"), "{text}");
    let o = convert_in(&dir, "44.1k", "f.wav", &[]);
    assert!(!out(&o).contains("any-ratio"), "{}", out(&o));
}

#[test]
fn minimum_phase_with_a_clock_correction_converts_at_the_default_for_24_bit_and_float() {
    // Their default request is 160 dB, which the any-ratio engine's minimum-phase table
    // missed by 0.2 dB (an error for every such file) until its prototype could be made
    // with a deeper floor.
    let dir = folder_with_input(44_100);
    for fmt in ["--bits=24", "--float"] {
        let extra = ["--phase", "minimum", "--clock-ppm", "20", fmt, "--json"];
        let o = convert_in(&dir, "48k", "o.wav", &extra);
        assert_eq!(o.status.code(), Some(0), "{fmt}: {}", err(&o));
        let j = json_of(&out(&o));
        assert_eq!(j["requested_stopband_db"], 160.0, "{j}");
        assert!(
            j["interpolation_error_db"].as_f64().unwrap() <= -163.0,
            "{j}"
        );
    }
}

#[test]
fn a_minimum_phase_filter_too_long_for_the_fixed_engine_runs_on_the_any_ratio_engine() {
    // 44.1k -> 48001 at 16 bits fits the fixed table budget in linear phase, but its
    // prototype (millions of taps) cannot be made minimum phase; 44.1k -> 192k at 160 dB
    // with a 0.95 passband only just cannot. Both stopped with an error before.
    let dir = folder_with_input(44_100);
    for (rate, extra) in [
        ("48001", ["--bits=16", "--passband=0.91"]),
        ("192000", ["--bits=24", "--passband=0.95"]),
    ] {
        let o = convert_in(
            &dir,
            rate,
            "o.wav",
            &[&["--phase", "minimum", "--json"], &extra[..]].concat(),
        );
        assert_eq!(o.status.code(), Some(0), "{rate}: {}", err(&o));
        let j = json_of(&out(&o));
        assert_eq!(j["engine"], "any-ratio", "{j}");
        let why = j["engine_reason"].as_str().unwrap();
        assert!(why.contains("can be made minimum phase"), "{why}");
    }
    // Linear phase stays on the fixed engine there.
    let o = convert_in(&dir, "48001", "l.wav", &["--bits=16", "--json"]);
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    assert_eq!(json_of(&out(&o))["engine"], "fixed-ratio");
}

#[test]
fn a_pair_over_the_fixed_table_budget_converts_and_verifies_on_the_any_ratio_engine() {
    let dir = tempfile::tempdir().unwrap();
    let n = 20_000u64;
    let v = crate::util::signal(n as usize, 1, 44_100);
    write_wav(&dir.path().join("in.wav"), 44_100, 1, Encoding::Int(24), &v);
    let o = rerate(
        dir.path(),
        &[
            "convert",
            "in.wav",
            "--out-rate",
            "48001",
            "-o",
            "o.wav",
            "--json",
        ],
    );
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    let j = json_of(&out(&o));
    assert_eq!(j["engine"], "any-ratio");
    assert!(
        j["engine_reason"].as_str().unwrap().contains("budget"),
        "{j}"
    );
    let (rate, _, _, y) = read_wav(&dir.path().join("o.wav"));
    assert_eq!(rate, 48_001);
    // ceil(n L / M) with L / M = 48001 / 44100.
    assert_eq!(y.len() as u64, (n * 48_001).div_ceil(44_100));
    // design prints the any-ratio table; verify measures it and passes.
    let o = rerate(
        dir.path(),
        &[
            "design",
            "--in-rate",
            "44100",
            "--out-rate",
            "48001",
            "--json",
        ],
    );
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    let d = json_of(&out(&o));
    assert_eq!(d["engine"], "any-ratio");
    assert!(
        d["interpolation_error_db"].as_f64().unwrap() < -140.0,
        "{d}"
    );
    assert!(d["phases"].as_u64().unwrap() >= 2, "{d}");
    let o = rerate(
        dir.path(),
        &[
            "verify",
            "--in-rate",
            "44100",
            "--out-rate",
            "48001",
            "--seconds",
            "3",
            "--json",
        ],
    );
    let v = json_of(&out(&o));
    assert_eq!(o.status.code(), Some(0), "{v}");
    assert_eq!(v["engine"], "any-ratio");
    assert!(v["rejection_db"].as_f64().unwrap() >= 160.0, "{v}");
}

#[test]
fn verify_sweeps_slower_where_the_probes_have_little_room() {
    // -250 ppm at 48k -> 8k is measured between 47988 and 8000 Hz (common divisor 4): the
    // edge probes fit two tones, so the 10 s sweep's frames next to the edge count and
    // read the transition band (127.3 dB for a 140.57 dB design, measured). verify then
    // sweeps four times slower by itself; an explicit --seconds is kept.
    let dir = tempfile::tempdir().unwrap();
    let run = |extra: &[&str]| {
        let mut args = vec![
            "verify",
            "--in-rate",
            "48000",
            "--out-rate",
            "8000",
            "--stopband-db",
            "140",
            "--json",
            "--clock-ppm=-250",
        ];
        args.extend_from_slice(extra);
        let o = rerate(dir.path(), &args);
        (o.status.code(), json_of(&out(&o)))
    };
    let (code, v) = run(&[]);
    assert_eq!(code, Some(0), "{v}");
    assert_eq!(v["sweep_seconds"].as_f64(), Some(40.0), "{v}");
    assert!(v["rejection_db"].as_f64().unwrap() >= 140.0, "{v}");
    let (_, v) = run(&["--seconds", "5"]);
    assert_eq!(v["sweep_seconds"].as_f64(), Some(5.0), "{v}");
}

#[test]
fn verify_and_design_with_a_clock_correction_measure_the_any_ratio_engine() {
    let dir = tempfile::tempdir().unwrap();
    for (a, b, ppm, db) in [
        ("44100", "48000", "100", "120"),
        ("48000", "44100", "-250", "140"),
    ] {
        let o = rerate(
            dir.path(),
            &[
                "verify",
                "--in-rate",
                a,
                "--out-rate",
                b,
                "--stopband-db",
                db,
                "--seconds",
                "3",
                "--json",
                &format!("--clock-ppm={ppm}"),
            ],
        );
        let v = json_of(&out(&o));
        assert_eq!(o.status.code(), Some(0), "{v}");
        assert_eq!(v["engine"], "any-ratio");
        assert_eq!(v["pass"], true);
        let requested: f64 = db.parse().unwrap();
        assert!(v["rejection_db"].as_f64().unwrap() >= requested, "{v}");
        // Measured between whole rates whose ratio is within a small fraction of a ppm
        // of the true pair's.
        assert!(
            v["ratio_difference_ppm"].as_f64().unwrap().abs() < 0.1,
            "{v}"
        );
        let o = rerate(
            dir.path(),
            &[
                "design",
                "--in-rate",
                a,
                "--out-rate",
                b,
                "--stopband-db",
                db,
                &format!("--clock-ppm={ppm}"),
            ],
        );
        assert_eq!(o.status.code(), Some(0), "{}", err(&o));
        let text = out(&o);
        for key in [
            "phases per input sample",
            "interpolation error",
            "table memory",
            "latency",
        ] {
            assert!(text.contains(key), "{key}: {text}");
        }
    }
}

/// The body of the first chunk `id` of a RIFF file (sizes from the chunk headers).
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

/// Metadata positions move by the true ratio: the 'bext' time reference (EBU Tech 3285,
/// u32 pair at 338 / 342) and the 'cue ' points' dwPosition and dwSampleOffset (RIFF MCI
/// specification: count, then 24-byte points with the position at 4 and the offset at 20)
/// of the BWF fixture, 48 kHz with a clock 500 ppm fast, converted to 44.1 kHz: each is the
/// nearest integer to pos x 44100 / (48000 x 1.0005), halves up, worked out here in u128.
#[test]
fn metadata_positions_move_by_the_true_ratio() {
    let dir = tempfile::tempdir().unwrap();
    let input = crate::util::fixtures()
        .join("meta")
        .join("bwf_stereo_48k.wav");
    let o = rerate(
        dir.path(),
        &[
            "convert",
            input.to_str().unwrap(),
            "--out-rate",
            "44.1k",
            "-o",
            "o.wav",
            "--clock-ppm",
            "500",
        ],
    );
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    let moved = |pos: u64| -> u64 {
        let num = u128::from(pos) * 44_100 * 1_000_000_000_000;
        let den = 48_000u128 * 1_000_500_000_000;
        ((2 * num + den) / (2 * den)) as u64
    };
    let a = std::fs::read(&input).unwrap();
    let b = std::fs::read(dir.path().join("o.wav")).unwrap();
    let (ba, bb) = (
        chunk_body(&a, b"bext").unwrap(),
        chunk_body(&b, b"bext").unwrap(),
    );
    let tr = |x: &[u8]| u64::from(u32_at(x, 338)) | u64::from(u32_at(x, 342)) << 32;
    assert!(tr(&ba) > 0, "the fixture has a time reference");
    assert_eq!(tr(&bb), moved(tr(&ba)));
    // Not the nominal ratio's value (the test tells the two apart).
    assert_ne!(tr(&bb), (tr(&ba) * 44_100 + 24_000) / 48_000);
    let history = String::from_utf8_lossy(&bb[602..]).into_owned();
    assert!(
        history.contains("any-ratio engine; input clock corrected by +500 ppm"),
        "{history}"
    );
    let (ca, cb) = (
        chunk_body(&a, b"cue ").unwrap(),
        chunk_body(&b, b"cue ").unwrap(),
    );
    let n = u32_at(&ca, 0) as usize;
    assert!(n >= 2 && u32_at(&cb, 0) as usize == n);
    for k in 0..n {
        let p = 4 + 24 * k;
        assert_eq!(
            u64::from(u32_at(&cb, p + 4)),
            moved(u64::from(u32_at(&ca, p + 4))),
            "cue {k}"
        );
        assert_eq!(
            u64::from(u32_at(&cb, p + 20)),
            moved(u64::from(u32_at(&ca, p + 20))),
            "cue {k} offset"
        );
    }
}

#[test]
fn tradeoff_with_a_clock_correction_measures_any_ratio_rows() {
    let dir = tempfile::tempdir().unwrap();
    let o = rerate(
        dir.path(),
        &[
            "tradeoff",
            "--in-rate",
            "44.1k",
            "--out-rate",
            "48k",
            "--clock-ppm",
            "100",
            "--stopband-db",
            "80,100",
            "--no-baselines",
            "--seconds",
            "2",
            "--speed-seconds",
            "0.5",
            "--json",
        ],
    );
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    let t = json_of(&out(&o));
    assert_eq!(t["clock_ppm"], 100.0);
    let rows = t["rows"].as_array().unwrap();
    assert_eq!(rows.len(), 2, "{t}");
    for (row, db) in rows.iter().zip([80.0, 100.0]) {
        assert_eq!(row["method"], "any-ratio");
        assert!(row["rejection_db"].as_f64().unwrap() >= db, "{row}");
    }
}
