//! Fuzz target: the whole conversion path on bytes in memory, as `rerate convert` runs it
//! on a file (header checks, filter design, conversion, requantization with dither,
//! encoding): an error or a WAV file, never a panic. The output is read back and must hold
//! the frames the report promises.
//!
//! To keep each run short, inputs with more than 20 000 frames or a sample rate outside the
//! usual ones are skipped (the read path alone is fuzzed without limits by `wav_read`).
#![no_main]

use std::sync::atomic::AtomicBool;
use std::sync::OnceLock;

use libfuzzer_sys::fuzz_target;
use resample_cli::audio::wav::{Dither, Encoding, WavReader};
use resample_cli::audio::Input;
use resample_cli::convert::{convert_in_memory, Control, DesignCache, Settings};

const RATES: [u32; 9] = [
    8000, 11_025, 16_000, 22_050, 32_000, 44_100, 48_000, 88_200, 96_000,
];

fuzz_target!(|data: &[u8]| {
    let Some((&knobs, wav)) = data.split_last() else {
        return;
    };
    let Ok(probe) = Input::from_reader(std::io::Cursor::new(wav.to_vec())) else {
        return;
    };
    let info = probe.info();
    if info.frames > 20_000 || !RATES.contains(&info.sample_rate) {
        return;
    }
    static DESIGNS: OnceLock<DesignCache> = OnceLock::new();
    let designs = DESIGNS.get_or_init(DesignCache::new);
    let mut s = Settings::new(RATES[usize::from(knobs & 7)]);
    s.encoding = match (knobs >> 3) & 7 {
        0 => Some(Encoding::Int(8)),
        1 => Some(Encoding::Int(16)),
        2 => Some(Encoding::Int(24)),
        3 => Some(Encoding::Int(32)),
        4 => Some(Encoding::Float32),
        _ => None,
    };
    s.dither = if knobs & 0x40 != 0 {
        Dither::None
    } else {
        Dither::Tpdf
    };
    s.sanitize = knobs & 0x80 != 0;
    s.gain_db = if knobs & 0x20 != 0 { 12.0 } else { 0.0 };
    s.pipeline = knobs & 1 != 0;
    let cancel = AtomicBool::new(false);
    let progress = |_: u64| {};
    let ctl = Control {
        cancel: &cancel,
        progress: &progress,
    };
    if let Ok((report, bytes)) = convert_in_memory(wav.to_vec(), &s, designs, ctl) {
        let back = WavReader::from_reader(std::io::Cursor::new(bytes)).expect("our own output");
        assert_eq!(back.info().frames, report.frames_out);
        assert_eq!(back.info().sample_rate, s.out_rate);
    }
});
