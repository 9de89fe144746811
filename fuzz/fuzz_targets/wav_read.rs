//! Fuzz target: rerate's WAV read path (header checks, then every frame, as f32 and f64,
//! refusing and zeroing non-finite samples) must return an error or data, never panic,
//! hang, or allocate by the header's word. The bytes are read from memory, as a seekable
//! source and as a stream (a pipe).
#![no_main]

use std::io::Cursor;

use libfuzzer_sys::fuzz_target;
use resample_cli::audio::wav::WavReader;
use resample_cli::audio::{Input, NonFinite};

fn drain<T: resample_core::Sample>(r: &mut Input, frames: usize, mode: NonFinite) {
    let ch = usize::from(r.info().channels);
    let mut buf = vec![T::zero(); frames * ch];
    while let Ok(n) = r.read_frames(&mut buf, mode) {
        if n == 0 {
            break;
        }
    }
}

fuzz_target!(|data: &[u8]| {
    for mode in [NonFinite::Refuse, NonFinite::Zero] {
        if let Ok(mut r) = Input::from_reader(Cursor::new(data.to_vec())) {
            drain::<f32>(&mut r, 64, mode);
        }
    }
    if let Ok(mut r) = Input::from_reader(Cursor::new(data.to_vec())) {
        drain::<f64>(&mut r, 7, NonFinite::Zero);
    }
    if let Ok(r) = WavReader::from_stream(Cursor::new(data.to_vec())) {
        drain::<f32>(&mut Input::Wav(r), 33, NonFinite::Zero);
    }
});
