#!/usr/bin/env bash
# How long `rerate verify` takes for the 44.1 kHz -> 48 kHz, 140 dB design with the default
# 10 s sweep (target: under 5 s). Wall-clock time of the whole command, best of three runs.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release -q -p resample-cli
best=""
for _ in 1 2 3; do
    t0=$(date +%s.%N)
    target/release/rerate verify --in-rate 44.1k --out-rate 48k --stopband-db 140 --json > /dev/null
    t1=$(date +%s.%N)
    t=$(echo "$t1 - $t0" | bc -l)
    if [ -z "$best" ] || [ "$(echo "$t < $best" | bc -l)" = 1 ]; then best=$t; fi
done
printf 'rerate verify 44.1k -> 48k, 140 dB, 10 s sweep: best of 3 = %.2f s (target < 5 s)\n' "$best"
