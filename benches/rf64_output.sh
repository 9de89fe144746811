#!/usr/bin/env bash
# An output past 4 GiB, with metadata: generate SECONDS (default 3600) of 48 kHz stereo 24-bit
# demo tones (997 Hz left, 3001 Hz right, -12 dBFS; about 1.04 GB for an hour) with a 'bext'
# chunk (time reference 01:00:00) and a 'cue ' point, convert it to 192 kHz 32-bit float
# (about 5.5 GB for an hour: RF64), then check with benches/rf64_check.py: the RF64 header
# (EBU Tech 3306: 'RF64', 'ds64' sizes against the file's length, data size 0xFFFFFFFF), the
# rescaled 'bext' and 'cue ' after promotion, and spot samples past the 4 GiB mark against
# the tones' exact values; scipy.io.wavfile reads the output (memory-mapped). Prints wall
# time and peak memory (/usr/bin/time -v).
#
# Usage: benches/rf64_output.sh [SECONDS] [WORKDIR]   (defaults: 3600, a temp folder)
# Needs about 7 GB of free disk in WORKDIR for an hour; the files are removed afterwards.
set -euo pipefail
root="$(cd "$(dirname "$0")/.." && pwd)"
secs="${1:-3600}"
work="${2:-$(mktemp -d)}"
cargo build --release -p resample-cli --manifest-path "$root/Cargo.toml" >&2
trap 'rm -f "$work/tones-48k.wav" "$work/tones-192k.wav"' EXIT
python3 "$root/benches/rf64_check.py" make "$work/tones-48k.wav" "$secs"
/usr/bin/time -v "$root/target/release/rerate" convert "$work/tones-48k.wav" \
  --out-rate 192k --float -o "$work/tones-192k.wav" --force 2> "$work/time.txt"
grep -E "Maximum resident set size|Elapsed \(wall clock\)" "$work/time.txt"
ls -l "$work/tones-48k.wav" "$work/tones-192k.wav"
python3 "$root/benches/rf64_check.py" check "$work/tones-192k.wav" "$secs"
