//! Fuzz target: rerate's WAV read path (header checks, then every frame, as f32 and f64,
//! refusing and zeroing non-finite samples) must return an error or data, never panic,
//! hang, or allocate by the header's word.
#![no_main]

use std::io::Write;

use libfuzzer_sys::fuzz_target;
use resample_cli::audio::{Input, NonFinite};

fuzz_target!(|data: &[u8]| {
    // The reader works on files (it checks declared sizes against the file's length).
    let path = std::env::temp_dir().join(format!("rerate-fuzz-{}.wav", std::process::id()));
    let Ok(mut f) = std::fs::File::create(&path) else {
        return;
    };
    if f.write_all(data).is_err() {
        return;
    }
    drop(f);
    for mode in [NonFinite::Refuse, NonFinite::Zero] {
        if let Ok(mut r) = Input::open(&path) {
            let ch = usize::from(r.info().channels);
            let mut buf = vec![0.0_f32; 64 * ch];
            while let Ok(n) = r.read_frames(&mut buf, mode) {
                if n == 0 {
                    break;
                }
            }
        }
    }
    if let Ok(mut r) = Input::open(&path) {
        let ch = usize::from(r.info().channels);
        let mut buf = vec![0.0_f64; 7 * ch];
        while let Ok(n) = r.read_frames(&mut buf, NonFinite::Zero) {
            if n == 0 {
                break;
            }
        }
    }
});
