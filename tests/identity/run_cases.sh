#!/usr/bin/env bash
# Run a fixed list of rerate commands (convert in several formats, rates and channel counts,
# design --export, design --json, verify --json) with the binary $1, writing every output
# under $2. Timing fields (which vary run to run) are removed from JSON. Used by check.sh.
set -euo pipefail
bin=$(realpath "$1")
out=$2
here=$(dirname "$(realpath "$0")")
mkdir -p "$out/in" "$out/conv" "$out/design" "$out/verify"
python3 "$here/make_inputs.py" "$out/in"
cd "$out"
# Drop the keys whose values are timings or speeds.
strip() { python3 -c '
import json, sys
def clean(v):
    if isinstance(v, dict):
        return {k: clean(x) for k, x in v.items() if not any(w in k for w in ("second", "speed", "time", "elapsed", "_ms", "realtime", "per_s"))}
    if isinstance(v, list):
        return [clean(x) for x in v]
    return v
for line in sys.stdin:
    line = line.strip()
    if line:
        print(json.dumps(clean(json.loads(line)), sort_keys=True))
'; }
for f in in/*.wav; do
  n=$(basename "$f" .wav)
  for rate in 48k 44.1k 16k; do
    "$bin" convert "$f" --out-rate $rate -o "conv/$n-$rate.wav" --force --jobs 1 --json | strip > "conv/$n-$rate.json"
  done
  "$bin" convert "$f" --out-rate 96k --float -o "conv/$n-96k-float.wav" --force --json | strip > "conv/$n-96k-float.json"
  "$bin" convert "$f" --out-rate 8k --bits 16 --dither none -o "conv/$n-8k-16.wav" --force --json | strip > "conv/$n-8k-16.json"
done
# A batch of a folder (parallel jobs; output bytes do not depend on them).
"$bin" convert in --out-rate 24k -o conv/batch --force --jobs 2 --json | strip | sort > conv/batch.json
for pair in "44.1k 48k" "48k 44.1k" "96k 44.1k" "44.1k 16k" "8k 44.1k"; do
  set -- $pair
  for db in 60 140; do
    "$bin" design --in-rate $1 --out-rate $2 --stopband-db $db --export "design/$1-$2-$db.txt" --force
    "$bin" design --in-rate $1 --out-rate $2 --stopband-db $db --json | strip > "design/$1-$2-$db.json"
  done
done
for pair in "44.1k 48k" "48k 16k"; do
  set -- $pair
  "$bin" verify --in-rate $1 --out-rate $2 --seconds 2 --json | strip > "verify/$1-$2.json" || true
done
