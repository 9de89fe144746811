#!/usr/bin/env bash
# Whole-file conversion time of the fixed-ratio engine against the any-ratio engine (a clock
# correction) on the same 60 s file: 44.1 kHz stereo 24-bit (demo-style content made by
# benches/make_long_wav.py) to 48 kHz 24-bit, TPDF dither, default stopband (160 dB, f64).
# Wall-clock time of the whole command, best of three runs each, one file: the fixed engine
# as `convert` runs it (pipelined over the free cores) and on one thread (--jobs 1); the
# any-ratio engine converts a file on one thread.
# Usage: bash benches/clock_speed.sh [PPM]   (default 100)
set -euo pipefail
cd "$(dirname "$0")/.."
ppm="${1:-100}"
cargo build --release -q -p resample-cli
dir=$(mktemp -d)
trap 'rm -rf "$dir"' EXIT
python3 benches/make_long_wav.py "$dir/take.wav" 60 44100 > /dev/null
best() {
    local b=""
    for _ in 1 2 3; do
        local t0 t1 t
        t0=$(date +%s.%N)
        target/release/rerate convert "$dir/take.wav" --out-rate 48k -o "$dir/out.wav" --force "$@" > /dev/null
        t1=$(date +%s.%N)
        t=$(echo "$t1 - $t0" | bc -l)
        if [ -z "$b" ] || [ "$(echo "$t < $b" | bc -l)" = 1 ]; then b=$t; fi
    done
    echo "$b"
}
fixed=$(best)
fixed1=$(best --jobs 1)
any=$(best --clock-ppm "$ppm")
printf 'fixed-ratio engine (pipelined):   %.2f s (%.0fx real time)\n' "$fixed" "$(echo "60 / $fixed" | bc -l)"
printf 'fixed-ratio engine, --jobs 1:     %.2f s (%.0fx real time)\n' "$fixed1" "$(echo "60 / $fixed1" | bc -l)"
printf 'any-ratio engine, %s ppm:        %.2f s (%.0fx real time)\n' "$ppm" "$any" "$(echo "60 / $any" | bc -l)"
printf 'any-ratio / fixed time:           %.2f (pipelined), %.2f (--jobs 1)\n' "$(echo "$any / $fixed" | bc -l)" "$(echo "$any / $fixed1" | bc -l)"
