#!/usr/bin/env bash
# Peak memory of `rerate convert` on a long file: generate 1 hour of 96 kHz stereo 24-bit
# (about 2.07 GB), convert it to 44.1 kHz (24-bit, default 160 dB stopband, f64, TPDF
# dither) and report peak RSS with /usr/bin/time -v. Target: under 100 MB, independent of
# the file's length (the conversion streams block by block).
#
# Usage: benches/convert_memory.sh [SECONDS] [WORKDIR]   (defaults: 3600, a temp folder)
# Needs about 3.1 GB of free disk in WORKDIR; the files are removed afterwards.
set -euo pipefail
root="$(cd "$(dirname "$0")/.." && pwd)"
secs="${1:-3600}"
work="${2:-$(mktemp -d)}"
cargo build --release -p resample-cli --manifest-path "$root/Cargo.toml" >&2
python3 "$root/benches/make_long_wav.py" "$work/long-96k.wav" "$secs" 96000
/usr/bin/time -v "$root/target/release/rerate" convert "$work/long-96k.wav" \
  --out-rate 44.1k -o "$work/long-44.1k.wav" --force 2> "$work/time.txt"
grep -E "Maximum resident set size|Elapsed \(wall clock\)" "$work/time.txt"
ls -l "$work/long-96k.wav" "$work/long-44.1k.wav"
rm -f "$work/long-96k.wav" "$work/long-44.1k.wav"
