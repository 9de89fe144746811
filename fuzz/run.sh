#!/usr/bin/env bash
# Fuzz rerate's WAV read path. Usage: fuzz/run.sh [SECONDS] (default 600).
# Needs cargo-fuzz (`cargo install cargo-fuzz`). On a stable toolchain, RUSTC_BOOTSTRAP=1
# lets cargo-fuzz use the sanitizer and coverage flags it needs.
set -euo pipefail
cd "$(dirname "$0")"
secs="${1:-600}"
mkdir -p corpus/wav_read artifacts/wav_read
# Seed the corpus with the bad-input fixtures and the small valid fixtures.
cp -n ../fixtures/bad/*.wav corpus/wav_read/ 2>/dev/null || true
cp -n ../fixtures/ok/*.wav corpus/wav_read/ 2>/dev/null || true
RUSTC_BOOTSTRAP=1 cargo fuzz run wav_read corpus/wav_read -- \
  -max_total_time="$secs" -max_len=65536 -rss_limit_mb=1024 -print_final_stats=1
