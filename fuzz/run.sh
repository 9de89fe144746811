#!/usr/bin/env bash
# Fuzz rerate. Usage: fuzz/run.sh [TARGET] [SECONDS] (default: wav_read, 600 s).
# Targets: wav_read (the WAV read path, seekable and streamed) and convert_mem (the whole
# conversion on bytes in memory: parse, design, convert, encode).
# Needs cargo-fuzz (`cargo install cargo-fuzz`) and a nightly toolchain (`cargo +nightly`);
# on a stable toolchain only, RUSTC_BOOTSTRAP=1 lets cargo-fuzz use the flags it needs.
set -euo pipefail
cd "$(dirname "$0")"
target="${1:-wav_read}"
secs="${2:-600}"
mkdir -p "corpus/$target" "artifacts/$target"
# Seed the corpus with the bad-input fixtures and the small valid fixtures.
cp -n ../fixtures/bad/*.wav "corpus/$target/" 2>/dev/null || true
cp -n ../fixtures/ok/*.wav "corpus/$target/" 2>/dev/null || true
toolchain=()
if rustup toolchain list 2>/dev/null | grep -q '^nightly'; then
  toolchain=(+nightly)
else
  export RUSTC_BOOTSTRAP=1
fi
cargo "${toolchain[@]}" fuzz run "$target" "corpus/$target" -- \
  -max_total_time="$secs" -max_len=65536 -rss_limit_mb=2048 -timeout=30 -print_final_stats=1
