//! The default output name beside an input: `NAME-RATE.wav` (e.g. `take-48k.wav`,
//! `take-44.1k.wav`). It always adds a suffix, so it can never be the input's own name.

use std::ffi::OsString;
use std::path::{Path, PathBuf};

/// A rate as a short label: 48000 -> "48k", 44100 -> "44.1k", 22050 -> "22.05k".
pub fn rate_label(rate: u32) -> String {
    let whole = rate / 1000;
    let frac = rate % 1000;
    if frac == 0 {
        format!("{whole}k")
    } else {
        let f = format!("{frac:03}");
        format!("{whole}.{}k", f.trim_end_matches('0'))
    }
}

/// `DIR/STEM-RATE.wav` for input `DIR/STEM.EXT`. The stem keeps its bytes as they are
/// (a Latin-1 name stays Latin-1), so two different names never give one output name.
pub fn default_output_name(input: &Path, out_rate: u32) -> PathBuf {
    let mut name = input
        .file_stem()
        .map(OsString::from)
        .unwrap_or_else(|| "output".into());
    name.push(format!("-{}.wav", rate_label(out_rate)));
    input.with_file_name(name)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn labels() {
        assert_eq!(rate_label(48_000), "48k");
        assert_eq!(rate_label(44_100), "44.1k");
        assert_eq!(rate_label(22_050), "22.05k");
        assert_eq!(rate_label(11_025), "11.025k");
        assert_eq!(rate_label(500), "0.5k");
    }

    #[test]
    fn never_the_input() {
        for name in ["a.wav", "a-48k.wav", "a-48k", "a", ".wav"] {
            let p = Path::new("/x").join(name);
            assert_ne!(default_output_name(&p, 48_000), p, "{name}");
        }
        assert_eq!(
            default_output_name(Path::new("d/take.WAV"), 16_000),
            Path::new("d/take-16k.wav")
        );
    }
}
