//! Helpers shared by the integration tests: run the built binary, write and read WAV files.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use resample_cli::audio::wav::{Dither, Encoding, NonFinite, WavReader, WavWriter, WriterOptions};

/// The built `rerate` binary, as a command to configure.
pub fn command() -> Command {
    Command::new(env!("CARGO_BIN_EXE_rerate"))
}

/// Run `rerate` with `args` in `dir`.
pub fn rerate(dir: &Path, args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_rerate"))
        .current_dir(dir)
        .args(args)
        .output()
        .expect("run rerate")
}

/// stderr as text.
pub fn err(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

/// stdout as text.
pub fn out(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

/// A deterministic test signal: two tones and noise, peak under -3 dBFS.
pub fn signal(frames: usize, channels: usize, rate: u32) -> Vec<f64> {
    let mut state = 0x1234_5678_u64;
    (0..frames * channels)
        .map(|i| {
            let (f, c) = (i / channels, i % channels);
            let t = f as f64 / f64::from(rate);
            state = state
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1_442_695_040_888_963_407);
            let noise = (state >> 11) as f64 / (1u64 << 53) as f64 - 0.5;
            0.3 * (2.0 * std::f64::consts::PI * (440.0 + 110.0 * c as f64) * t).sin()
                + 0.2 * (2.0 * std::f64::consts::PI * 5_000.0 * t).sin()
                + 0.2 * noise
        })
        .collect()
}

/// Write `samples` (interleaved, full scale ±1) without dither.
pub fn write_wav(path: &Path, rate: u32, channels: u16, enc: Encoding, samples: &[f64]) {
    let mut o = WriterOptions::new(rate, channels, enc);
    o.dither = Dither::None;
    o.force = true;
    let mut w = WavWriter::create(path, &o).unwrap();
    w.write_frames(samples).unwrap();
    w.finish().unwrap();
}

/// Read a whole file: (rate, channels, encoding, samples).
pub fn read_wav(path: &Path) -> (u32, u16, Encoding, Vec<f64>) {
    let mut r = WavReader::open(path).unwrap();
    let info = r.info().clone();
    let mut v = vec![0.0; info.frames as usize * usize::from(info.channels)];
    let n = r.read_frames(&mut v, NonFinite::Refuse).unwrap();
    assert_eq!(n as u64, info.frames);
    (info.sample_rate, info.channels, info.encoding, v)
}

/// Every file name in `dir` (recursively), sorted, relative.
pub fn listing(dir: &Path) -> Vec<PathBuf> {
    let mut v = Vec::new();
    let mut stack = vec![dir.to_path_buf()];
    while let Some(d) = stack.pop() {
        for e in std::fs::read_dir(&d).unwrap() {
            let p = e.unwrap().path();
            if p.is_dir() {
                stack.push(p);
            } else {
                v.push(p.strip_prefix(dir).unwrap().to_path_buf());
            }
        }
    }
    v.sort();
    v
}

/// The fixtures folder.
pub fn fixtures() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../fixtures")
}
